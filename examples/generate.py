#!/usr/bin/python3
"""Writes the invented data sets of the rankplan examples.

The data are invented for demonstration: they describe no real product, patient or
study. Run from the examples folder: /usr/bin/python3 generate.py
The output is fixed by the seeds below, so rerunning reproduces the committed files.
"""
import random

def dissolution():
    # Minutes until 80% of a tablet has dissolved, four production lines, 12 tablets each.
    # Right-skewed (log-normal), read to the nearest half minute, so some values tie.
    rng = random.Random(20261201)
    centre = {"L1": 14.0, "L2": 15.5, "L3": 14.5, "L4": 18.0}
    rows = []
    for line, m in centre.items():
        for i in range(12):
            minutes = round(rng.lognormvariate(0, 0.18) * m * 2) / 2
            rows.append((f"{line}-{i + 1:02d}", line, f"{minutes:.1f}"))
    rows[17] = (rows[17][0], rows[17][1], "NA")  # a tablet whose reading was lost
    rng.shuffle(rows)
    with open("dissolution/tablets.csv", "w", newline="") as f:
        f.write("tablet,line,minutes\r\n")
        for r in rows:
            f.write(",".join(r) + "\r\n")

def symptom_scores():
    # 0-10 symptom scores in three dose arms of unequal size: ordinal, heavily tied.
    rng = random.Random(7041)
    arms = {"placebo": (18, [1, 1, 2, 3, 4, 5, 6, 6, 5, 3, 2]),
            "low dose": (16, [1, 2, 3, 4, 6, 6, 5, 4, 3, 1, 1]),
            "high dose": (17, [2, 4, 6, 7, 6, 4, 3, 2, 1, 1, 1])}
    rows = []
    for arm, (n, weights) in arms.items():
        for i in range(n):
            score = rng.choices(range(11), weights=weights)[0]
            rows.append((f"P{len(rows) + 101}", arm, str(score)))
    rows.append(("P999", "", "4"))  # a participant whose arm was not recorded
    with open("symptom-scores/scores.csv", "w", newline="") as f:
        f.write("participant;arm;score_day28\n")
        for r in rows:
            f.write(";".join(r) + "\n")

def pilot():
    # A small pilot: tensile strength (kN) of bolts from three suppliers, 5, 4 and 5 bolts
    # (one bolt of supplier B was damaged before testing). Read to 0.1 kN.
    rng = random.Random(515)
    centre = {"A": 41.0, "B": 43.5, "C": 44.0}
    sizes = {"A": 5, "B": 4, "C": 5}
    rows = []
    for s, m in centre.items():
        for i in range(sizes[s]):
            rows.append((f"{s}{i + 1}", s, f"{rng.gauss(m, 1.6):.1f}"))
    with open("pilot-bolts/bolts.csv", "w", newline="") as f:
        f.write("bolt,supplier,strength_kN\n")
        for r in rows:
            f.write(",".join(r) + "\n")

def cream_trial():
    # A three-arm trial of a skin cream (vehicle, 0.5%, 1%) at two sites, 10 patients per
    # arm and site, with three endpoints on day 14: itch (0-10, half points), redness
    # (0-4 grade) and nights of disturbed sleep in the last week (0-7). Heavily tied.
    rng = random.Random(1414)
    arms = {"vehicle": 0.0, "cream 0.5%": 0.8, "cream 1%": 1.4}
    rows = []
    for site in ("north", "south"):
        for arm, d in arms.items():
            for i in range(10):
                itch = min(10.0, max(0.0, round((6.0 - 1.6 * d + rng.gauss(0, 1.5)) * 2) / 2))
                redness = min(4, max(0, round(2.4 - 1.0 * d + rng.gauss(0, 0.9))))
                sleep = min(7, max(0, round(3.0 - 0.35 * d + rng.gauss(0, 1.8))))
                rows.append((f"{site[0].upper()}{len(rows) + 1:03d}", site, arm, f"{itch:g}", str(redness), str(sleep)))
    rows[23] = rows[23][:4] + ("NA",) + rows[23][5:]  # a redness grade not recorded
    with open("cream-trial/patients.csv", "w", newline="") as f:
        f.write("patient,site,arm,itch_day14,redness_day14,sleep_nights_day14\n")
        for r in rows:
            f.write(",".join(r) + "\n")

dissolution()
symptom_scores()
pilot()
cream_trial()
