#!/usr/bin/python3
"""Invented three-endpoint trial data for runner's multiplicity tests, and its reference p-values.

Run from the repository root:
    /usr/bin/python3 runner/testdata/endpoints/generate.py

It writes runner/testdata/endpoints/data.csv (invented: three arms, two sites, three outcome
columns, made up by a seeded generator for the tests; no real measurements) and
runner/testdata/endpoints/reference.json: scipy.stats.kruskal (Debian python3-scipy; version
recorded) on each endpoint, on all rows and on each site. The generator searches seeds until
the three all-site p-values fall in the windows the hand-worked decisions of
TestMultiplicityThreeEndpoints need (see there); the windows, not the seed, are the design.
"""
import json
import os
import sys

import numpy
import scipy
from scipy.stats import kruskal

HERE = os.path.dirname(os.path.abspath(__file__))
ARMS = ["placebo", "low", "high"]
SITES = ["north", "south"]
N_PER_ARM_SITE = 6
# The windows for the asymptotic p-values of (itch, redness, sleep):
#   itch     p1 in [0.001, 0.01]:  Holm 3·p1 <= 0.05 rejects;
#   redness  p2 in [0.028, 0.045]: p2 <= 0.05 but 2·p2 > 0.05, so Holm does not reject;
#   sleep    p3 in [0.15, 0.60]:   never rejects.
WINDOWS = [(0.001, 0.01), (0.028, 0.045), (0.15, 0.60)]
SHIFTS = [(0.0, 0.9, 1.6), (0.0, 0.5, 1.0), (0.0, 0.2, 0.3)]


def make(seed):
    rng = numpy.random.default_rng(seed)
    rows = []
    for site in SITES:
        for a, arm in enumerate(ARMS):
            for _ in range(N_PER_ARM_SITE):
                vals = []
                for e in range(3):
                    # scores on a 0-10 scale in half points, so there are ties
                    v = 5 - 2 * SHIFTS[e][a] + 1.6 * rng.standard_normal()
                    vals.append(min(10.0, max(0.0, round(v * 2) / 2)))
                rows.append((site, arm, vals))
    return rows


def pvalues(rows, site=None):
    out = []
    for e in range(3):
        groups = [[r[2][e] for r in rows if r[1] == arm and (site is None or r[0] == site)] for arm in ARMS]
        h, p = kruskal(*groups)
        out.append({"h": float(h), "p": float(p)})
    return out


for seed in range(1, 100000):
    rows = make(seed)
    ps = [x["p"] for x in pvalues(rows)]
    if all(lo <= p <= hi for p, (lo, hi) in zip(ps, WINDOWS)):
        break
else:
    sys.exit("no seed gives p-values in the windows")

with open(os.path.join(HERE, "data.csv"), "w") as f:
    f.write("patient,site,arm,itch,redness,sleep\n")
    for i, (site, arm, v) in enumerate(rows):
        f.write("P%03d,%s,%s,%s,%s,%s\n" % (i + 1, site, arm, *("%g" % x for x in v)))

ref = {
    "generator": "runner/testdata/endpoints/generate.py",
    "versions": {"scipy": scipy.__version__, "numpy": numpy.__version__},
    "note": "invented data; scipy.stats.kruskal (tie-corrected H, chi-square p) per endpoint",
    "seed": seed,
    "endpoints": ["itch", "redness", "sleep"],
    "all_sites": pvalues(rows),
    "north": pvalues(rows, "north"),
    "south": pvalues(rows, "south"),
}
with open(os.path.join(HERE, "reference.json"), "w") as f:
    json.dump(ref, f, indent=1)
    f.write("\n")
