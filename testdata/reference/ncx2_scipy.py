#!/usr/bin/python3
"""Reference tails of the noncentral chi-square distribution for stats.NoncentralChiSquareTails,
and reference confidence intervals of the noncentrality for stats.NoncentralityInterval.

Run from the repository root:
    /usr/bin/python3 testdata/reference/ncx2_scipy.py > testdata/reference/ncx2_scipy.json

"tails": for each (df, nc) of a grid, x at quantiles of the distribution (scipy's ppf and
isf) and at points deep in both tails; "lower" = P(X <= x) from scipy.stats.ncx2.cdf and
"upper" = P(X > x) from scipy.stats.ncx2.sf (Debian python3-scipy, which computes both
with Boost's non_central_chi_squared). For nc <= 300 and df <= 200 also "mp_lower" and
"mp_upper": the Poisson mixture sum_j e^-mu mu^j / j! * P(df/2 + j, x/2) (and Q) with
mu = nc/2, summed in mpmath at 40 digits from the Poisson mode outwards until the Poisson
weight left is below 1e-30 of the sum (P, Q <= 1), each P and Q from mpmath.gammainc
(regularized).

"intervals": the noncentralities lam_low, lam_high with P(X > x | lam_low) = (1 - level)/2
and P(X <= x | lam_high) = (1 - level)/2, lam_low = 0 when P(X > x | 0) >= (1 - level)/2 and
lam_high = 0 when P(X <= x | 0) <= (1 - level)/2 (Steiger 2004, Psychological Methods
9:164-182), found with scipy.optimize.brentq (xtol 1e-13, rtol 1e-15) on scipy's ncx2.sf
and ncx2.cdf.

"spot": one point at nc = 1e5 summed in mpmath (see below), to settle a difference from scipy.
"""
import json
import sys

import mpmath
import scipy
from scipy.optimize import brentq
from scipy.stats import ncx2

mpmath.mp.dps = 40


def mp_tails(x, df, nc):
    z = mpmath.mpf(x) / 2
    a = mpmath.mpf(df) / 2
    mu = mpmath.mpf(nc) / 2

    def term(j):
        w = mpmath.exp(-mu + j * mpmath.log(mu) - mpmath.loggamma(j + 1)) if mu > 0 else mpmath.mpf(j == 0)
        return w, mpmath.gammainc(a + j, 0, z, regularized=True), mpmath.gammainc(a + j, z, mpmath.inf, regularized=True)

    lower = upper = mpmath.mpf(0)
    m = int(mpmath.floor(mu))
    j = m
    while True:  # the mode and upwards
        w, p, q = term(j)
        lower += w * p
        upper += w * q
        if w == 0 or (j > mu and w * mu / (j + 1 - mu) < mpmath.mpf(10) ** -30 * min(lower, upper)):
            break
        j += 1
    j = m - 1
    while j >= 0:  # below the mode
        w, p, q = term(j)
        lower += w * p
        upper += w * q
        if w * j / (mu - j + 1) < mpmath.mpf(10) ** -30 * min(lower, upper):
            break
        j -= 1
    return float(lower), float(upper)


tails = []
for df in [0.5, 1, 2, 3, 4.5, 10, 50, 200, 1000]:
    for nc in [0, 0.001, 0.5, 2, 10, 50, 300, 2000, 10000, 1e5]:
        xs = set()
        for p in [1e-12, 1e-6, 1e-3, 0.025, 0.3, 0.5, 0.7]:
            xs.add(float(ncx2.ppf(p, df, nc)))
        for p in [0.3, 0.025, 1e-3, 1e-6, 1e-12]:
            xs.add(float(ncx2.isf(p, df, nc)))
        mean, sd = df + nc, (2 * (df + 2 * nc)) ** 0.5
        deep = nc <= 300 and df <= 200
        if deep:
            xs.add(mean / 1000)
            xs.add(mean + 30 * sd)
            xs.add(mean + 60 * sd)
        for x in sorted(xs):
            if not x > 0:
                continue
            c = {"df": df, "nc": nc, "x": x,
                 "lower": float(ncx2.cdf(x, df, nc)), "upper": float(ncx2.sf(x, df, nc))}
            if deep:
                c["mp_lower"], c["mp_upper"] = mp_tails(x, df, nc)
            tails.append(c)


def interval(x, df, level):
    half = (1 - level) / 2
    lo = hi = 0.0
    if ncx2.sf(x, df, 0) < half:
        top = max(1.0, x)
        while ncx2.sf(x, df, top) < half:
            top *= 2
        lo = brentq(lambda nc: ncx2.sf(x, df, nc) - half, 0, top, xtol=1e-13, rtol=1e-15)
    if ncx2.cdf(x, df, 0) > half:
        top = max(1.0, x)
        while ncx2.cdf(x, df, top) > half:
            top *= 2
        hi = brentq(lambda nc: ncx2.cdf(x, df, nc) - half, 0, top, xtol=1e-13, rtol=1e-15)
    return lo, hi


intervals = []
for df in [1, 2, 3, 5, 11]:
    # 2.114325393362999: H* of the sleep analysis of examples/cream-trial (N = 60, k = 3);
    # 7.988228749443715: H* of the plant weights of Dobson (1983; kruskal_scipy.json).
    for x in [0.01, 0.5, 2.114325393362999, 5, 7.988228749443715, 12.5, 40, 250, 3000]:
        for level in [0.8, 0.9, 0.95, 0.99]:
            lo, hi = interval(x, df, level)
            intervals.append({"x": x, "df": df, "level": level, "lam_low": lo, "lam_high": hi})


def mp_upper_window(x, df, nc, lo, hi):
    """P(X > x) in mpmath at 30 digits, summed over Poisson indexes lo <= j < hi only."""
    with mpmath.workdps(30):
        z, a, mu = mpmath.mpf(x) / 2, mpmath.mpf(df) / 2, mpmath.mpf(nc) / 2
        return float(mpmath.fsum(mpmath.exp(-mu + j * mpmath.log(mu) - mpmath.loggamma(j + 1))
                                 * mpmath.gammainc(a + j, z, mpmath.inf, regularized=True) for j in range(lo, hi)))


# A point where scipy's value is off by 4e-12 relative: nc = 1e5, df = 2, x at scipy's
# isf(1e-12). The window m - 3000 <= j < m + 8000 around the Poisson mode m = 50000
# (-13 to +36 Poisson standard deviations) holds all but a negligible part of the sum.
spot = {"df": 2, "nc": 1e5, "x": 104499.49321556409}
spot["mp_upper"] = mp_upper_window(spot["x"], 2, 1e5, 47000, 58000)
spot["upper"] = float(ncx2.sf(spot["x"], 2, 1e5))

json.dump({"generator": "testdata/reference/ncx2_scipy.py", "scipy": scipy.__version__,
           "mpmath": mpmath.__version__, "tails": tails, "spot": spot,
           "intervals": intervals},
          sys.stdout, indent=1)
sys.stdout.write("\n")
