#!/usr/bin/python3
"""Reference decisions for verify --data on data that flip only post-hoc decisions.

Run from the repository root with the Debian interpreter:

    /usr/bin/python3 testdata/reference/verify_drift_dunn.py > testdata/reference/verify_drift_dunn.json

Reads base.csv (the recorded data) and new.csv (the new data) from the testscript archive
cmd/rankplan/testdata/script/verify_data_posthoc_flip.txtar: four groups A-D of eight
invented values each. For each file it computes, independently of rankplan, from the
published formulas:

- Kruskal-Wallis H* and its chi-square p-value: scipy.stats.kruskal;
- Dunn (1964) z for every pair of groups in the order (A, B), (A, C), ..., (C, D):
  z = (Rbar_i - Rbar_j) / sqrt(S2 (1/n_i + 1/n_j)), with midranks from
  scipy.stats.rankdata and S2 the sample variance of all midranks (numpy.var, ddof=1, the
  tie-corrected N(N+1)/12), and p = 2 scipy.stats.norm.sf(|z|);
- Holm (1979) adjusted p-values and rejections at alpha = 0.05:
  statsmodels.stats.multitest.multipletests(method='holm').

Versions are recorded in the output.
"""

import json
import sys

import numpy
import scipy
import statsmodels
from scipy import stats
from statsmodels.stats.multitest import multipletests

ARCHIVE = "cmd/rankplan/testdata/script/verify_data_posthoc_flip.txtar"
ALPHA = 0.05


def archive_files(path):
    """The files of a txtar archive: each starts after a line '-- NAME --'."""
    files, name = {}, None
    with open(path, encoding="utf-8") as f:
        for line in f:
            if line.startswith("-- ") and line.rstrip("\n").endswith(" --"):
                name = line[3:-4] if line.endswith("\n") else line[3:-3]
                files[name] = []
            elif name is not None:
                files[name].append(line)
    return {k: "".join(v) for k, v in files.items()}


def groups_of(csv_text):
    groups = {}
    lines = csv_text.strip().split("\n")
    assert lines[0] == "cure,strength", lines[0]
    for line in lines[1:]:
        g, v = line.split(",")
        groups.setdefault(g, []).append(float(v))
    return groups


def run(csv_text):
    groups = groups_of(csv_text)
    names = sorted(groups)
    data = [groups[g] for g in names]
    allv = numpy.concatenate([numpy.asarray(g, float) for g in data])
    ranks = stats.rankdata(allv)
    n = [len(g) for g in data]
    cut = numpy.cumsum([0] + n)
    rbar = [ranks[cut[i]:cut[i + 1]].mean() for i in range(len(data))]
    s2 = numpy.var(ranks, ddof=1)
    pairs, ps = [], []
    for i in range(len(data)):
        for j in range(i + 1, len(data)):
            z = (rbar[i] - rbar[j]) / numpy.sqrt(s2 * (1 / n[i] + 1 / n[j]))
            p = 2 * stats.norm.sf(abs(z))
            pairs.append({"groups": [names[i], names[j]], "z": float(z), "p": float(p)})
            ps.append(p)
    reject, padj, _, _ = multipletests(ps, alpha=ALPHA, method="holm")
    for pr, a, r in zip(pairs, padj, reject):
        pr["p_adjusted"] = float(a)
        pr["reject"] = bool(r)
    kw = stats.kruskal(*data)
    return {"h": float(kw.statistic), "p": float(kw.pvalue), "reject": bool(kw.pvalue <= ALPHA), "pairs": pairs}


files = archive_files(ARCHIVE)
json.dump({"generator": "testdata/reference/verify_drift_dunn.py", "archive": ARCHIVE,
           "scipy": scipy.__version__, "numpy": numpy.__version__, "statsmodels": statsmodels.__version__,
           "alpha": ALPHA, "base": run(files["base.csv"]), "new": run(files["new.csv"])}, sys.stdout, indent=1)
sys.stdout.write("\n")
