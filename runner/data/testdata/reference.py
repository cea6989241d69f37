#!/usr/bin/python3
"""Freeze reference values for the runner/data loader tests.

Reads the invented demo CSV files in this folder with Python's own csv module
(Python 3.11.2, Debian python3), converts the cells with float() and counts
significant digits with decimal.Decimal, then writes reference.json. The Go test
TestFixturesAgainstPython loads the same files with the options recorded here and
compares every value.

Run from this folder:  /usr/bin/python3 reference.py > reference.json

Notes on matching the Go loader's rules:
  * csv.reader returns [] for a blank line; those are skipped and not counted.
  * The files use LF inside quoted fields, so csv.reader's keeping of CRLF inside
    quoted fields (the Go loader turns it into LF) does not arise.
  * A cell is missing when its text, trimmed of ASCII spaces, is one of the tokens.
  * float() accepts more syntax than the loader (inf, nan, 1_0); every numeric cell
    is first checked against the loader's grammar, so the files hold no such text.
"""
import csv
import decimal
import hashlib
import io
import json
import re
import sys

CASES = [
    {"file": "decimal_comma_semicolon.csv", "delimiter": ";", "decimal": ",",
     "group": "arm", "outcomes": ["minutes", "score"], "missing": ["", "NA"]},
    {"file": "tab.csv", "delimiter": "\t", "decimal": ".",
     "group": "arm", "outcomes": ["minutes"], "missing": ["NA"]},
    {"file": "bom_crlf.csv", "delimiter": ",", "decimal": ".",
     "group": "arm", "outcomes": ["minutes"], "missing": ["", "NA"]},
    {"file": "multiline_label.csv", "delimiter": ",", "decimal": ".",
     "group": "arm", "outcomes": ["score", "minutes"], "missing": []},
]


def grammar(sep):
    s = re.escape(sep)
    return re.compile(r"[+-]?([0-9]+(%s[0-9]+)?|%s[0-9]+)([eE][+-]?[0-9]+)?\Z" % (s, s))


def significant(text, sep):
    """Mantissa digits from the first to the last non-zero one (the digits that carry the value)."""
    d = decimal.Decimal(text.replace(sep, "."))
    if d == 0:
        return 0
    return len(d.normalize().as_tuple().digits)


def run(case):
    raw = open(case["file"], "rb").read()
    text = raw.decode("utf-8-sig")
    rd = csv.reader(io.StringIO(text, newline=""), delimiter=case["delimiter"], strict=True)
    num = grammar(case["decimal"])
    header = None
    out = {k: case[k] for k in ("file", "delimiter", "decimal", "group", "outcomes", "missing")}
    out.update(sha256=hashlib.sha256(raw).hexdigest(), size=len(raw), groups=[],
               group_ids=[], line=[], outcome=[[] for _ in case["outcomes"]], high_precision=0)
    while True:
        start = rd.line_num + 1
        try:
            rec = next(rd)
        except StopIteration:
            break
        if rec == []:
            continue
        if header is None:
            header = rec
            gi = header.index(case["group"])
            oi = [header.index(c) for c in case["outcomes"]]
            continue
        assert len(rec) == len(header), (case["file"], start)
        label = rec[gi]
        if label.strip(" ") in case["missing"]:
            out["group_ids"].append(-1)
        else:
            if label not in out["groups"]:
                out["groups"].append(label)
            out["group_ids"].append(out["groups"].index(label))
        for c, i in enumerate(oi):
            cell = rec[i].strip(" ")
            if cell in case["missing"]:
                out["outcome"][c].append(None)  # NaN in Go
                continue
            assert num.match(cell), (case["file"], start, cell)
            if significant(cell, case["decimal"]) > 15:
                out["high_precision"] += 1
            # repr() is the shortest text that reads back to the same double.
            out["outcome"][c].append(repr(float(cell.replace(case["decimal"], "."))))
        out["line"].append(start)
    out["rows"] = len(out["group_ids"])
    return out


json.dump({"generator": "reference.py with Python %s csv, float, decimal, hashlib" % sys.version.split()[0],
           "cases": [run(c) for c in CASES]}, sys.stdout, indent=1, ensure_ascii=True)
sys.stdout.write("\n")
