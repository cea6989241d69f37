#!/usr/bin/python3
"""Reference values for the index and coverage of the Moses interval (stats.HodgesLehmannShift).

Run from the repository root:
    /usr/bin/python3 testdata/reference/moses_exact.py > testdata/reference/moses_exact.json

For sizes m, n on a grid up to 300 and several levels: the exact untied null counts of the
Mann-Whitney U in Python's unbounded integers, then

    c = max{u : 2 #{U <= u} <= (1 - level) C(m+n, m)}   (level as the exact decimal it prints as)
    coverage = 1 - 2 #{U <= c} / C(m+n, m)              (float of the exact fraction, correctly rounded)

and "attainable": false with c = 0 when no u qualifies. The counts #{U <= c} and
#{U <= c+1} are written as decimal strings, so the test compares the counts themselves.

How the counts are found (both methods are exact integer arithmetic):
  * both sizes <= 150: the recurrence of the null counts (Mann & Whitney 1947, eq. 1; the
    q-Pascal rule for partitions in a box), f(i, j; u) = f(i-1, j; u-j) + f(i, j-1; u):
    the largest of the pooled values is an x (ahead of all j y's) or a y. One table over
    i, j <= 150, row by row, keeps the lower half of each palindromic count vector.
  * a size above 150: the generating function prod_{k=1..s} (1 - q^(b+k)) / (1 - q^k),
    s = min(m, n), b = max(m, n), untruncated; the script first checks that it agrees with
    the recurrence on every pair of the grid up to 150, and on every pair checks that the
    counts sum to C(m+n, m) and are palindromic.
Python's int / int true division rounds correctly, so float(Fraction) is the double nearest
the exact coverage.
"""
import itertools
import json
import math
import sys
from fractions import Fraction

GRID = [1, 2, 3, 5, 8, 13, 20, 30, 50, 80, 120, 150, 200, 250, 300]
SMALL = 150
LEVELS = [0.5, 0.8, 0.9, 0.95, 0.99, 0.999]


def recurrence_table(limit, wanted):
    """Half count vectors f(i, j; u), u <= i*j//2, for the wanted (i, j), i <= j <= limit."""
    out = {}

    def full(half, deg):  # the palindrome f(u) = f(deg - u) completes the lower half
        return half + half[:deg + 1 - len(half)][::-1]

    prev = [[1] for _ in range(limit + 1)]  # f(0, j) = 1
    for i in range(1, limit + 1):
        row = [[1]]  # f(i, 0) = 1
        for j in range(1, limit + 1):
            half_len = i * j // 2 + 1
            up = full(prev[j], (i - 1) * j)      # f(i-1, j; u - j), degree (i-1) j
            left = full(row[j - 1], i * (j - 1))  # f(i, j-1; u), degree i (j-1)
            shifted = [0] * j + up[:max(half_len - j, 0)]
            shifted += [0] * (half_len - len(shifted))
            left = left[:half_len] + [0] * (half_len - len(left))
            half = [x + y for x, y in zip(shifted, left)]
            row.append(half)
            if (i, j) in wanted:
                out[(i, j)] = half
        prev = row
    return out


def product_counts(m, n):
    """Full count vector of U from the generating function, in exact integers."""
    s, b = min(m, n), max(m, n)
    a = [1]
    for k in range(1, s + 1):
        # multiply by (1 - q^(b+k)): new[u] = old[u] - old[u - b - k]
        old = a + [0] * (b + k)
        a = old[:b + k] + [x - y for x, y in zip(old[b + k:], old)]
        # divide by (1 - q^k): running sums along each residue class mod k; the quotient
        # is exact and has degree k*b
        for r in range(k):
            a[r::k] = list(itertools.accumulate(a[r::k]))
        assert all(v == 0 for v in a[k * b + 1:]), (m, n, k)
        a = a[:k * b + 1]
    return a


def index(counts_half, m, n, level):
    total = math.comb(m + n, m)
    lv = Fraction(repr(level))
    bound = (1 - lv) * total  # u qualifies when 2 #{U <= u} <= bound
    cum, c, cums = 0, -1, []
    for u, k in enumerate(counts_half):
        cum += k
        cums.append(cum)
        if 2 * cum <= bound:
            c = u
        else:
            break
    assert c + 1 < len(cums), (m, n, level)
    if c < 0:
        return {"c": 0, "attainable": False, "coverage": float(Fraction(total - 2, total)),
                "count_c": "1", "count_c1": str(cums[0] + counts_half[1]) if len(counts_half) > 1 else str(total)}
    return {"c": c, "attainable": True, "coverage": float(Fraction(total - 2 * cums[c], total)),
            "count_c": str(cums[c]), "count_c1": str(cums[c + 1])}


def main():
    pairs = [(m, n) for m in GRID for n in GRID]
    wanted = {(min(m, n), max(m, n)) for m, n in pairs if max(m, n) <= SMALL}
    table = recurrence_table(SMALL, wanted)
    halves = {}
    for (s, b), half in table.items():
        full = product_counts(s, b)
        assert full[:len(half)] == half, (s, b)
        halves[(s, b)] = half
    for m, n in pairs:
        s, b = min(m, n), max(m, n)
        if (s, b) in halves:
            continue
        full = product_counts(s, b)
        assert full == full[::-1], (s, b)
        halves[(s, b)] = full[:s * b // 2 + 1]
    rows = []
    for m, n in pairs:
        s, b = min(m, n), max(m, n)
        half = halves[(s, b)]
        deg = s * b
        total = math.comb(m + n, m)
        assert 2 * sum(half) - (half[-1] if deg % 2 == 0 else 0) == total, (m, n)
        # The vector must reach c + 1; append the mirrored entry when the half ends at c.
        ext = half + [half[deg - len(half)]] if len(half) <= deg else half
        for level in LEVELS:
            row = {"m": m, "n": n, "level": level}
            row.update(index(ext, m, n, level))
            rows.append(row)
    json.dump({"generator": "testdata/reference/moses_exact.py",
               "python": "%d.%d" % sys.version_info[:2],
               "cases": rows}, sys.stdout, indent=0)
    sys.stdout.write("\n")


main()
