#!/usr/bin/python3
"""Reference values for stats.KruskalWallisBootstrap (stats/effect_test.go).

Run from this folder:  /usr/bin/python3 kw_bootstrap_ref.py > kw_bootstrap_ref.json

An independent replay of the documented bootstrap: the stream is the independent Python
implementation in stats/stream/testdata/stream_ref.py (its own SHA-256 keys,
ChaCha8Rand, Lemire); each resample draws, group by group, n_i values with replacement
from the group's sorted values (one below(n_i) per value); H* of the resample comes from
scipy.stats.kruskal (a resample with all values tied counts as H* = 0); the interval
ends are numpy.percentile (method "linear", Hyndman & Fan type 7) of the sorted H* at
(1 - level)/2 and (1 + level)/2, in percent.

Data: the plant weights of Dobson (1983, An Introduction to Statistical Modelling, as listed in
docs/methods.md §8.2), and two invented sets (invented for these tests).
"""

import json
import os
import sys
import warnings

import numpy
import scipy
from scipy import stats

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "stream", "testdata"))
import stream_ref  # noqa: E402

BLOCK = 256
PURPOSE = "kw-effect-bootstrap"

DESIGNS = [
    {"name": "dobson1983_plant_weights", "seed": 20261201, "id": "primary", "m": 600, "level": 0.95, "groups": [
        [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
        [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
        [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26]]},
    {"name": "invented_ties_degenerate", "seed": 7, "id": "a", "m": 700, "level": 0.9, "groups": [
        [1, 1, 1, 2], [1, 1], [1, 1, 3]]},
    {"name": "invented_unequal", "seed": 99, "id": "effect-x", "m": 300, "level": 0.99, "groups": [
        [12.5, 9.0, 15.25, 11.0], [8.0, 10.5, 7.75, 11.0, 9.5, 13.0], [14.0, 16.5]]},
]


def h_star(groups):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            return float(stats.kruskal(*groups).statistic), False
        except ValueError:  # "All numbers are identical in kruskal"
            return 0.0, True


def run(d):
    sorted_groups = [sorted(float(x) for x in g) for g in d["groups"]]
    m = d["m"]
    hs, degenerate = [], 0
    for j in range((m + BLOCK - 1) // BLOCK):
        s = stream_ref.Stream(stream_ref.key(PURPOSE, d["seed"], d["id"], j))
        for _ in range(j * BLOCK, min((j + 1) * BLOCK, m)):
            res = [[g[s.below(len(g))] for _ in g] for g in sorted_groups]
            h, deg = h_star(res)
            hs.append(h)
            degenerate += deg
    hs.sort()
    lo = float(numpy.percentile(hs, 100 * (1 - d["level"]) / 2))
    hi = float(numpy.percentile(hs, 100 * (1 + d["level"]) / 2))
    return {"name": d["name"], "seed": d["seed"], "analysis_id": d["id"], "resamples": m, "level": d["level"],
            "groups": d["groups"], "h_low": lo, "h_high": hi, "degenerate": degenerate}


def main():
    out = {"generator": "stats/testdata/bootstrap/kw_bootstrap_ref.py",
           "versions": {"python": sys.version.split()[0], "numpy": numpy.__version__, "scipy": scipy.__version__},
           "designs": [run(d) for d in DESIGNS]}
    json.dump(out, sys.stdout, indent=1, allow_nan=False)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
