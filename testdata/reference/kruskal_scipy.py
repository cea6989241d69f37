#!/usr/bin/python3
"""Reference values for the rankplan stats package tests.

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/kruskal_scipy.py > testdata/reference/kruskal_scipy.json

Optionally pass --nist-dir DIR (a folder holding the NIST StRD files SmLs01.dat,
SmLs02.dat and SmLs03.dat) to check that the SmLs designs built below from their
documented structure match the published files value for value.

What it writes (JSON on stdout):

* "kruskal": scipy.stats.kruskal H (tie-corrected) and p on several data sets, plus
  log10 of the chi-square upper tail at that H from mpmath (high precision), so the
  Go tests can check the tail where the float64 p underflows.
* "chisq_tail": chi-square upper tails Q(df/2, x/2) and their log10 from mpmath
  (mp.dps = 50), across the normal range and far into the underflow range.
* "quartiles": numpy.percentile(x, [25, 50, 75]) with the default method
  ("linear", Hyndman & Fan 1996 type 7).

Data sets: every set named "invented_*" was made up for these tests and describes
nothing real. The plant weights are the published data set of Dobson (1983), "An
Introduction to Statistical Modelling", as listed in the project's docs/methods.md §8.2.
SmLs01 is read from the NIST StRD file copied to stats/testdata/nist/SmLs01.dat;
SmLs02 and SmLs03 are rebuilt from the structure of those files (see smls_design).
"""

import json
import math
import re
import sys

import mpmath
import numpy
import scipy
from scipy import stats

mpmath.mp.dps = 50

SMLS01_PATH = "stats/testdata/nist/SmLs01.dat"


def parse_nist_anova(path):
    """Parse a NIST StRD one-way ANOVA file into {treatment: [values]}.

    The header states the data line range ("Data (lines 61 to 249)"); each data line
    holds a treatment number and a response. The Go test code parses the same way.
    """
    with open(path, encoding="ascii") as f:
        lines = f.read().split("\n")
    first = last = None
    for line in lines:
        m = re.match(r"^\s*Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)\s*$", line)
        if m:
            first, last = int(m.group(1)), int(m.group(2))
            break
    if first is None:
        raise ValueError(path + ": no 'Data (lines A to B)' header line")
    groups = {}
    for line in lines[first - 1:last]:
        fields = line.split()
        if len(fields) != 2:
            raise ValueError(path + ": bad data line " + repr(line))
        groups.setdefault(int(fields[0]), []).append(float(fields[1]))
    return [groups[t] for t in sorted(groups)]


def smls_design(scale):
    """Build the SmLs01/02/03 design (9 treatments of 2*scale+1 values).

    Structure of the NIST files (docs/methods.md §8.1, counted from the files, and
    checked here against SmLs01 and, with --nist-dir, against all three):
    treatment 1 is one 1.4 plus `scale` each of 1.3 and 1.5; even treatments are one
    1.3 plus `scale` each of 1.2 and 1.4; odd treatments >= 3 are one 1.5 plus
    `scale` each of 1.4 and 1.6.
    """
    groups = []
    for t in range(1, 10):
        if t == 1:
            one, lo, hi = 1.4, 1.3, 1.5
        elif t % 2 == 0:
            one, lo, hi = 1.3, 1.2, 1.4
        else:
            one, lo, hi = 1.5, 1.4, 1.6
        groups.append([one] + [lo] * scale + [hi] * scale)
    return groups


def same_multisets(a, b):
    return len(a) == len(b) and all(sorted(x) == sorted(y) for x, y in zip(a, b))


DOBSON1983_PLANT_WEIGHTS = [
    [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14],
    [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
    [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26],
]

INVENTED = [
    ("invented_scores_heavy_ties", "invented: integer scores 0-10, k=3, sizes 12/15/9", [
        [3, 5, 5, 6, 7, 7, 7, 8, 2, 5, 6, 4],
        [6, 8, 8, 9, 10, 7, 8, 9, 6, 7, 10, 9, 8, 5, 7],
        [2, 3, 3, 4, 5, 1, 0, 4, 3],
    ]),
    ("invented_unequal_sizes", "invented: continuous values, k=4, sizes 3/7/12/5, no ties", [
        [12.71, 9.04, 15.33],
        [8.12, 10.55, 7.98, 11.4, 9.61, 13.02, 6.77],
        [14.2, 16.85, 13.9, 12.05, 18.31, 15.72, 17.06, 14.66, 19.4, 16.1, 13.37, 15.05],
        [10.01, 11.93, 9.48, 12.88, 10.72],
    ]),
    ("invented_two_groups", "invented: k=2, sizes 8/11, one tie across groups", [
        [0.83, 1.21, 0.57, 1.64, 0.92, 1.05, 0.71, 1.38],
        [1.47, 1.92, 1.21, 2.08, 1.75, 1.33, 2.41, 1.66, 1.99, 1.58, 2.2],
    ]),
    ("invented_five_groups", "invented: k=5, sizes 6/6/5/7/4, ties within and across groups", [
        [21.5, 23.0, 19.5, 22.0, 23.0, 20.5],
        [24.5, 26.0, 25.0, 23.0, 27.5, 25.0],
        [18.0, 19.5, 17.5, 20.0, 18.5],
        [22.0, 24.5, 21.0, 23.5, 22.5, 25.5, 21.5],
        [28.0, 26.5, 29.5, 27.0],
    ]),
    ("invented_singleton_group", "invented: k=3, sizes 1/6/5 (a group of size one)", [
        [41.0],
        [35.2, 38.9, 33.1, 36.4, 40.2, 37.7],
        [44.8, 39.5, 46.1, 42.3, 43.6],
    ]),
    ("invented_signed_zero_extremes", "invented: -0 and +0 tied, huge and tiny magnitudes, negatives", [
        [-0.0, 1e300, -2.5, 3.0, -1e-300],
        [0.0, 0.0, -7.25, 1e-300, 5e-324],
        [2.0, 3.0, -1e300, 4.5, 0.5, 3.0],
    ]),
    ("invented_separated_with_ties", "invented: k=2 perfectly separated, each group one tie block", [
        [1.0, 1.0],
        [2.0, 2.0],
    ]),
    ("invented_all_singletons", "invented: k=4, every group one value", [
        [3.0], [1.0], [4.0], [2.0],
    ]),
]


def log10_chisq_tail(x, df):
    q = mpmath.gammainc(mpmath.mpf(df) / 2, mpmath.mpf(x) / 2, mpmath.inf, regularized=True)
    return q, mpmath.log10(q)


def kruskal_entry(name, source, groups, data_ref=None):
    res = stats.kruskal(*groups)
    h = float(res.statistic)
    p = float(res.pvalue)
    df = len(groups) - 1
    _, lg = log10_chisq_tail(h, df)
    entry = {"name": name, "source": source, "df": df, "h": h, "p": p,
             "log10p_mpmath": float(lg), "sizes": [len(g) for g in groups]}
    if data_ref is None:
        entry["groups"] = groups
    else:
        entry["data"] = data_ref
    return entry


def main():
    nist_dir = None
    if len(sys.argv) == 3 and sys.argv[1] == "--nist-dir":
        nist_dir = sys.argv[2]
    elif len(sys.argv) != 1:
        sys.exit("usage: kruskal_scipy.py [--nist-dir DIR]")

    smls01 = parse_nist_anova(SMLS01_PATH)
    if not same_multisets(smls01, smls_design(10)):
        sys.exit("SmLs01 file does not match the documented SmLs structure")
    if nist_dir is not None:
        for name, scale in (("SmLs01", 10), ("SmLs02", 100), ("SmLs03", 1000)):
            got = parse_nist_anova(nist_dir + "/" + name + ".dat")
            if not same_multisets(got, smls_design(scale)):
                sys.exit(name + " does not match the documented SmLs structure")
            print(name + ": matches smls_design(%d)" % scale, file=sys.stderr)

    kw = [kruskal_entry(n, s, [[float(v) for v in g] for g in gs]) for n, s, gs in INVENTED]
    kw.append(kruskal_entry("dobson1983_plant_weights", "Dobson (1983), data as in docs/methods.md §8.2", DOBSON1983_PLANT_WEIGHTS))
    kw.append(kruskal_entry("nist_smls01", "NIST StRD SmLs01 (Simon & Lesage 1989), file copy",
                            smls01, {"nist_file": SMLS01_PATH}))
    kw.append(kruskal_entry("nist_smls02_design", "NIST StRD SmLs02 structure, rebuilt",
                            smls_design(100), {"smls_scale": 100}))
    kw.append(kruskal_entry("nist_smls03_design", "NIST StRD SmLs03 structure, rebuilt",
                            smls_design(1000), {"smls_scale": 1000}))

    tails = []
    points = [
        (0.5, 2), (5.991, 2), (80, 2), (1416, 2), (1417, 2), (1418, 2), (1500, 2),
        (5000, 2), (20000, 2),
        (1e-8, 1), (0.5, 1), (3.841458820694124, 1), (80, 1), (1500, 1), (40000, 1),
        (10, 3), (1420, 3), (100000, 3),
        (80, 5), (0.001, 10), (1400, 10), (1500, 8), (200, 9), (700, 4),
        (30, 20), (25, 25), (3000, 50),
        (50, 100), (100, 100), (150, 100), (1500, 100), (2000, 100),
        (1000, 1000), (1100, 1000), (2500, 1000), (5000, 1000),
        (15000, 10000), (15500, 10000), (20000, 10000),
        (2040000, 2000000), (2100000, 2000000), (3000000, 2000000),
    ]
    for x, df in points:
        q, lg = log10_chisq_tail(x, df)
        tails.append({"x": float(x), "df": df, "p": float(q), "log10p": float(lg),
                      "p_str": mpmath.nstr(q, 20)})

    quart = []
    qsets = [
        ("one", [7.5]),
        ("two", [1.0, 2.0]),
        ("three", [1.0, 2.0, 4.0]),
        ("four", [1.0, 2.0, 3.0, 4.0]),
        ("five_ties", [2.0, 2.0, 2.0, 5.0, 9.0]),
        ("negatives", [-3.2, -1.1, -1.1, 0.0, 0.4, 2.75, 8.0]),
        ("decimals", [0.1, 0.2, 0.3, 0.7, 1.1, 1.3]),
        ("dobson1983_plant_weights_ctrl", sorted(DOBSON1983_PLANT_WEIGHTS[0])),
        ("dobson1983_plant_weights_trt1", sorted(DOBSON1983_PLANT_WEIGHTS[1])),
        ("dobson1983_plant_weights_trt2", sorted(DOBSON1983_PLANT_WEIGHTS[2])),
        ("invented_scores", sorted(float(v) for v in INVENTED[0][2][1])),
        ("large_offset", [1e12 + 0.1, 1e12 + 0.2, 1e12 + 0.3, 1e12 + 0.5]),
    ]
    for name, xs in qsets:
        q1, med, q3 = numpy.percentile(numpy.array(xs, dtype=float), [25, 50, 75])
        quart.append({"name": name, "x": xs, "q1": float(q1), "median": float(med), "q3": float(q3)})

    out = {
        "generator": "testdata/reference/kruskal_scipy.py",
        "versions": {
            "python": "%d.%d.%d" % sys.version_info[:3],
            "numpy": numpy.__version__,
            "scipy": scipy.__version__,
            "mpmath": mpmath.__version__,
        },
        "kruskal": kw,
        "chisq_tail": tails,
        "quartiles": quart,
    }
    json.dump(out, sys.stdout, indent=1, allow_nan=False)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
