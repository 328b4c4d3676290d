#!/usr/bin/env python3
"""Yardstick for the vzero benchmark: the quickest thing a scientist might script.

For each wide export (header row "Time [s],Temp [C],A1,..."): read it with pandas, subtract
the plate blank (mean of the plate map's blank wells, read by read), and take the
least-squares slope of the first 10 reads of every well, vectorised over wells with numpy.
No window search, no outlier handling, no checks: a naive rate, used only to compare speed
(tests/bench/run.sh runs it beside `vzero rates` on the same files). Not a dependency of
vzero; needs Debian's python3-pandas.

usage: naive_pandas.py --layout MAP.csv -o OUT.csv FILE...
"""
import argparse

import numpy as np
import pandas as pd


def header_line(path):
    with open(path, encoding="utf-8") as f:
        for i, line in enumerate(f):
            if line.lower().startswith("time"):
                return i
    raise SystemExit(f"{path}: no header line starting with 'Time'")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--layout", required=True)
    ap.add_argument("-o", "--output", required=True)
    ap.add_argument("files", nargs="+")
    a = ap.parse_args()
    plate_map = pd.read_csv(a.layout, comment="#")
    blanks = plate_map.loc[plate_map["role"] == "blank", "well"].tolist()
    out = []
    for path in a.files:
        df = pd.read_csv(path, skiprows=header_line(path), na_values=["OVER", "NA"])
        t = df.iloc[:10, 0].to_numpy(dtype=float)
        wells = [c for c in df.columns[2:]]
        y = df.iloc[:10][wells].to_numpy(dtype=float)
        blank = np.nanmean(df.iloc[:10][blanks].to_numpy(dtype=float), axis=1)
        y = y - blank[:, None]
        tc = t - t.mean()
        slope = (tc[:, None] * (y - y.mean(axis=0))).sum(axis=0) / (tc * tc).sum()
        out.append(pd.DataFrame({"source": path, "well": wells, "slope_per_min": slope * 60}))
    pd.concat(out).to_csv(a.output, index=False)


if __name__ == "__main__":
    main()
