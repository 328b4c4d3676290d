#!/usr/bin/env python3
"""Writes the invented inhibitor-screen demo plate (standard library only, fixed seed).

Everything here is made up: no instrument, lab or real compound produced it. A 96-well plate
of the invented esterase (see README.md) read at 405 nm every 30 s for 10 min; column 1
holds the full-activity controls (enzyme, no compound), column 12 the no-activity controls
(no enzyme), columns 2-11 one invented compound each at 10 uM. Each well's true activity is
in the map's `true_activity_pct` column so the normalised activity can be checked by eye.

    python3 make_screen_demo.py   # writes screen_wide.csv and screen_map.csv here
"""
import random

random.seed(17)
V_FULL = 0.020      # AU/min, uninhibited
V_NONE = 0.0004     # AU/min, spontaneous hydrolysis without enzyme
NOISE = 0.0008      # AU read noise
WELL_CV = 0.04      # well-to-well (pipetting) variation of the rate
ACTIVES = {"B4": 10, "C7": 25, "E3": 45, "F9": 60, "G5": 80}  # true % activity of the invented hits

rows = "ABCDEFGH"
wells = [f"{r}{c}" for r in rows for c in range(1, 13)]
true_pct, rate = {}, {}
for w in wells:
    col = int(w[1:])
    if col == 1:
        pct = 100.0
    elif col == 12:
        pct = 0.0
    else:
        pct = ACTIVES.get(w, random.uniform(92, 104))
    true_pct[w] = pct
    v = V_NONE + (V_FULL - V_NONE) * pct / 100
    rate[w] = v * random.gauss(1, WELL_CV) if col != 12 else V_NONE * random.gauss(1, 0.25)

with open("screen_map.csv", "w") as f:
    f.write("# vzero screening demo plate map (invented, see make_screen_demo.py)\n")
    f.write("well,role,compound,true_activity_pct\n")
    for w in wells:
        col = int(w[1:])
        if col == 1:
            f.write(f"{w},full-activity,,100\n")
        elif col == 12:
            f.write(f"{w},no-activity,,0\n")
        else:
            f.write(f"{w},sample,CPD-{w[0]}{col:02d},{true_pct[w]:.1f}\n")

with open("screen_wide.csv", "w") as f:
    f.write("Time [s]," + ",".join(wells) + "\n")
    for k in range(21):
        t = 30 * k
        f.write(str(t) + "," + ",".join(f"{0.05 + rate[w] * t / 60 + random.gauss(0, NOISE):.4f}" for w in wells) + "\n")
