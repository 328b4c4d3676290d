#!/usr/bin/env python3
"""Second yardstick for the vzero benchmark: a vectorised numpy Theil-Sen slope.

The same job as naive_pandas.py (read each wide export with pandas, subtract the plate
blank read by read, take the first 10 reads of every well), but the slope is Theil-Sen's:
the median of the slopes of all 45 pairs of reads, formed and reduced for all wells at once
with numpy (pairs with a missing read are left out: nanmedian). The slope only, no Sen
interval, no window search, no outlier handling, no checks: used only to compare speed
(tests/bench/run.sh runs it beside `vzero rates` on the same files). Not a dependency of
vzero; needs Debian's python3-pandas.

usage: numpy_theil_sen.py --layout MAP.csv -o OUT.csv FILE...
"""
import argparse

import numpy as np
import pandas as pd

READS = 10


def header_line(path):
    with open(path, encoding="utf-8") as f:
        for i, line in enumerate(f):
            if line.lower().startswith("time"):
                return i
    raise SystemExit(f"{path}: no header line starting with 'Time'")


def theil_sen(t, y):
    """Median pair slope of each column of y (reads x wells) against t."""
    i, j = np.triu_indices(len(t), k=1)
    slopes = (y[j] - y[i]) / (t[j] - t[i])[:, None]
    return np.nanmedian(slopes, axis=0)


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
        t = df.iloc[:READS, 0].to_numpy(dtype=float)
        wells = [c for c in df.columns[2:]]
        y = df.iloc[:READS][wells].to_numpy(dtype=float)
        blank = np.nanmean(df.iloc[:READS][blanks].to_numpy(dtype=float), axis=1)
        slope = theil_sen(t, y - blank[:, None])
        out.append(pd.DataFrame({"source": path, "well": wells, "slope_per_min": slope * 60}))
    pd.concat(out).to_csv(a.output, index=False)


if __name__ == "__main__":
    main()
