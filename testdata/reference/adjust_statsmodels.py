#!/usr/bin/python3
"""Reference adjusted p-values for stats.AdjustP (rankplan stats package tests).

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/adjust_statsmodels.py > testdata/reference/adjust_statsmodels.json

Every value comes from statsmodels.stats.multitest.multipletests (Debian bookworm
python3-statsmodels). Its default method is Holm-Sidak ('hs'), not plain Holm, so the
method is always passed explicitly. rankplan name -> statsmodels name:

    bonferroni         -> 'bonferroni'      holm     -> 'holm'
    sidak              -> 'sidak'           hochberg -> 'simes-hochberg'
    hommel             -> 'hommel'
    benjamini-hochberg -> 'fdr_bh'
    benjamini-yekutieli -> 'fdr_by'

Vectors: "methods_section4" is the 10-value vector with a tie from the project's
docs/methods.md section 4. All the other vectors were invented for these tests and describe
nothing real. Rejections are recorded at alpha = 0.05 (statsmodels rejects when the
adjusted value is <= alpha for these methods).
"""

import json
import sys

import numpy
import statsmodels
from statsmodels.stats.multitest import multipletests

METHODS = {
    "bonferroni": "bonferroni",
    "sidak": "sidak",
    "holm": "holm",
    "hochberg": "simes-hochberg",
    "hommel": "hommel",
    "benjamini-hochberg": "fdr_bh",
    "benjamini-yekutieli": "fdr_by",
}

ALPHA = 0.05

VECTORS = [
    ("methods_section4",
     [0.0001, 0.004, 0.019, 0.0095, 0.020, 0.030, 0.040, 0.040, 0.21, 0.70]),
    # invented: p = 1 several times, and ties below 1
    ("invented_ones_and_ties",
     [1.0, 0.5, 0.01, 1.0, 0.01, 0.2, 0.5, 0.03, 1.0]),
    # invented: a single p-value
    ("invented_single", [0.03]),
    # invented: 20 p-values, unsorted, spread over the unit interval, one tie
    ("invented_twenty",
     [0.0412, 0.0008, 0.3371, 0.0123, 0.9014, 0.0049, 0.0631, 0.2288, 0.0017, 0.5570,
      0.0275, 0.0123, 0.7742, 0.1406, 0.0096, 0.4489, 0.0350, 0.0002, 0.6813, 0.0891]),
    # invented: all values equal
    ("invented_all_equal", [0.02, 0.02, 0.02, 0.02, 0.02, 0.02]),
    # invented: all values equal and large, so every method caps or keeps them
    ("invented_all_equal_large", [0.6, 0.6, 0.6, 0.6]),
    # invented: zeros and a value near 1
    ("invented_zeros", [0.0, 0.3, 0.0, 0.999999, 1e-300, 0.05]),
]


def main():
    cases = []
    for name, p in VECTORS:
        adjusted = {}
        reject = {}
        for ours, theirs in METHODS.items():
            rej, padj, _, _ = multipletests(numpy.array(p, dtype=float), alpha=ALPHA,
                                            method=theirs)
            adjusted[ours] = [float(x) for x in padj]
            reject[ours] = [bool(x) for x in rej]
        cases.append({"name": name, "p": p, "adjusted": adjusted, "reject": reject})
    out = {
        "generator": "testdata/reference/adjust_statsmodels.py",
        "versions": {"statsmodels": statsmodels.__version__, "numpy": numpy.__version__},
        "alpha": ALPHA,
        "methods": METHODS,
        "cases": cases,
    }
    json.dump(out, sys.stdout, indent=1, sort_keys=True)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
