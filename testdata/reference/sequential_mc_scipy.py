#!/usr/bin/python3
"""Reference intervals for stats.SequentialInterval (rankplan stats tests).

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/sequential_mc_scipy.py > testdata/reference/sequential_mc_scipy.json

Besag & Clifford's sequential Monte Carlo rule stops at the resample L that brings the
h-th exceedance. With exceedance probability p, L - h is negative binomial: the number
of failures before the h-th success, scipy.stats.nbinom(h, p). The exact interval of p
at level C inverts the two tails of L:

    low  solves  P(L <= L_obs; low)  = nbinom.cdf(L_obs - h, h, low)      = (1 - C)/2
    high solves  P(L >= L_obs; high) = nbinom.sf(L_obs - h - 1, h, high)  = (1 - C)/2
                 (high = 1 when L_obs = h, where P(L >= h) = 1 for every p)

Each end is found here by scipy.optimize.brentq on the negative binomial tails alone
(no Beta function is used), as a check of the Beta form that the Go code uses:
low = Beta^-1((1 - C)/2; h, L - h + 1), high = Beta^-1((1 + C)/2; h, L - h). The Beta
form from scipy.stats.beta.ppf is recorded beside it ("beta_low", "beta_high").

The cases are a grid of (h, L, C), not data.
"""
import json
import sys

import numpy
import scipy
from scipy import optimize, stats


def root(f):
    return optimize.brentq(f, 1e-300, 1.0, xtol=1e-300, rtol=4 * numpy.finfo(float).eps, maxiter=2000)


def interval(h, l, level):
    tail = (1 - level) / 2
    low = root(lambda p: stats.nbinom.cdf(l - h, h, p) - tail)
    high = 1.0 if l == h else root(lambda p: stats.nbinom.sf(l - h - 1, h, p) - tail)
    return low, high


def main():
    cases = []
    for h in (1, 2, 5, 10, 50):
        for extra in (0, 1, 3, 20, 500, 99000):
            l = h + extra
            for level in (0.95, 0.99):
                low, high = interval(h, l, level)
                blow = float(stats.beta.ppf((1 - level) / 2, h, l - h + 1))
                bhigh = 1.0 if l == h else float(stats.beta.ppf((1 + level) / 2, h, l - h))
                cases.append({"h": h, "l": l, "level": level, "low": low, "high": high,
                              "beta_low": blow, "beta_high": bhigh})
    json.dump({"versions": {"python": sys.version.split()[0], "scipy": scipy.__version__,
                            "numpy": numpy.__version__},
               "cases": cases}, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
