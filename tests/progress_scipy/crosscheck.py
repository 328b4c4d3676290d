#!/usr/bin/env python3
"""Cross-check of `vzero progress` with a general-purpose fitter (not run by CI).

SciPy's least_squares (Debian's python3-scipy) fits the same reads vzero used (its
--residuals table: well, s0, time_s, product) with the rate law integrated numerically
(solve_ivp, DOP853, rtol 1e-11) instead of the Lambert W closed form, and finite-difference
Jacobians instead of analytic ones: shared Km and Vmax, one offset per well, lead 0.
It prints both fits' Km and Vmax with their model-based standard errors (s²(JᵀJ)⁻¹) and, with
RATES.csv, their cluster-robust ones written out in numpy from the formulas (no statistics
package), the clusters g the wells that subtract the same blank wells (the blank_wells
column; single wells when fewer than 5 such sets), J SciPy's finite-difference Jacobian at
its optimum: CR1, B·M·B·G/(G−1)·(N−1)/(N−p), B = (JᵀJ)⁻¹, M = Σ_g (J_gᵀr_g)(J_gᵀr_g)ᵀ; and
CR3, the one vzero prints, with the offsets partialled out by the full-rank projection
instead of vzero's within-well means: X = (I − P_off)·J_shared, A = (XᵀX)⁻¹,
ũ_g = (I − X_g·A·X_gᵀ)⁻¹·r_g by a direct solve, A·Σ_g (X_gᵀũ_g)(X_gᵀũ_g)ᵀ·A·(G−1)/G.

usage: /usr/bin/python3 crosscheck.py RESIDUALS.csv PROGRESS.csv GROUP [RATES.csv]
  (from: vzero progress rates.csv --traces traces.csv --x substrate --group group
          --lead 0 -o PROGRESS.csv --residuals RESIDUALS.csv   on the demo run; GROUP e.g. no-inhibitor)
"""
import csv
import sys

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import least_squares


def read_wells(path, group):
    wells = {}
    with open(path, newline="") as f:
        for row in csv.DictReader(f):
            if row["group"] != group or row["model"] != "mm":
                continue
            w = wells.setdefault(row["well"], {"s0": float(row["s0"]), "t": [], "p": []})
            w["t"].append(float(row["time_s"]) / 60.0)
            w["p"].append(float(row["product"]))
    return wells


def cr1(jac, r, cluster_of_row):
    """CR1 cluster-robust covariance (Cameron & Miller 2015), from the formula."""
    n, p = jac.shape
    ids = sorted(set(cluster_of_row))
    g = len(ids)
    meat = np.zeros((p, p))
    for c in ids:
        rows = np.array([k == c for k in cluster_of_row])
        score = jac[rows].T @ r[rows]
        meat += np.outer(score, score)
    bread = np.linalg.inv(jac.T @ jac)
    return g / (g - 1) * (n - 1) / (n - p) * bread @ meat @ bread, g


def cr3(jac, r, cluster_of_row, shared):
    """CR3 of the shared parameters, the offset columns partialled out by projection."""
    off = jac[:, shared:]
    x = jac[:, :shared] - off @ np.linalg.lstsq(off, jac[:, :shared], rcond=None)[0]
    a = np.linalg.inv(x.T @ x)
    ids = sorted(set(cluster_of_row))
    meat = np.zeros((shared, shared))
    for c in ids:
        rows = np.array([k == c for k in cluster_of_row])
        xg = x[rows]
        u = np.linalg.solve(np.eye(xg.shape[0]) - xg @ a @ xg.T, r[rows])
        score = xg.T @ u
        meat += np.outer(score, score)
    g = len(ids)
    return (g - 1) / g * a @ meat @ a


def clusters_of(rates_path, names):
    with open(rates_path, newline="") as f:
        blank = {r["well"]: r["blank_wells"] for r in csv.DictReader(f)}
    sets = {blank[n] for n in names}
    if len(sets) >= 5 and len(sets) < len(names):
        return [blank[n] for n in names], "blank sets"
    return list(names), "wells"


def product(t_min, s0, km, vmax):
    t_end = max(t_min)
    sol = solve_ivp(lambda t, s: -vmax * s / (km + s), (0.0, t_end), [s0], method="DOP853",
                    t_eval=t_min, rtol=1e-11, atol=1e-12 * s0)
    return s0 - sol.y[0]


def main():
    residuals, progress, group = sys.argv[1:4]
    rates = sys.argv[4] if len(sys.argv) > 4 else None
    wells = read_wells(residuals, group)
    names = sorted(wells)

    def resid(theta):
        km, vmax = np.exp(theta[0]), np.exp(theta[1])
        out = []
        for k, n in enumerate(names):
            w = wells[n]
            out.append(product(w["t"], w["s0"], km, vmax) + theta[2 + k] - np.array(w["p"]))
        return np.concatenate(out)

    start = np.concatenate([[np.log(100.0), np.log(10.0)], [wells[n]["p"][0] for n in names]])
    fit = least_squares(resid, start, method="lm", xtol=1e-13, ftol=1e-13)
    n, p = fit.fun.size, fit.x.size
    s2 = fit.fun @ fit.fun / (n - p)
    cov = s2 * np.linalg.inv(fit.jac.T @ fit.jac)
    km, vmax = np.exp(fit.x[0]), np.exp(fit.x[1])
    print(f"group {group}: {len(names)} wells, {n} reads")
    print(f"scipy  Km {km:.6g} se {km * np.sqrt(cov[0, 0]):.4g}   Vmax {vmax:.6g} se {vmax * np.sqrt(cov[1, 1]):.4g}"
          f"   residual SD {np.sqrt(s2):.6g}")
    if rates:
        of_well, by = clusters_of(rates, names)
        of_row = [of_well[k] for k, n in enumerate(names) for _ in wells[n]["t"]]
        cov_c, g = cr1(fit.jac, fit.fun, of_row)
        print(f"scipy  CR1 over {g} {by}: Km se {km * np.sqrt(cov_c[0, 0]):.4g}   Vmax se {vmax * np.sqrt(cov_c[1, 1]):.4g}")
        cov_3 = cr3(fit.jac, fit.fun, of_row, 2)
        print(f"scipy  CR3 over {g} {by}: Km se {km * np.sqrt(cov_3[0, 0]):.4g}   Vmax se {vmax * np.sqrt(cov_3[1, 1]):.4g}")
    with open(progress, newline="") as f:
        rows = [r for r in csv.DictReader(f)
                if r["group"] == group and r["method"] == "progress" and r["model"] == "mm"]
    est = {r["parameter"]: r for r in rows if r["parameter"] in ("Km", "Vmax")}
    print(f"vzero  Km {float(est['Km']['estimate']):.6g} se {float(est['Km']['se_model']):.4g}   "
          f"Vmax {float(est['Vmax']['estimate']):.6g} se {float(est['Vmax']['se_model']):.4g}"
          f"   residual SD {float(est['Km']['residual_sd']):.6g}")
    if rates:
        print(f"vzero  cluster SE over {est['Km']['clusters']} clusters: Km se {float(est['Km']['se_cluster']):.4g}   "
              f"Vmax se {float(est['Vmax']['se_cluster']):.4g}")


if __name__ == "__main__":
    main()
