#!/usr/bin/python3
"""Writes the plot-value fixtures (*.values.json) for the HTML report tests.

The observations come straight from the invented demo data under examples/ (made up
for demonstration by examples/generate.py, no real measurements): for each analysis of
a plan, the outcome values of every group, in the results' group order, sorted
ascending. The *.results.json fixtures beside this script are copies of results.json
from `rankplan run examples/NAME/plan.yaml --out DIR`; the tests check that these
values agree with them (group sizes, minimum, maximum, median).

Run from the repository root:  /usr/bin/python3 runner/report/testdata/html/make_values.py
"""
import csv
import json
import os

import yaml

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.normpath(os.path.join(HERE, "..", "..", "..", ".."))
EXAMPLES = ["cream-trial", "dissolution", "pilot-bolts", "symptom-scores"]


def values_for(name):
    folder = os.path.join(ROOT, "examples", name)
    with open(os.path.join(folder, "plan.yaml"), encoding="utf-8") as f:
        plan = yaml.safe_load(f)
    with open(os.path.join(HERE, name + ".results.json"), encoding="utf-8") as f:
        res = json.load(f)
    data = plan["data"]
    delim = {"tab": "\t"}.get(data.get("delimiter", ","), data.get("delimiter", ","))
    decimal = data.get("decimal", ".")
    tokens = set(data.get("missing", {}).get("tokens", ["", "NA"]))
    with open(os.path.join(folder, data["file"]), encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f, delimiter=delim))
    out = []
    for spec, a in zip(plan["analyses"], res["analyses"]):
        assert spec["id"] == a["id"]
        outcome = spec.get("outcome", data["outcome"])
        subset = spec.get("subset")
        groups = {g["name"]: [] for g in a["groups"]}
        for r in rows:
            if subset and r[subset["column"]] not in subset["values"]:
                continue
            g, v = r[data["group"]], r[outcome]
            if g in tokens or v in tokens or g not in groups:
                continue
            groups[g].append(float(v.replace(decimal, ".")))
        out.append({"id": a["id"], "groups": [sorted(groups[g["name"]]) for g in a["groups"]]})
    return out


def main():
    for name in EXAMPLES:
        with open(os.path.join(HERE, name + ".values.json"), "w", encoding="utf-8") as f:
            json.dump(values_for(name), f, indent=1)
            f.write("\n")


if __name__ == "__main__":
    main()
