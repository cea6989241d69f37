#!/usr/bin/python3
"""Reference values for stats.DSCFTest and stats.NemenyiTest, computed independently.

Run from the repository root:
    /usr/bin/python3 testdata/reference/dscf_scipy.py > testdata/reference/dscf_scipy.json

For each data set and each pair (i, j), i < j, of its groups:

DSCF: the two groups' observations are re-ranked by scipy.stats.rankdata (midranks),
    W = rank sum of group j, E = n_j (n + 1)/2, n = n_i + n_j,
    V = (n_i n_j / 24) [n + 1 - sum (t - 1) t (t + 1) / (n (n - 1))], ties within the pair,
    W* = (W - E)/sqrt(V), p = studentized_range.sf(|W*|, k, inf) with k the number of groups.
    The file records stat = -W* (positive when group i tends to be larger, the sign
    convention of rankplan's Comparison).
Nemenyi: joint midranks of all groups by rankdata, sigma2 = the sample variance of all N
    midranks (ddof = 1), q = (Rbar_i - Rbar_j)/sqrt(sigma2 (1/n_i + 1/n_j)/2),
    p = studentized_range.sf(|q|, k, inf).

Data: the plant weights of Dobson (1983, as in docs/methods.md section 8.2) and three data sets invented
for this test (with ties and unequal group sizes); they describe nothing real.
"""
import json
import math
import sys

import numpy
import scipy
from scipy.stats import rankdata, studentized_range

DATA = [
    {"name": "plant weights (Dobson 1983)",
     "groups": [[4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
                [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
                [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26]]},
    {"name": "invented: ties, unequal sizes, 3 groups",
     "groups": [[1, 2, 2, 3, 5], [2, 3, 3, 4, 4, 4, 6], [3, 5, 5, 6, 7, 7, 8, 9]]},
    {"name": "invented: heavy ties, 4 groups",
     "groups": [[0, 0, 1, 1, 1, 2], [1, 1, 2, 2, 2, 3, 3, 3, 3], [2, 3, 3, 4], [0, 1, 4, 4, 4, 5, 5, 6, 6, 6, 7]]},
    {"name": "invented: 5 groups, decimals with repeats",
     "groups": [[10.5, 11.25, 9.75, 10.5, 12.0], [13.5, 12.0, 14.25, 13.5, 15.0, 12.75],
                [9.0, 9.75, 10.5, 8.25], [11.25, 11.25, 12.0, 13.5, 10.5, 14.25, 11.25],
                [15.0, 16.5, 14.25, 15.75, 17.0, 15.0, 16.5, 18.25, 14.25]]},
]


def dscf(groups):
    k = len(groups)
    out = []
    for i in range(k):
        for j in range(i + 1, k):
            x, y = groups[i], groups[j]
            r = rankdata(x + y)
            ni, nj = len(x), len(y)
            n = ni + nj
            w = float(numpy.sum(r[ni:]))
            e = nj * (n + 1) / 2
            _, counts = numpy.unique(numpy.array(x + y), return_counts=True)
            tie = float(sum((t - 1) * t * (t + 1) for t in counts))
            v = ni * nj / 24 * (n + 1 - tie / (n * (n - 1)))
            ws = (w - e) / math.sqrt(v)
            p = float(studentized_range.sf(abs(ws), k, numpy.inf))
            out.append({"i": i, "j": j, "stat": -ws, "p": p})
    return out


def nemenyi(groups):
    k = len(groups)
    allv = [v for g in groups for v in g]
    r = rankdata(allv)
    s2 = float(numpy.var(r, ddof=1))
    means, at = [], 0
    for g in groups:
        means.append(float(numpy.mean(r[at:at + len(g)])))
        at += len(g)
    out = []
    for i in range(k):
        for j in range(i + 1, k):
            ni, nj = len(groups[i]), len(groups[j])
            q = (means[i] - means[j]) / math.sqrt(s2 * (1 / ni + 1 / nj) / 2)
            p = float(studentized_range.sf(abs(q), k, numpy.inf))
            out.append({"i": i, "j": j, "stat": q, "p": p})
    return out


sets = [{"name": d["name"], "groups": d["groups"], "dscf": dscf(d["groups"]), "nemenyi": nemenyi(d["groups"])}
        for d in DATA]
json.dump({"generator": "testdata/reference/dscf_scipy.py",
           "versions": {"scipy": scipy.__version__, "numpy": numpy.__version__},
           "sets": sets}, sys.stdout, indent=1)
sys.stdout.write("\n")
