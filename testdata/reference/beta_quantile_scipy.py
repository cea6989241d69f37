#!/usr/bin/python3
"""Reference quantiles of the Beta distribution for stats.BetaQuantile.

Run from the repository root:
    /usr/bin/python3 testdata/reference/beta_quantile_scipy.py > testdata/reference/beta_quantile_scipy.json

The grid is what Clopper-Pearson intervals of Monte Carlo p-values need:
Beta(b, m - b + 1) at 0.005 and Beta(b + 1, m - b) at 0.995 for exceedance counts b of
m resamples, plus a few general shapes. Values from scipy.stats.beta.ppf (Debian
python3-scipy; version recorded in the output).
"""
import json
import sys

import scipy
from scipy.stats import beta

cases = []
for m in [1, 2, 10, 999, 9999, 100000, 1000000, 10000000, 1000000000]:
    for b in sorted({0, 1, 2, 5, m // 1000, m // 100, m // 20, m // 2, m - 1, m}):
        if not 0 <= b <= m:
            continue
        if b > 0:
            cases.append({"q": 0.005, "a": b, "b": m - b + 1})
        if b < m:
            cases.append({"q": 0.995, "a": b + 1, "b": m - b})
for q, a, b in [(0.3, 2.5, 0.7), (0.005, 0.5, 0.5), (0.5, 1, 1), (0.9, 30, 4), (1e-10, 3, 7), (0.999999, 12, 12)]:
    cases.append({"q": q, "a": a, "b": b})
for c in cases:
    c["x"] = float(beta.ppf(c["q"], c["a"], c["b"]))
json.dump({"generator": "testdata/reference/beta_quantile_scipy.py", "scipy": scipy.__version__, "cases": cases},
          sys.stdout, indent=1)
sys.stdout.write("\n")
