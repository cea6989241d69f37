#!/usr/bin/python3
"""The exact conditional Kruskal-Wallis p-value of the Dobson (1983) plant weights, counted in exact integers.

Run from the repository root:
    /usr/bin/python3 testdata/reference/exact_dobson1983.py > testdata/reference/exact_dobson1983.json

It takes a few seconds and about half a gigabyte of memory.

Data: the plant weights of Dobson (1983, An Introduction to Statistical Modelling), three groups of
10 dried plant weights, read from the dobson1983_plant_weights entry of kruskal_scipy.json beside this
script (the values used by every other reference on these data), with one tie (4.17 in ctrl
and in trt1).

What is computed (the definition of stats.KruskalWallisExact, checked independently):
every one of the N!/(n1! n2! n3!) assignments of the pooled observations to groups of the
observed sizes is equally likely; with ties each observation keeps its midrank, written
doubled as an integer (2b + t + 1 for a tie block of t values after b smaller ones). With
S_i the sum of group i's doubled midranks, T = sum_i S_i^2 / n_i, and an assignment counts
when T >= T_observed, compared exactly as the integers T*L, L = lcm(n_i). Then

    p = #{assignments with T* >= T_observed} / #{assignments}

as an exact fraction; "p" is the double nearest to it (Python's int / int true division
rounds correctly). H* is an increasing function of T with the same constants for every
assignment (Kruskal & Wallis 1952, JASA 47:583-621), so this is P(H* >= H*_observed).

How: a dynamic programme over the pooled observations in ascending order. The state after
some observations is (c1, c2, S1, S2), the counts and doubled rank sums of the first two
groups so far (the third group's follow from the totals), and its value the number of ways
(an integer; after i observations they sum to at most 3^i <= 3^30 < 2^63, so numpy int64
holds them exactly; the script checks that the finished ones sum to N!/(n1! n2! n3!)). Each observation joins group 1, group 2
or group 3; states of the third group beyond its size cannot reach the end and are counted
nowhere. The same programme is first checked against a brute-force enumeration of every
assignment on the tied toy data {1,2,2,3},{2,3,3,4},{3,4,5,5} (docs/methods.md section 1.5:
p = 47/1925) and against the count and total that scipy's permutation_test gives for it in
exact_kw_scipy.json.
"""
import itertools
import json
import math
import os
import sys
from fractions import Fraction

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))


def doubled_midranks(groups):
    """Doubled midranks of the pooled values, as (value, group) pairs in ascending order."""
    pooled = sorted((x, g) for g, xs in enumerate(groups) for x in xs)
    out, b = [], 0
    while b < len(pooled):
        t = 1
        while b + t < len(pooled) and pooled[b + t][0] == pooled[b][0]:
            t += 1
        for x, g in pooled[b:b + t]:
            out.append((2 * b + t + 1, g))
        b += t
    return out


def t_times_l(sums, sizes):
    L = math.lcm(*sizes)
    return sum(s * s * (L // n) for s, n in zip(sums, sizes))


def observed(groups):
    sizes = [len(g) for g in groups]
    sums = [0] * len(groups)
    for r, g in doubled_midranks(groups):
        sums[g] += r
    return sizes, sums, t_times_l(sums, sizes)


def exact_count(groups):
    """(count of assignments with T >= observed, number of assignments) for three groups."""
    assert len(groups) == 3
    sizes, sums, t_obs = observed(groups)
    n1, n2, _ = sizes
    ranks = [r for r, _ in doubled_midranks(groups)]
    smax = sum(sorted(ranks)[-max(n1, n2):])
    ways = np.zeros((n1 + 1, n2 + 1, smax + 1, smax + 1), dtype=np.int64)
    ways[0, 0, 0, 0] = 1
    for r in ranks:
        new = ways.copy()  # the observation joins group 3
        new[1:, :, r:, :] += ways[:-1, :, :smax + 1 - r, :]  # group 1
        new[:, 1:, :, r:] += ways[:, :-1, :, :smax + 1 - r]  # group 2
        ways = new
    total_sum = sum(ranks)
    final = ways[n1, n2]
    count = total = 0
    for s1, s2 in zip(*np.nonzero(final)):
        k = int(final[s1, s2])
        s3 = total_sum - int(s1) - int(s2)
        total += k
        if t_times_l([int(s1), int(s2), s3], sizes) >= t_obs:
            count += k
    expect = math.factorial(sum(sizes))
    for n in sizes:
        expect //= math.factorial(n)
    assert total == expect, (total, expect)
    return count, total


def brute_count(groups):
    """The same count by listing every assignment of the pooled observations."""
    sizes, _, t_obs = observed(groups)
    ranks = [r for r, _ in doubled_midranks(groups)]
    count = total = 0
    idx = range(len(ranks))
    for first in itertools.combinations(idx, sizes[0]):
        rest = [i for i in idx if i not in first]
        for second in itertools.combinations(rest, sizes[1]):
            third = [i for i in rest if i not in second]
            sums = [sum(ranks[i] for i in part) for part in (first, second, third)]
            total += 1
            if t_times_l(sums, sizes) >= t_obs:
                count += 1
    return count, total


def main():
    with open(os.path.join(HERE, "kruskal_scipy.json")) as f:
        ref = json.load(f)
    plant = next(c for c in ref["kruskal"] if c["name"] == "dobson1983_plant_weights")
    groups = plant["groups"]

    # The programme against brute force and scipy on the tied toy data.
    with open(os.path.join(HERE, "exact_kw_scipy.json")) as f:
        toy = next(c for c in json.load(f)["kruskal_exact"] if c["name"] == "tied_toy")
    dp, brute = exact_count(toy["groups"]), brute_count(toy["groups"])
    assert dp == brute == (toy["count"], toy["total"]), (dp, brute, toy["count"], toy["total"])
    assert Fraction(*dp) == Fraction(47, 1925), dp

    sizes, sums, t_obs = observed(groups)
    count, total = exact_count(groups)
    p = Fraction(count, total)
    json.dump({
        "generator": "testdata/reference/exact_dobson1983.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__},
        "dobson1983_plant_weights": {
            "source": plant["source"],
            "groups": groups,
            "sizes": sizes,
            "doubled_rank_sums": sums,
            "t_times_lcm": t_obs,
            "count": count,
            "total": total,
            "p_fraction": "%d/%d" % (p.numerator, p.denominator),
            "p": count / total,
        },
        "checked_on_tied_toy": {"count": dp[0], "total": dp[1], "brute_force": list(brute)},
    }, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
