#!/usr/bin/python3
"""Reference values for the exact Kruskal-Wallis p-value tests (stats/exact_test.go).

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/exact_kw_scipy.py > testdata/reference/exact_kw_scipy.json

It takes about a minute. What it writes (JSON on stdout):

* "kruskal_exact": exact permutation p-values of the Kruskal-Wallis H, from
  scipy.stats.permutation_test with permutation_type="independent" and
  n_resamples=numpy.inf, which enumerates every one of the N!/prod(n_i!) assignments of
  the pooled observations to groups of the observed sizes (an exact test: no +1
  adjustment) and counts those with H >= the observed H (scipy's relative tolerance
  1e-14, far below the spacing of H on these small designs). The count and the number
  of assignments are written as integers, so the tests can form the exact fraction.
  The statistic handed to permutation_test is H with midranks and the tie correction,
  written here in numpy so that it can be vectorised; on the observed data it is
  checked against scipy.stats.kruskal. permutation_test needs at least two
  observations per group, so designs with a group of one are tested against brute
  force in the Go tests only.
* "critical_values": for groups of equal size 3, 4 and 5 without ties, the smallest
  attainable h with P(H >= h) <= alpha (alpha = 0.10, 0.05, 0.01), with the count of
  assignments at or above it, from the same enumerated null distribution.
* "mann_whitney_exact": scipy.stats.mannwhitneyu(x, y, method="exact",
  alternative="two-sided") p-values on two-sample data without ties.

All data sets are invented for these tests and describe nothing real, except
"tied_toy", the constructed example {1,2,2,3},{2,3,3,4},{3,4,5,5} of the project's
docs/methods.md §1.5 (whose exact p there is 47/1925).
"""

import json
import math
import sys

import numpy as np
import scipy
from scipy import stats

KW_SETS = [
    ("invented_2_2_2", [[1.1, 2.3], [0.4, 3.9], [5.2, 4.4]]),
    ("invented_3_3_3", [[2.8, 3.5, 1.2], [4.1, 6.6, 5.0], [7.3, 9.9, 8.4]]),
    ("invented_3_3_3_mixed", [[2.8, 7.3, 1.2], [4.1, 6.6, 9.9], [3.5, 5.0, 8.4]]),
    ("invented_2_3_4_ties", [[3, 1], [2, 2, 5], [4, 5, 5, 6]]),
    ("tied_toy", [[1, 2, 2, 3], [2, 3, 3, 4], [3, 4, 5, 5]]),
    ("invented_2_2_3_3_ties", [[1, 4], [2, 2], [3, 5, 5], [4, 6, 1]]),
    ("invented_2_2_2_2_4", [[0.3, 1.9], [2.2, 0.8], [3.1, 2.7], [1.4, 3.6]]),
    ("invented_5_4_5", [[2.1, 3.3, 2.4, 4.0, 3.1], [1.2, 4.6, 2.8, 3.7], [5.4, 3.9, 4.8, 2.0, 4.2]]),
    ("invented_5_5_5_ties", [[1, 2, 2, 4, 5], [3, 3, 4, 6, 8], [5, 7, 8, 8, 9]]),
]

# Two-sample sets without ties for the exact Wilcoxon-Mann-Whitney comparison.
MWU_SETS = [
    ("invented_1_5", [3.2], [1.0, 2.0, 4.0, 5.0, 6.0]),
    ("invented_3_4", [1.3, 2.9, 4.4], [3.3, 5.1, 6.2, 7.0]),
    ("invented_4_4_center", [1.0, 4.0, 5.0, 8.0], [2.0, 3.0, 6.0, 7.0]),
    ("invented_5_5", [0.5, 1.7, 2.2, 3.9, 4.1], [2.5, 4.7, 5.3, 6.8, 7.4]),
    ("invented_4_9", [10.5, 11.2, 9.9, 13.0], [1.0, 2.5, 3.1, 4.2, 5.8, 6.6, 7.7, 8.3, 12.4]),
    ("invented_8_8", [3.1, 4.5, 2.2, 6.7, 5.9, 1.4, 7.3, 8.8],
     [9.2, 10.4, 3.3, 11.6, 12.1, 5.0, 13.9, 14.5]),
    ("invented_10_12", [float(x) for x in [3, 8, 12, 15, 17, 20, 22, 5, 9, 1]],
     [float(x) for x in [2, 4, 6, 7, 10, 11, 13, 14, 16, 18, 19, 21]]),
    ("invented_15_15", [float(x) for x in range(1, 60, 4)] ,
     [float(x) + 2.5 for x in range(1, 60, 4)]),
]


def kw_statistic_factory(groups):
    """A vectorised tie-corrected H for permutations of the pooled data of groups."""
    pooled = np.concatenate([np.asarray(g, dtype=float) for g in groups])
    n = pooled.size
    uniq, counts = np.unique(pooled, return_counts=True)
    below = np.concatenate([[0], np.cumsum(counts)[:-1]])
    midrank = below + (counts + 1) / 2.0
    c = 1.0 - float(np.sum(counts ** 3 - counts)) / (n ** 3 - n)

    def statistic(*samples, axis=-1):
        total = 0.0
        for s in samples:
            s = np.moveaxis(np.asarray(s), axis, -1)
            r = midrank[np.searchsorted(uniq, s)].sum(axis=-1)
            total = total + r * r / s.shape[-1]
        return (12.0 / (n * (n + 1)) * total - 3.0 * (n + 1)) / c

    return statistic


def exact_null(groups):
    statistic = kw_statistic_factory(groups)
    data = [np.asarray(g, dtype=float) for g in groups]
    res = stats.permutation_test(data, statistic, permutation_type="independent",
                                 vectorized=True, n_resamples=np.inf,
                                 alternative="greater")
    return res, statistic


def kruskal_exact():
    out = []
    for name, groups in KW_SETS:
        res, statistic = exact_null(groups)
        h_scipy = stats.kruskal(*groups).statistic
        if not math.isclose(res.statistic, h_scipy, rel_tol=1e-12):
            raise SystemExit(f"{name}: vectorised H {res.statistic} != scipy.stats.kruskal {h_scipy}")
        null = res.null_distribution
        total = null.size
        expect = math.factorial(sum(len(g) for g in groups))
        for g in groups:
            expect //= math.factorial(len(g))
        if total != expect:
            raise SystemExit(f"{name}: {total} assignments enumerated, expected {expect}")
        gamma = max(1e-14, abs(1e-14 * res.statistic))  # scipy's tolerance
        count = int(np.count_nonzero(null >= res.statistic - gamma))
        if count / total != res.pvalue:
            raise SystemExit(f"{name}: count {count}/{total} != pvalue {res.pvalue}")
        out.append({
            "name": name,
            "groups": groups,
            "h": float(h_scipy),
            "p": float(res.pvalue),
            "count": count,
            "total": int(total),
        })
    return out


def critical_values():
    out = []
    for m in (3, 4, 5):
        groups = [[float(i * m + j + 1) for j in range(m)] for i in range(3)]
        res, _ = exact_null(groups)
        null = np.round(res.null_distribution, 9)  # distinct values differ by >= 1e-3 here
        total = null.size
        values, counts = np.unique(null, return_counts=True)
        tail = np.cumsum(counts[::-1])[::-1]  # tail[i] = #{H >= values[i]}
        rows = []
        for alpha in (0.10, 0.05, 0.01):
            ok = np.nonzero(tail <= alpha * total)[0]
            i = int(ok[0])
            rows.append({"alpha": alpha, "h": float(values[i]), "count": int(tail[i])})
        out.append({"sizes": [m, m, m], "total": int(total), "levels": rows})
    return out


def mann_whitney_exact():
    out = []
    for name, x, y in MWU_SETS:
        if len(set(x) | set(y)) != len(x) + len(y):
            raise SystemExit(f"{name}: has ties")
        res = stats.mannwhitneyu(x, y, method="exact", alternative="two-sided")
        out.append({"name": name, "x": x, "y": y, "u": float(res.statistic), "p": float(res.pvalue)})
    return out


def main():
    doc = {
        "generator": "testdata/reference/exact_kw_scipy.py",
        "versions": {"python": sys.version.split()[0], "scipy": scipy.__version__, "numpy": np.__version__},
        "kruskal_exact": kruskal_exact(),
        "critical_values": critical_values(),
        "mann_whitney_exact": mann_whitney_exact(),
    }
    json.dump(doc, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
