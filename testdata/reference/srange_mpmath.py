#!/usr/bin/python3
"""Tail reference values of the studentized range distribution for stats.StudentizedRange*.

Run from the repository root (takes about two hours: the finite-df rows are double
integrals at 30 digits):
    /usr/bin/python3 testdata/reference/srange_mpmath.py > testdata/reference/srange_mpmath.json

The survival function P(Q >= q) of the studentized range of k means with df degrees of
freedom, at mpmath precision mp.dps = 30 (Debian python3-mpmath; version recorded in the
output), by mpmath.quad (tanh-sinh) of

    1 - W(x) = k * Int phi(z) Phi(z - x) sum_{i=0}^{k-2} Phi(z)^i D^(k-2-i) dz,
    D = Phi(z) - Phi(z - x)

(a sum of positive terms, so the tail keeps its relative precision), with the z range
split at x/2 + (-12, -8, -4, -2, 0, 2, 4, 8, 12) and at the location of the maximum of k
normals; for finite df this is integrated over the density of s = sqrt(chi2_df / df),

    f(s) = 2 (df/2)^(df/2) / Gamma(df/2) s^(df-1) exp(-df s^2 / 2),

with the s range split around the peak of the integrand. It also gives the CDF at a few
body points (1 - sf at 30 digits). scipy's studentized_range is not used here: its
accuracy in the far tail is unverified.
"""
import json
import sys

import mpmath
from mpmath import mp

mp.dps = 30
INF = mp.inf

POINTS = [
    # (q, k, df) ; df None = infinity
    (9, 2, None), (11, 2, None), (10, 3, None), (11.5, 3, None), (8, 5, None), (9, 10, None),
    (11, 20, None), (12, 20, None), (3.314, 3, None),
    (1e7, 2, 1), (1e12, 2, 1), (1e9, 3, 1), (1e6, 10, 1),
    (1e4, 3, 2), (1e6, 3, 2), (3000, 5, 2), (1e5, 20, 2),
    (40, 3, 5), (150, 3, 5), (60, 10, 5),
    (20, 4, 10), (45, 4, 10), (25, 20, 10),
    (12, 3, 20), (20, 3, 20), (15, 10, 20),
    (10, 5, 60), (14, 5, 60), (12, 20, 60),
    (9, 3, 120), (12, 3, 120), (10, 10, 120),
    # body point (CDF absolute check)
    (1, 5, 5),
    # rows of the scipy grid (srange_scipy.py) where scipy and rankplan disagree by more
    # than 1e-7 relative: the arbiter
    (10, 15, None), (10, 12, None), (0.5, 15, None), (3, 19, None), (10, 11, 120),
]


def ncdf(x):
    return mp.ncdf(x)


def npdf(x):
    return mp.npdf(x)


def range_sf(x, k):
    """1 - W(x) for the range of k standard normals."""
    if x <= 0:
        return mp.mpf(1)
    h = x / 2

    def f(z):
        a = ncdf(z)
        b = ncdf(z - x)
        d = a - b
        s = mp.mpf(0)
        ai = mp.mpf(1)
        for i in range(k - 1):
            s += ai * d ** (k - 2 - i)
            ai *= a
        return npdf(z) * b * s

    zmax = mp.sqrt(2 * mp.log(k)) if k > 2 else mp.mpf(0)
    pts = sorted(set([h + c for c in (-12, -8, -4, -2, 0, 2, 4, 8, 12)] + [zmax]))
    pts = [-INF] + pts + [INF]
    return k * mp.quad(f, pts)


def chi_density(s, df):
    df = mp.mpf(df)
    return 2 * (df / 2) ** (df / 2) / mp.gamma(df / 2) * s ** (df - 1) * mp.exp(-df * s * s / 2)


def sr_sf(q, k, df):
    q = mp.mpf(q)
    if df is None:
        return range_sf(q, k)
    # peak of the tail integrand: s* ~ sqrt(df/(df + q^2/2)) for large q
    sstar = mp.sqrt(mp.mpf(df) / (df + q * q / 2))
    pts = sorted(set([sstar * c for c in (mp.mpf(1) / 64, mp.mpf(1) / 16, mp.mpf(1) / 4, mp.mpf(1) / 2, 1, 2, 4)]
                     + [mp.mpf(1) / q, 4 / q, 10 / q, 1, 2, 4]))
    pts = [mp.mpf(0)] + [p for p in pts if p > 0] + [INF]
    return mp.quad(lambda s: chi_density(s, df) * range_sf(q * s, k), pts)


rows = []
for q, k, df in POINTS:
    sf = sr_sf(q, k, df)
    rows.append({"q": q, "k": k, "df": "inf" if df is None else df,
                 "sf": mp.nstr(sf, 20), "cdf": mp.nstr(1 - sf, 20)})
    print(q, k, df, mp.nstr(sf, 20), file=sys.stderr, flush=True)
json.dump({"generator": "testdata/reference/srange_mpmath.py",
           "versions": {"mpmath": mpmath.__version__}, "dps": mp.dps, "rows": rows}, sys.stdout, indent=1)
sys.stdout.write("\n")
