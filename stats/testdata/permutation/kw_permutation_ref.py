#!/usr/bin/python3
"""Reference values for stats.KruskalWallisPermutation (stats/permutation_test.go).

Run from this folder:  /usr/bin/python3 kw_permutation_ref.py > kw_permutation_ref.json

Three independent parts:

1. "runs": Monte Carlo exceedance counts b recomputed from the documentation of
   KruskalWallisPermutation with the independent Python stream of
   stats/stream/testdata/stream_ref.py (its own SHA-256 keys, ChaCha8Rand, Lemire,
   Fisher-Yates): doubled midranks from their definition (2·#smaller + #equal + 1),
   blocks of 4096 resamples, T·L = sum S_i^2 (L/n_i) compared as Python integers.
2. "exact": exact permutation p-values by brute-force enumeration of every assignment
   of the observations to groups of the observed sizes (Python fractions).
3. "summaries": the estimate (b+1)/(m+1), its standard error and the 99% Clopper-Pearson
   interval [beta.ppf(0.005; b, m-b+1), beta.ppf(0.995; b+1, m-b)] from scipy.stats.beta
   (scipy version recorded below).

Data: the tied toy set of docs/methods.md §1.5 (constructed there), an invented set with
p near 0.3 (invented for these tests), and the plant weights of Dobson (1983, An Introduction to
Statistical Modelling, as listed in docs/methods.md §8.2).
"""

import fractions
import itertools
import json
import math
import os
import sys

import scipy
from scipy import stats

sys.dont_write_bytecode = True  # keep the stream folder free of __pycache__
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "stream", "testdata"))
import stream_ref  # noqa: E402

BLOCK = 4096

DESIGNS = {
    "tied-toy": [[1, 2, 2, 3], [2, 3, 3, 4], [3, 4, 5, 5]],
    "invented-p03": [[3.1, 4.7, 2.2, 5.0], [4.1, 5.9, 6.3, 3.8, 4.4], [2.2, 4.4, 3.3]],
    "dobson1983": [
        [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
        [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
        [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26],
    ],
}


def flatten(groups):
    labels, values = [], []
    for i, g in enumerate(groups):
        for v in g:
            labels.append(i)
            values.append(v)
    return labels, values


def rank2(values):
    return [2 * sum(1 for x in values if x < v) + sum(1 for x in values if x == v) + 1 for v in values]


def stat_tl(labels, d, sizes, L):
    s = [0] * len(sizes)
    for lab, dj in zip(labels, d):
        s[lab] += dj
    return sum(s[i] * s[i] * (L // sizes[i]) for i in range(len(sizes)))


def mc_exceed(groups, seed, analysis_id, m):
    labels, values = flatten(groups)
    d = rank2(values)
    sizes = [len(g) for g in groups]
    L = math.lcm(*sizes)
    obs = stat_tl(labels, d, sizes, L)
    b = 0
    for j in range((m + BLOCK - 1) // BLOCK):
        a = list(labels)
        st = stream_ref.Stream(stream_ref.key("kw-permutation", seed, analysis_id, j))
        for _ in range(j * BLOCK, min((j + 1) * BLOCK, m)):
            st.shuffle(a)
            if stat_tl(a, d, sizes, L) >= obs:
                b += 1
    return b


def exact_p(groups):
    labels, values = flatten(groups)
    d = rank2(values)
    sizes = [len(g) for g in groups]
    L = math.lcm(*sizes)
    obs = stat_tl(labels, d, sizes, L)
    n = len(values)
    hits = total = 0

    def rec(rest, gi, assign):
        nonlocal hits, total
        if gi == len(sizes) - 1:
            for i in rest:
                assign[i] = gi
            total += 1
            if stat_tl(assign, d, sizes, L) >= obs:
                hits += 1
            return
        for c in itertools.combinations(rest, sizes[gi]):
            for i in c:
                assign[i] = gi
            cs = set(c)
            rec([i for i in rest if i not in cs], gi + 1, assign)

    rec(list(range(n)), 0, [0] * n)
    return fractions.Fraction(hits, total), total


def summary(b, m):
    ph = b / m
    lo = 0.0 if b == 0 else float(stats.beta.ppf(0.005, b, m - b + 1))
    hi = 1.0 if b == m else float(stats.beta.ppf(0.995, b + 1, m - b))
    return {"b": str(b), "m": str(m), "p": (b + 1) / (m + 1), "se": math.sqrt(ph * (1 - ph) / m),
            "ci_low": lo, "ci_high": hi}


def main():
    out = {
        "generator": "stats/testdata/permutation/kw_permutation_ref.py",
        "versions": {"python": "%d.%d.%d" % sys.version_info[:3], "scipy": scipy.__version__},
        "runs": [],
        "exact": [],
        "summaries": [],
    }
    runs = [
        ("tied-toy", 12345, "tied-toy", 10000),
        ("tied-toy", 12345, "tied-toy", 1),
        ("invented-p03", 7, "design-b", 9000),
        ("dobson1983", 99, "dobson1983", 5000),
    ]
    for name, seed, aid, m in runs:
        out["runs"].append({"design": name, "groups": DESIGNS[name], "seed": str(seed), "analysis_id": aid,
                            "resamples": str(m), "exceed": str(mc_exceed(DESIGNS[name], seed, aid, m))})
    for name in ("tied-toy", "invented-p03"):
        p, total = exact_p(DESIGNS[name])
        out["exact"].append({"design": name, "groups": DESIGNS[name], "assignments": total,
                             "num": p.numerator, "den": p.denominator})
    pairs = [(17, 999), (236, 9999), (2457, 99999),  # the rows of docs/methods.md §1.6
             (0, 1), (1, 1), (0, 1000), (1000, 1000), (1, 1000), (999, 1000),
             (24416, 1000000), (309199, 1000000), (5, 10**9), (3 * 10**11, 10**12)]
    for b, m in pairs:
        out["summaries"].append(summary(b, m))
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
