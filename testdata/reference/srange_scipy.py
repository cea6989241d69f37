#!/usr/bin/python3
"""Reference values of the studentized range distribution for stats.StudentizedRange*.

Run from the repository root:
    /usr/bin/python3 testdata/reference/srange_scipy.py > testdata/reference/srange_scipy.json

Values from scipy.stats.studentized_range (Debian python3-scipy; version recorded in the
output): cdf and sf on a grid of q for k = 2..20 and df = 2, 5, 10, 20, 60, 120, inf
(df = inf is written as the string "inf"), and ppf at p = 0.05, 0.5, 0.95, 0.99.
Values below 1e-10 are left out (cdf and sf separately): scipy's own integration does not
keep their relative accuracy (it returns 0.0 for sf(30, 3, 120)); the far tail is checked
against mpmath instead (srange_mpmath.py).
"""
import json
import math
import sys

import numpy
import scipy
from scipy.stats import studentized_range as sr

DFS = [2, 5, 10, 20, 60, 120, math.inf]
QS = [0.1, 0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 15.0, 25.0]
PS = [0.05, 0.5, 0.95, 0.99]


def dfout(df):
    return "inf" if math.isinf(df) else df


dist = []
quant = []
for k in range(2, 21):
    for df in DFS:
        for q in QS:
            c = float(sr.cdf(q, k, df))
            s = float(sr.sf(q, k, df))
            row = {"q": q, "k": k, "df": dfout(df)}
            if c >= 1e-10:
                row["cdf"] = c
            if s >= 1e-10:
                row["sf"] = s
            dist.append(row)
        for p in PS:
            quant.append({"p": p, "k": k, "df": dfout(df), "q": float(sr.ppf(p, k, df))})
json.dump({"generator": "testdata/reference/srange_scipy.py",
           "versions": {"scipy": scipy.__version__, "numpy": numpy.__version__},
           "dist": dist, "quantile": quant}, sys.stdout, indent=1)
sys.stdout.write("\n")
