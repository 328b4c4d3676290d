#!/usr/bin/env python3
"""Writes the invented vzero demo plate in every input shape (run from demo-data/).

The scenario is made up for the demo: a hypothetical esterase ("EstD", not a real
enzyme) hydrolyses a p-nitrophenyl ester; the plate reader follows p-nitrophenolate at
405 nm every 10 s for 10 min, 200 uL per well (about 0.5 cm path), 25 C. Eight substrate
concentrations in triplicate, without and with 50 uM of an invented competitive inhibitor,
substrate-only blanks per concentration (the ester hydrolyses on its own), buffer blanks,
one over-concentrated enzyme well that saturates the detector, and one well with a
bubble spike. Progress curves follow the integrated Michaelis-Menten equation, solved by
Newton's method, with fixed-seed noise. Standard library only; output is deterministic.
"""
import math
import random

VMAX_UM_MIN = 12.0     # invented
KM_UM = 150.0          # invented
KI_UM = 40.0           # invented, competitive
INHIBITOR_UM = 50.0
EPS_L_PER_UM = 18000 * 0.5 * 1e-6   # AU per uM: epsilon 18000 /M/cm (literature range), 0.5 cm
SPONT_PER_MIN = 0.0005             # spontaneous hydrolysis, fraction of S0 per min (invented)
BASE_AU = 0.045
NOISE_AU = 0.0008
CEILING_AU = 3.5
SERIES_UM = [10, 20, 40, 80, 160, 320, 640, 1280]
TIMES_S = [10 * i for i in range(61)]
ROWS = "ABCDEFGH"


def product_um(t_min, s0, vmax, km):
    """P(t) from t = (P + Km ln(S0/(S0-P)))/Vmax, by Newton's method."""
    if t_min <= 0:
        return 0.0
    p = min(vmax * t_min, 0.5 * s0)
    for _ in range(100):
        f = p + km * math.log(s0 / (s0 - p)) - vmax * t_min
        df = 1 + km / (s0 - p)
        step = f / df
        p_new = p - step
        if p_new >= s0:
            p_new = 0.5 * (p + s0)
        if p_new < 0:
            p_new = 0.5 * p
        if abs(p_new - p) < 1e-13:
            p = p_new
            break
        p = p_new
    return p


def plate_layout():
    """well -> dict(role, substrate_uM, inhibitor_uM, enzyme_nM, match, group)."""
    m = {}
    for ci, s in enumerate(SERIES_UM):
        col = ci + 1
        for r in "ABC":
            m[f"{r}{col}"] = dict(role="sample", substrate=s, inhibitor=0, enzyme=5, match=f"S{s}", group="no-inhibitor")
        m[f"D{col}"] = dict(role="blank", substrate=s, inhibitor=0, enzyme=0, match=f"S{s}", group="substrate-only")
        for r in "EFG":
            m[f"{r}{col}"] = dict(role="sample", substrate=s, inhibitor=INHIBITOR_UM, enzyme=5, match=f"S{s}", group="inhibitor")
    for col in range(1, 5):
        m[f"H{col}"] = dict(role="blank", substrate=0, inhibitor=0, enzyme=0, match="buffer", group="buffer")
    m["A12"] = dict(role="sample", substrate=1280, inhibitor=0, enzyme=50, match="S1280", group="enzyme-10x")
    return m


def simulate():
    rng = random.Random(20261130)
    layout = plate_layout()
    wells = [f"{r}{c}" for r in ROWS for c in range(1, 13)]
    data = {}
    for w in wells:
        info = layout.get(w)
        offset = rng.uniform(-0.003, 0.003)
        trace = []
        for i, t in enumerate(TIMES_S):
            a = BASE_AU + offset
            if info:
                s0 = info["substrate"]
                if s0 > 0:
                    a += EPS_L_PER_UM * SPONT_PER_MIN * s0 * t / 60
                if info["enzyme"] > 0:
                    km = KM_UM * (1 + info["inhibitor"] / KI_UM)
                    vmax = VMAX_UM_MIN * info["enzyme"] / 5
                    a += EPS_L_PER_UM * product_um(t / 60, s0, vmax, km)
            a += rng.gauss(0, NOISE_AU)
            if w == "B5" and i == 12:
                a += 0.25  # a bubble
            trace.append(a)
        data[w] = trace
    return wells, data, layout


def cell(a, decimal="."):
    if a >= CEILING_AU:
        return "OVER"
    text = f"{a:.4f}"
    return text.replace(".", decimal)


def temperature(i):
    return 25.0 + (0.1 if i % 4 == 1 else 0.0) - (0.1 if i % 4 == 3 else 0.0)


HEADER_NOTE = "# vzero demo data (invented): hypothetical esterase EstD, p-nitrophenyl ester series, 405 nm"


def write_wide(wells, data, path, delim=",", decimal="."):
    with open(path, "w", newline="\n") as f:
        f.write(HEADER_NOTE + "\n")
        f.write("Operator: demo\nPlate ID: DEMO-0001\nRun started: 2026-11-30 10:15\n\n")
        f.write("Channel: A405\n")
        f.write(delim.join(["Time [s]", "Temp [C]"] + wells) + "\n")
        for i, t in enumerate(TIMES_S):
            temp = f"{temperature(i):.1f}".replace(".", decimal)
            f.write(delim.join([str(t), temp] + [cell(data[w][i], decimal) for w in wells]) + "\n")


def clock(t):
    return f"{t // 3600}:{(t // 60) % 60:02d}:{t % 60:02d}"


def write_grid(wells, data, path):
    with open(path, "w", newline="\n") as f:
        f.write(HEADER_NOTE + "\n")
        f.write("Operator: demo\nPlate ID: DEMO-0001\nRun started: 2026-11-30 10:15\n\n")
        f.write("Channel: A405\n")
        for i, t in enumerate(TIMES_S):
            f.write(f"Read {i + 1} at {clock(t)} ({temperature(i):.1f} C)\n")
            f.write("\t" + "\t".join(str(c) for c in range(1, 13)) + "\n")
            for r in ROWS:
                f.write(r + "\t" + "\t".join(cell(data[f"{r}{c}"][i]) for c in range(1, 13)) + "\n")
            f.write("\n")


def write_long(wells, data, path):
    with open(path, "w", newline="\n") as f:
        f.write(HEADER_NOTE + "\n")
        f.write("well,channel,time_s,temperature_c,value\n")
        for w in wells:
            for i, t in enumerate(TIMES_S):
                f.write(f"{w},A405,{t},{temperature(i):.1f},{cell(data[w][i])}\n")


def write_maps(layout, tidy_path, grid_path):
    wells = [f"{r}{c}" for r in ROWS for c in range(1, 13)]
    with open(tidy_path, "w", newline="\n") as f:
        f.write("# vzero demo plate map (invented scenario, see README.md)\n")
        f.write("well,role,substrate,match,group,inhibitor_uM,enzyme_nM\n")
        for w in wells:
            if w in layout:
                i = layout[w]
                f.write(f"{w},{i['role']},{i['substrate']},{i['match']},{i['group']},{i['inhibitor']:g},{i['enzyme']}\n")
    cols = ["role", "substrate", "match", "group", "inhibitor_uM", "enzyme_nM"]
    keys = ["role", "substrate", "match", "group", "inhibitor", "enzyme"]
    with open(grid_path, "w", newline="\n") as f:
        f.write("# vzero demo plate map in plate-grid form (same content as hydrolase_map.csv)\n")
        for name, key in zip(cols, keys):
            f.write(name + "\n")
            f.write("," + ",".join(str(c) for c in range(1, 13)) + "\n")
            for r in ROWS:
                vals = []
                for c in range(1, 13):
                    i = layout.get(f"{r}{c}")
                    if i is None:
                        vals.append("")
                    else:
                        v = i[key]
                        vals.append(f"{v:g}" if isinstance(v, float) else str(v))
                f.write(r + "," + ",".join(vals) + "\n")
            f.write("\n")


def write_wide_water_peak(wells, data, path):
    """The A405 plate followed by a water-band pair read once at the end (for --water-peak).

    Fill volumes scatter around 200 uL, so the path lengths scatter around 0.5 cm; water
    absorbs 0.18 AU per cm more at 977 nm than at 900 nm (common practice value).
    """
    rng = random.Random(977900)
    write_wide(wells, data, path)
    with open(path, "a", newline="\n") as f:
        for name in ("A977", "A900"):
            f.write(f"\nChannel: {name}\n")
            f.write(",".join(["Time [s]"] + wells) + "\n")
            cells = []
            for w in wells:
                path_cm = 0.5 * (1 + rng.uniform(-0.04, 0.04))
                base = 0.040 + rng.uniform(-0.002, 0.002)
                cells.append(f"{base + (0.18 * path_cm if name == 'A977' else 0):.4f}")
            f.write(",".join(["610"] + cells) + "\n")


# A second invented scenario: a hypothetical protease ("PrtD") cuts a peptide releasing an
# aminocoumarin-type fluorophore (ex 360 / em 460 nm); free fluorophore standards calibrate it.
FL_VMAX, FL_KM = 2.0, 40.0           # uM/min and uM, invented
FL_BASE, FL_PER_UM = 120.0, 850.0    # RFU and RFU per uM, invented
FL_SERIES = [5, 10, 20, 40, 80, 160, 320, 640]
FL_STANDARDS = [0, 1, 2, 5, 10, 20, 50, 100]


def write_fluorescence(path, map_path):
    rng = random.Random(360460)
    wells = [f"{r}{c}" for r in ROWS for c in range(1, 13)]
    layout = {}
    for ci, conc in enumerate(FL_STANDARDS):
        for r in "AB":
            layout[f"{r}{ci + 1}"] = dict(role="standard", std=conc, substrate="", match="", group="standard")
    for ci, s0 in enumerate(FL_SERIES):
        for r in "CDE":
            layout[f"{r}{ci + 1}"] = dict(role="sample", std="", substrate=s0, match=f"S{s0}", group="protease")
        layout[f"F{ci + 1}"] = dict(role="blank", std="", substrate=s0, match=f"S{s0}", group="substrate-only")
    times = [20 * i for i in range(31)]
    with open(path, "w", newline="\n") as f:
        f.write("# vzero demo data (invented): hypothetical protease PrtD, fluorogenic peptide, ex360/em460\n")
        f.write("Operator: demo\nPlate ID: DEMO-0002\n\nChannel: ex360/em460\n")
        f.write(",".join(["Time [s]"] + wells) + "\n")
        rows = {w: [] for w in wells}
        for w in wells:
            info = layout.get(w)
            for t in times:
                v = FL_BASE + rng.gauss(0, 12)
                if info and info["role"] == "standard":
                    v += FL_PER_UM * info["std"]
                elif info and info["substrate"] != "":
                    s0 = info["substrate"]
                    v += 2.0 * s0 * 0.0004 * t / 60 * FL_PER_UM  # substrate autofluorescence drift, invented
                    if info["role"] == "sample":
                        v += FL_PER_UM * product_um(t / 60, s0, FL_VMAX, FL_KM)
                rows[w].append(v)
        for i, t in enumerate(times):
            f.write(",".join([str(t)] + [f"{rows[w][i]:.1f}" for w in wells]) + "\n")
    with open(map_path, "w", newline="\n") as f:
        f.write("# vzero demo plate map for protease_fluor_wide.csv (invented scenario, see README.md)\n")
        f.write("well,role,standard_conc,substrate,match,group\n")
        for w in wells:
            if w in layout:
                i = layout[w]
                f.write(f"{w},{i['role']},{i['std']},{i['substrate']},{i['match']},{i['group']}\n")


if __name__ == "__main__":
    wells, data, layout = simulate()
    write_wide(wells, data, "hydrolase_wide.csv")
    write_wide(wells, data, "hydrolase_wide_semicolon.csv", delim=";", decimal=",")
    write_grid(wells, data, "hydrolase_grid.txt")
    write_long(wells, data, "hydrolase_long.csv")
    write_maps(layout, "hydrolase_map.csv", "hydrolase_map_grid.csv")
    write_wide_water_peak(wells, data, "hydrolase_wide_waterpeak.csv")
    write_fluorescence("protease_fluor_wide.csv", "protease_fluor_map.csv")
