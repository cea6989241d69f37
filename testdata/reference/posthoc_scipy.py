#!/usr/bin/python3
"""Reference values for stats.DunnTest and stats.ConoverImanTest.

Run from the repository root:
    /usr/bin/python3 testdata/reference/posthoc_scipy.py > testdata/reference/posthoc_scipy.json

An independent computation from the published formulas with scipy (version recorded):
midranks from scipy.stats.rankdata, the tie-corrected rank variance as the sample variance
of all midranks (numpy.var with ddof=1), H* from scipy.stats.kruskal, normal tails from
scipy.stats.norm.sf and t tails from scipy.stats.t.sf.
Dunn (1964): z = (Rbar_i - Rbar_j) / sqrt(S2 (1/n_i + 1/n_j)), p = 2 sf(|z|).
Conover & Iman (1979): MSE = S2 (N - 1 - H*) / (N - k), t = (Rbar_i - Rbar_j) / sqrt(MSE (1/n_i + 1/n_j)),
p = 2 t.sf(|t|, N - k).
Data: the plant weights of Dobson (1983, as in docs/methods.md section 8.2) and two invented sets (invented
for these tests: ties and unequal sizes).
"""
import json
import sys

import numpy
import scipy
from scipy import stats

SETS = {
    "dobson1983_plant_weights": [
        [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
        [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
        [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26]],
    "invented_ties_unequal": [
        [3, 5, 5, 6, 7, 7, 7, 8, 2, 5, 6, 4],
        [6, 8, 8, 9, 10, 7, 8, 9, 6, 7],
        [2, 3, 3, 4, 5, 1, 0],
        [5, 5, 6, 7, 4, 6]],
    "invented_two_groups": [[0.83, 1.21, 0.57, 1.64, 0.92], [1.47, 1.92, 1.21, 2.08, 1.75, 1.33, 2.41]],
}


def run(groups):
    allv = numpy.concatenate([numpy.asarray(g, float) for g in groups])
    ranks = stats.rankdata(allv)
    n = [len(g) for g in groups]
    N, k = len(allv), len(groups)
    cut = numpy.cumsum([0] + n)
    rbar = [ranks[cut[i]:cut[i + 1]].mean() for i in range(k)]
    s2 = numpy.var(ranks, ddof=1)
    h = stats.kruskal(*groups).statistic
    mse = s2 * (N - 1 - h) / (N - k)
    pairs = []
    for i in range(k):
        for j in range(i + 1, k):
            d = rbar[i] - rbar[j]
            z = d / numpy.sqrt(s2 * (1 / n[i] + 1 / n[j]))
            t = d / numpy.sqrt(mse * (1 / n[i] + 1 / n[j]))
            pairs.append({"i": i, "j": j, "mean_diff": float(d), "z": float(z), "p_dunn": float(2 * stats.norm.sf(abs(z))),
                          "t": float(t), "p_conover": float(2 * stats.t.sf(abs(t), N - k))})
    return {"groups": groups, "rank_variance": float(s2), "h": float(h), "pairs": pairs}


json.dump({"generator": "testdata/reference/posthoc_scipy.py", "scipy": scipy.__version__, "numpy": numpy.__version__,
           "sets": {name: run(g) for name, g in SETS.items()}}, sys.stdout, indent=1)
sys.stdout.write("\n")
