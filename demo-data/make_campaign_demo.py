#!/usr/bin/env python3
"""Writes the invented 384-well screening campaign of the demo (standard library only, fixed seed).

Everything here is made up: no instrument, lab, library or real compound produced it. The
invented esterase of README.md is read at 405 nm every 30 s for 10 min on 384-well plates
(rows A-P, columns 1-24). Columns 1-2 hold the full-activity controls (enzyme, no compound),
columns 23-24 the no-activity controls (no enzyme).

Primary screen, three plates read over an invented morning (`Run started` in each export):
columns 3-22 hold one compound each at 10 uM. The map names a compound by its position
(`pos-C03`), the same on every plate (in this demo a compound is its plate and position).
About 1 % of the wells are invented inhibitors (`true_activity_pct` in the map, per plate in
the files' comments); the enzyme stock loses activity over the morning (plates at 100, 94 and
87 % of the first plate's rate), which the report's campaign section shows as control drift.

Dose-response plate: each row A-P is one invented compound (DR-01 ... DR-16) at ten
concentrations, 3-fold from 100 uM down (columns 3-4 the highest, 21-22 the lowest, in
duplicate). Activity follows the four-parameter logistic with bottom 0, top 100 and the
invented IC50 and Hill slope listed in doseresp384_truth.csv; DR-16 is inactive.

    python3 make_campaign_demo.py   # writes the files here
"""
import math
import random

random.seed(2026)
V_FULL = 0.020      # AU/min, uninhibited
V_NONE = 0.0004     # AU/min, spontaneous hydrolysis without enzyme
NOISE = 0.0008      # AU read noise
WELL_CV = 0.04      # well-to-well (pipetting) variation of the rate
ROWS = "ABCDEFGHIJKLMNOP"
WELLS = [f"{r}{c}" for r in ROWS for c in range(1, 25)]
STARTS = ["2026-11-20 08:40", "2026-11-20 10:05", "2026-11-20 11:30"]
ENZYME_LEFT = [1.00, 0.94, 0.87]


def role(col):
    return "full-activity" if col <= 2 else "no-activity" if col >= 23 else "sample"


def rate(pct, col, enzyme):
    if col >= 23:
        return V_NONE * random.gauss(1, 0.25)
    return (V_NONE + (V_FULL - V_NONE) * enzyme * pct / 100) * random.gauss(1, WELL_CV)


def write_export(path, title, start, rates):
    with open(path, "w") as f:
        f.write(f"# vzero demo data (invented): {title}\n")
        f.write("Operator: demo\n")
        f.write(f"Run started: {start}\n\n")
        f.write("Time [s]," + ",".join(WELLS) + "\n")
        for k in range(21):
            t = 30 * k
            f.write(str(t) + "," + ",".join(f"{0.05 + rates[w] * t / 60 + random.gauss(0, NOISE):.4f}" for w in WELLS) + "\n")


# Primary screen: the same map for all three plates; actives drawn per plate.
with open("screen384_map.csv", "w") as f:
    f.write("# vzero screening campaign map (invented, see make_campaign_demo.py)\n")
    f.write("well,role,compound,compound_uM\n")
    for w in WELLS:
        col = int(w[1:])
        f.write(f"{w},{role(col)},{'pos-' + w[0] + format(col, '02d') if role(col) == 'sample' else ''},"
                f"{'10' if role(col) == 'sample' else ''}\n")

for p in range(3):
    samples = [w for w in WELLS if role(int(w[1:])) == "sample"]
    actives = {w: random.choice([5, 15, 30, 45, 70]) for w in random.sample(samples, 3)}
    rates = {}
    for w in WELLS:
        col = int(w[1:])
        pct = 100.0 if col <= 2 else actives.get(w, random.uniform(90, 106))
        rates[w] = rate(pct, col, ENZYME_LEFT[p])
    listed = ", ".join(f"{w} {a} %" for w, a in sorted(actives.items()))
    write_export(f"screen384_plate{p + 1}.csv",
                 f"screening plate {p + 1} of 3, 405 nm; invented inhibitors (true % activity): {listed}",
                 STARTS[p], rates)

# Dose-response plate.
conc = [100 / 3 ** k for k in range(10)]
truth = []
for i, r in enumerate(ROWS):
    ic50 = 10 ** random.uniform(-2, 1.3) if i < 15 else math.inf
    hill = random.uniform(0.8, 1.5)
    truth.append((f"DR-{i + 1:02d}", ic50, hill))
with open("doseresp384_truth.csv", "w") as f:
    f.write("# invented truth of the dose-response demo plate (see make_campaign_demo.py)\n")
    f.write("compound,ic50_uM,hill\n")
    for name, ic50, hill in truth:
        f.write(f"{name},{'inactive' if math.isinf(ic50) else format(ic50, '.4g')},{hill:.3f}\n")
with open("doseresp384_map.csv", "w") as f:
    f.write("# vzero dose-response demo map (invented, see make_campaign_demo.py)\n")
    f.write("well,role,compound,compound_uM\n")
    for w in WELLS:
        col = int(w[1:])
        if role(col) != "sample":
            f.write(f"{w},{role(col)},,\n")
        else:
            f.write(f"{w},sample,{truth[ROWS.index(w[0])][0]},{conc[(col - 3) // 2]:.6g}\n")
rates = {}
for w in WELLS:
    col = int(w[1:])
    pct = 100.0
    if role(col) == "sample":
        _, ic50, hill = truth[ROWS.index(w[0])]
        x = conc[(col - 3) // 2]
        pct = 100 / (1 + (x / ic50) ** hill)  # x / inf = 0: the inactive compound keeps 100 %
    rates[w] = rate(pct, col, 1.0)
write_export("doseresp384.csv", "dose-response plate, 16 compounds x 10 concentrations in duplicate, 405 nm",
             "2026-11-20 13:10", rates)
