#!/usr/bin/python3
"""Gauss-Legendre nodes and weights on [-1, 1] for stats/srange.go.

Run from the repository root:
    /usr/bin/python3 testdata/reference/srange_gauss_legendre.py

It prints Go array literals (40 significant digits; the Go compiler rounds each decimal
constant to the nearest float64 exactly, the same on every architecture). The nodes come
from mpmath 1.2.1 (Debian python3-mpmath) at 50 digits: Newton's method on the Legendre
polynomial P_n, weights 2 / ((1 - x^2) P_n'(x)^2) (common practice; Abramowitz & Stegun
25.4.29). The printed arrays are pasted into stats/srange.go; TestGaussLegendreNodes
checks them against the values in srange_gauss_legendre.json, also written here.
"""
import json
import sys

import mpmath
from mpmath import mp

mp.dps = 50


def rule(n):
    xs, ws = [], []
    for i in range(1, n // 2 + 1):
        x = mp.cos(mp.pi * (i - mp.mpf(1) / 4) / (n + mp.mpf(1) / 2))
        for _ in range(100):
            p0, p1 = mp.mpf(1), x
            for j in range(2, n + 1):
                p0, p1 = p1, ((2 * j - 1) * x * p1 - (j - 1) * p0) / j
            dp = n * (x * p1 - p0) / (x * x - 1)
            dx = p1 / dp
            x -= dx
            if abs(dx) < mp.mpf(10) ** -45:
                break
        p0, p1 = mp.mpf(1), x
        for j in range(2, n + 1):
            p0, p1 = p1, ((2 * j - 1) * x * p1 - (j - 1) * p0) / j
        dp = n * (x * p1 - p0) / (x * x - 1)
        xs.append(x)
        ws.append(2 / ((1 - x * x) * dp * dp))
    return xs, ws  # positive nodes, descending; the rule is symmetric


out = {"generator": "testdata/reference/srange_gauss_legendre.py",
       "versions": {"mpmath": mpmath.__version__}, "rules": {}}
for n in (8,):
    xs, ws = rule(n)
    out["rules"][str(n)] = {"x": [mp.nstr(x, 40) for x in xs], "w": [mp.nstr(w, 40) for w in ws]}
    print("// n = %d, positive half (the rule is symmetric)" % n, file=sys.stderr)
    print("var gl%dX = [%d]float64{%s}" % (n, n // 2, ", ".join(mp.nstr(x, 40) for x in xs)), file=sys.stderr)
    print("var gl%dW = [%d]float64{%s}" % (n, n // 2, ", ".join(mp.nstr(w, 40) for w in ws)), file=sys.stderr)
json.dump(out, sys.stdout, indent=1)
sys.stdout.write("\n")
