#!/usr/bin/python3
"""Accuracy of the asymptotic chi-square p-value of the Kruskal-Wallis test against the
permutation distribution, for the rule of `pvalue.asymptotic_when_large`
(runner.LargeGroupSize; rankplan's docs/methods.md §1.8).

Run from the repository root with the Debian interpreter (about two minutes):

    /usr/bin/python3 testdata/reference/auto_large_scipy.py > testdata/reference/auto_large_scipy.json

For each design (k groups of given sizes, with given pooled values) the permutation
null distribution of H* is sampled: R random relabelings of the pooled midranks
(scipy.stats.rankdata), each H* computed from the rank sums with the tie correction,
the computation checked against scipy.stats.kruskal on the first relabelings. At each
alpha in (0.05, 0.01, 0.001) the script records the share of relabelings whose
chi-square p-value, scipy.stats.chi2.sf(H*, k - 1), is at most alpha: the actual size
of the asymptotic test, which equals alpha when the chi-square p-value is exact, with
its Monte Carlo standard error and the ratio size/alpha.

Designs, for k = 3 to 6 and smallest group size n in (5, 10, 15, 20, 25, 30, 40):
  equal     k groups of n distinct values (no ties);
  unequal   k - 1 groups of n and one of 3n, distinct values;
  tied      k groups of n on a five-point scale: the values 1..5 repeated in turn,
            so that about a fifth of the observations share each value.
The random numbers come from numpy's PCG64 with a fixed seed per design, so the
output is reproducible with the same numpy. The values are a grid, not data.

What the rule asks of a group size n0 (runner's TestLargeGroupSizeStudy applies it to
this file): in every design whose smallest group holds at least n0, the chi-square test
is never liberal beyond the study's noise (size <= alpha + 3 se at each alpha) and is
close at the usual levels (size >= 0.9 alpha at 0.05 and >= 0.8 alpha at 0.01); n0 is
the smallest n of the grid from which this holds. The output (R = 200000) gives
n0 = 25; there the chi-square test is conservative at 0.001 by up to 40%
(size >= 0.6 alpha), which the documentation states.
"""
import json
import sys

import numpy
import scipy
from scipy import stats

R = 200_000
CHUNK = 20_000
ALPHAS = (0.05, 0.01, 0.001)


def design(kind, k, n):
    sizes = [n] * k
    if kind == "unequal":
        sizes[-1] = 3 * n
    total = sum(sizes)
    if kind == "tied":
        values = numpy.array([1 + i % 5 for i in range(total)], dtype=float)
    else:
        values = numpy.arange(total, dtype=float)
    return sizes, values


def sizes_at(kind, k, n, seed):
    sizes, values = design(kind, k, n)
    ranks = stats.rankdata(values)
    big_n = len(ranks)
    _, counts = numpy.unique(values, return_counts=True)
    c = 1 - float(numpy.sum(counts.astype(float) ** 3 - counts)) / (big_n ** 3 - big_n)
    crit = [stats.chi2.isf(a, k - 1) for a in ALPHAS]
    starts = numpy.cumsum([0] + sizes[:-1])
    size_arr = numpy.array(sizes, dtype=float)
    rng = numpy.random.default_rng(seed)
    hits = [0] * len(ALPHAS)
    checked = False
    for _ in range(R // CHUNK):
        perm = rng.permuted(numpy.tile(ranks, (CHUNK, 1)), axis=1)
        sums = numpy.add.reduceat(perm, starts, axis=1)
        h = (12.0 / (big_n * (big_n + 1)) * numpy.sum(sums ** 2 / size_arr, axis=1) - 3.0 * (big_n + 1)) / c
        if not checked:
            for row in range(5):
                groups = numpy.split(perm[row], starts[1:])
                ref = stats.kruskal(*groups).statistic
                assert abs(ref - h[row]) <= 1e-9 * max(1.0, ref), (ref, h[row])
            checked = True
        for i, x in enumerate(crit):
            hits[i] += int(numpy.count_nonzero(h >= x))
    out = []
    for a, b in zip(ALPHAS, hits):
        s = b / R
        out.append({"alpha": a, "size": s, "se": (s * (1 - s) / R) ** 0.5, "ratio": s / a})
    return sizes, out


def main():
    rows = []
    seed = 20261204
    for kind in ("equal", "unequal", "tied"):
        for k in (3, 4, 5, 6):
            for n in (5, 10, 15, 20, 25, 30, 40):
                seed += 1
                sizes, res = sizes_at(kind, k, n, seed)
                rows.append({"design": kind, "k": k, "n": n, "sizes": sizes, "seed": seed, "levels": res})
    json.dump({"versions": {"python": sys.version.split()[0], "scipy": scipy.__version__,
                            "numpy": numpy.__version__},
               "resamples": R, "designs": rows}, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
