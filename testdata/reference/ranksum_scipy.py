#!/usr/bin/python3
"""Reference values for stats.RankSumTest.

Run from the repository root:
    /usr/bin/python3 testdata/reference/ranksum_scipy.py > testdata/reference/ranksum_scipy.json

scipy.stats.mannwhitneyu (version recorded), two-sided: method="exact" on data without ties
(scipy's exact method ignores ties, so it is used only where there are none), and
method="asymptotic" with and without continuity correction on data with and without ties.
Data: pairs of the plant weights of Dobson (1983, as in docs/methods.md section 8.2) and invented sets
(invented for these tests).
"""
import json
import sys

import scipy
from scipy import stats

ctrl = [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14]
trt1 = [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69]
trt2 = [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26]
SETS = {
    "dobson1983_plant_weights_ctrl_trt1": (ctrl, trt1),
    "dobson1983_plant_weights_ctrl_trt2": (ctrl, trt2),
    "dobson1983_plant_weights_trt1_trt2": (trt1, trt2),
    "invented_untied_4_5": ([1.1, 2.3, 0.4, 3.9], [4.2, 5.0, 2.8, 6.1, 3.3]),
    "invented_untied_7_3": ([10.5, 12.1, 9.8, 14.2, 11.7, 13.3, 8.9], [15.1, 9.9, 16.4]),
    "invented_ties_6_8": ([1, 2, 2, 3, 3, 5], [2, 3, 4, 4, 5, 5, 6, 6]),
}
out = {}
for name, (x, y) in SETS.items():
    tied = len(set(x + y)) < len(x + y)
    row = {"x": x, "y": y, "ties": tied,
           "u": float(stats.mannwhitneyu(x, y, method="asymptotic").statistic),
           "p_norm_cc": float(stats.mannwhitneyu(x, y, method="asymptotic", use_continuity=True).pvalue),
           "p_norm": float(stats.mannwhitneyu(x, y, method="asymptotic", use_continuity=False).pvalue)}
    if not tied:
        row["p_exact"] = float(stats.mannwhitneyu(x, y, method="exact").pvalue)
    out[name] = row
json.dump({"generator": "testdata/reference/ranksum_scipy.py", "scipy": scipy.__version__, "sets": out}, sys.stdout, indent=1)
sys.stdout.write("\n")
