#!/usr/bin/python3
"""Reference Clopper-Pearson intervals for stats.ClopperPearson (rankplan stats tests).

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/clopper_pearson_scipy.py > testdata/reference/clopper_pearson_scipy.json

For a binomial count b of m trials and a confidence level L, the exact (Clopper-Pearson)
interval is

    low  = beta.ppf((1 - L)/2, b, m - b + 1)    (0 when b = 0)
    high = beta.ppf((1 + L)/2, b + 1, m - b)    (1 when b = m)

Each case records these ends from scipy.stats.beta.ppf ("low", "high") and, as a second,
independent route, scipy.stats.binomtest(b, m).proportion_ci(confidence_level=L,
method="exact") ("binomtest_low", "binomtest_high"), which finds the ends as roots of the
binomial tails. Both come from Debian bookworm's python3-scipy (version recorded below).
The tail probability is formed as (1 - L)/2 in float64, as the Go code forms it.

Where an end is a root of a short binomial sum (at most 6 terms: b <= 5 or m - b <= 5),
it is also solved in mpmath at 40 digits ("mpmath_low", "mpmath_high"; null elsewhere):

    P(Bin(m, low) >= b) = (1 - L)/2,    P(Bin(m, high) <= b) = (1 - L)/2

by bisection on [0, 1]. scipy's beta.ppf is off from these by up to about 1.4e-10
relative at m = 10^7 and level 0.5.

The levels are 0.95 (the default of a plan's pvalue.interval_level), 0.99, 0.9 and 0.5;
the counts are the Monte Carlo cases of interest (b = 0, 1, small, half, m - 1, m) for
m from 1 to 10^7. They are a grid, not data.
"""

import json
import sys
import warnings

import mpmath
import scipy
from scipy.stats import beta, binomtest

LEVELS = [0.95, 0.99, 0.9, 0.5]
MS = [1, 2, 10, 999, 10000, 100000, 10000000]


def ends(b, m, level):
    tail = (1 - level) / 2
    low = 0.0 if b == 0 else float(beta.ppf(tail, b, m - b + 1))
    high = 1.0 if b == m else float(beta.ppf(1 - tail, b + 1, m - b))
    return low, high


SHORT = 5
mpmath.mp.dps = 40


def cdf_le(b, m, x):
    """P(Bin(m, x) <= b) in mpmath, from the shorter side of the sum (None if both are long)."""
    if b < 0:
        return mpmath.mpf(0)
    if b >= m:
        return mpmath.mpf(1)
    if b <= SHORT:
        return mpmath.fsum(mpmath.binomial(m, j) * x**j * (1 - x)**(m - j) for j in range(b + 1))
    if m - b - 1 <= SHORT:
        return 1 - mpmath.fsum(mpmath.binomial(m, k) * (1 - x)**k * x**(m - k) for k in range(m - b))
    return None


def bisect(f):
    """The root of an increasing f on [0, 1], to 40 digits."""
    lo, hi = mpmath.mpf(0), mpmath.mpf(1)
    for _ in range(160):
        mid = (lo + hi) / 2
        if f(mid) < 0:
            lo = mid
        else:
            hi = mid
    return (lo + hi) / 2


def mp_ends(b, m, level):
    tail = mpmath.mpf((1 - level) / 2)
    low = high = None
    if b == 0:
        low = 0.0
    elif cdf_le(b - 1, m, mpmath.mpf("0.5")) is not None:
        # P(Bin >= b) = 1 - P(Bin <= b - 1) increases in x.
        low = float(bisect(lambda x: (1 - cdf_le(b - 1, m, x)) - tail))
    if b == m:
        high = 1.0
    elif cdf_le(b, m, mpmath.mpf("0.5")) is not None:
        # P(Bin <= b) decreases in x.
        high = float(bisect(lambda x: tail - cdf_le(b, m, x)))
    return low, high


def main():
    warnings.simplefilter("ignore", RuntimeWarning)
    cases = []
    for level in LEVELS:
        for m in MS:
            for b in sorted({0, 1, 2, 5, 221, m // 100, m // 20, m // 2, m - 1, m}):
                if not 0 <= b <= m:
                    continue
                low, high = ends(b, m, level)
                ci = binomtest(b, m).proportion_ci(confidence_level=level, method="exact")
                mp_low, mp_high = mp_ends(b, m, level)
                cases.append({"b": b, "m": m, "level": level, "low": low, "high": high,
                              "binomtest_low": float(ci.low), "binomtest_high": float(ci.high),
                              "mpmath_low": mp_low, "mpmath_high": mp_high})
    json.dump({"generator": "testdata/reference/clopper_pearson_scipy.py", "scipy": scipy.__version__,
               "mpmath": mpmath.__version__,
               "cases": cases}, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
