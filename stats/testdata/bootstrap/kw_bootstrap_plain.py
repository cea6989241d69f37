#!/usr/bin/python3
"""Reference spread of a plain percentile bootstrap of H, for the counts scheme of
stats.KruskalWallisBootstrap (stats/bootcounts_test.go, TestBootstrapCountsReference).

Run from this folder:  /usr/bin/python3 kw_bootstrap_plain.py > kw_bootstrap_plain.json

Plain bootstrap, independent of rankplan's stream and scheme: numpy's PCG64 generator
(default_rng) draws n_i indices with replacement within each group; H* of the resample
comes from scipy.stats.kruskal (all values tied: H* = 0); the interval ends are
numpy.percentile (method "linear", Hyndman & Fan type 7) of the resamples' H* at
(1 - level)/2 and (1 + level)/2. Each design is bootstrapped REPS times with RESAMPLES
resamples from independent seeds; the file keeps the mean and the standard deviation of
each end over the repetitions, so that a bootstrap of the same size from any other
stream can be compared with them.

Data: the plant weights of Dobson (1983, An Introduction to Statistical Modelling, as
listed in docs/methods.md §8.2), and two designs invented here from fixed seeds (grades
on a five-point scale, and log-normal values rounded to one decimal).
"""

import json
import sys
import warnings

import numpy
import scipy
from scipy import stats

REPS = 10
RESAMPLES = 2000
LEVEL = 0.95


def invented():
    rng = numpy.random.default_rng(20261204)
    grades = [
        [int(x) for x in rng.choice(5, size=n, p=p) + 1]
        for n, p in [(120, [0.1, 0.2, 0.4, 0.2, 0.1]), (150, [0.05, 0.15, 0.35, 0.3, 0.15]), (90, [0.2, 0.3, 0.3, 0.15, 0.05])]
    ]
    skewed = [[float(x) for x in numpy.round(numpy.exp(rng.normal(0.1 * i, 0.8, size=300)), 1)] for i in range(4)]
    return grades, skewed


def h_star(groups):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            return float(stats.kruskal(*groups).statistic)
        except ValueError:  # "All numbers are identical in kruskal"
            return 0.0


def interval(groups, seed):
    rng = numpy.random.default_rng(seed)
    arrays = [numpy.asarray(g, dtype=float) for g in groups]
    hs = []
    for _ in range(RESAMPLES):
        hs.append(h_star([a[rng.integers(0, len(a), size=len(a))] for a in arrays]))
    return (float(numpy.percentile(hs, 100 * (1 - LEVEL) / 2)), float(numpy.percentile(hs, 100 * (1 + LEVEL) / 2)))


def design(name, groups, seed):
    ends = numpy.array([interval(groups, seed + r) for r in range(REPS)])
    mean, sd = ends.mean(axis=0), ends.std(axis=0, ddof=1)
    return {"name": name, "groups": groups, "h_star": h_star(groups),
            "h_low_mean": float(mean[0]), "h_low_sd": float(sd[0]),
            "h_high_mean": float(mean[1]), "h_high_sd": float(sd[1])}


def main():
    grades, skewed = invented()
    dobson = [
        [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
        [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
        [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26]]
    out = {"generator": "stats/testdata/bootstrap/kw_bootstrap_plain.py",
           "versions": {"python": sys.version.split()[0], "numpy": numpy.__version__, "scipy": scipy.__version__},
           "reps": REPS, "resamples": RESAMPLES, "level": LEVEL,
           "designs": [design("dobson1983_plant_weights", dobson, 100),
                       design("invented_grades", grades, 200),
                       design("invented_skewed_ties", skewed, 300)]}
    json.dump(out, sys.stdout, indent=1, allow_nan=False)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
