#!/usr/bin/python3
"""Independent computation, with Debian's python3-netcdf4, python3-numpy
and python3-scipy (no swellgrid code), of what a run on the three files of
make_fixtures.py must give, each file's spectra integrated on that file's
own frequencies and directions. Writes reference.json, which
pipelines/engine/spectral_axes_e2e_test.go compares with a run.

Per step (definitions as in testdata/spectral_cols/reference.py, whose
helpers are used: widths by numpy.gradient of the sorted frequencies and
half the circular gaps of the directions, Tp by a parabola through the
largest bin and its neighbours, the directional maximum by grid search
refined by scipy's bounded Brent, group velocity from omega^2 =
g k tanh(k h) by scipy.optimize.brentq; DESIGN.md "Computation", IEC TS
62600-101, DNV-RP-C205 sec. 3.5, quoted from memory):
  m_n = sum_ij f_i^n S_ij df_i dtheta_j; Hm0 = 4 sqrt(m0); Te = m_-1/m0;
  eps0 = sqrt(m0 m_-2 / m_-1^2 - 1); J = rho g sum_ij cg(f_i, h) S_ij df_i
  dtheta_j (rho 1025 kg/m3, g 9.81 m/s2); mean direction atan2(sum_j
  sin(theta_j) V_j, sum_j cos(theta_j) V_j), V_j = sum_i S_ij df_i dtheta_j
  (first-order moments, common practice);
each on the bins of the step's file. Record columns per station (all steps
one day long, so equal weights): the means of Hm0, Te, Tp, eps0 and J,
directionality sum(J d)/sum(J), dir_max_power_deg the J-weighted circular
mean of the direction of maximum directional power, dir_mean_deg_q01 the
circular mean of the steps' mean directions rounded to 0.1 degree (as
swellgrid's state keeps them). monthly: per year-month the mean Hm0 and J
(kW/m). directions: the 16 sectors' power and occurrence by
testdata/directions/reference.py's split_matrix and rows (each file's bins
split over the fixed sectors by arc overlap). continuity: station 2 (the same
sea at every step) per month, and the largest relative difference between
months of its Hm0, Te and J (sampling the one sea on other bins).
Run: /usr/bin/python3 testdata/spectral_axes/reference.py [OUT.json]
"""
import importlib.util
import json
import math
import os
import sys

import netCDF4
import numpy as np
import scipy

HERE = os.path.dirname(os.path.abspath(__file__))
RHO, G = 1025.0, 9.81
FILES = ["axes_2031-01", "axes_2031-02", "axes_2031-03"]


def load(name, rel):
    spec = importlib.util.spec_from_file_location(name, os.path.join(HERE, "..", rel))
    m = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(m)
    return m


colsref = load("colsref", "spectral_cols/reference.py")
dirref = load("dirref", "directions/reference.py")


def steps(f, d, h, S):
    """Per-step values of one station on one file's bins; S: (t, f, theta)."""
    df, dth = colsref.widths(f, d)
    E = np.einsum("tij,j->ti", S, dth)
    m = {n: E @ (f ** n * df) for n in (-2, -1, 0)}
    assert np.all(m[0] > 0)
    cg = np.array([colsref.group_velocity(x, h) for x in f])
    A = RHO * G * np.einsum("tij,i,j->tj", S, cg * df, dth)  # W/m from each direction bin
    J = A.sum(axis=1)
    th = np.radians(d)
    best = [colsref.max_directional_power(a, th) for a in A]
    V = np.einsum("tij,i,j->tj", S, df, dth)
    mdir = np.degrees(np.arctan2(V @ np.sin(th), V @ np.cos(th))) % 360
    return {"hm0": 4 * np.sqrt(m[0]), "te": m[-1] / m[0], "eps0": np.sqrt(np.maximum(m[0] * m[-2] / m[-1] ** 2 - 1, 0)),
            "tp": np.array([colsref.peak_period(f, e) for e in E]), "J": J,
            "jmax": np.array([b[0] for b in best]), "dmax": np.array([b[1] for b in best]), "mdir": mdir,
            "P": A @ dirref.split_matrix(d)}


def main():
    per = []  # per file: (month, per-station step values)
    for name in FILES:
        with netCDF4.Dataset(os.path.join(HERE, name + ".nc")) as ds:
            f = ds["frequency"][:].astype(float)
            d = ds["direction"][:].astype(float) % 360
            S = ds["efth"][:].astype(float)
            depth = ds["depth"][:].astype(float)
            month = int(name[-2:])
        per.append((month, [steps(f, d, float(depth[s]), S[:, s]) for s in range(S.shape[1])]))
    ns = len(per[0][1])
    ref = {"source": "testdata/spectral_axes/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "cells": [], "monthly": [], "directions": [], "continuity": {}}
    for s in range(ns):
        v = {k: np.concatenate([p[1][s][k] for p in per]) for k in per[0][1][s]}
        J = v["J"]
        q = (np.floor(v["mdir"] * 10 + 0.5) / 10) % 360
        ref["cells"].append({"cell_id": s, "hm0_mean_m": float(v["hm0"].mean()), "te_mean_s": float(v["te"].mean()),
                             "tp_mean_s": float(v["tp"].mean()), "width_mean": float(v["eps0"].mean()),
                             "power_mean_kw_m": float(J.mean() / 1000),
                             "directionality": float(np.sum(J * np.minimum(v["jmax"] / J, 1.0)) / np.sum(J)),
                             "dir_max_power_deg": colsref.circ_deg(J, v["dmax"]),
                             "dir_mean_deg_q01": colsref.circ_deg(np.ones_like(q), q), "bad_bins": 0})
        for month, st in per:
            ref["monthly"].append({"cell_id": s, "year": 2031, "month": month, "hm0_mean_m": float(st[s]["hm0"].mean()),
                                   "te_mean_s": float(st[s]["te"].mean()), "power_mean_kw_m": float(st[s]["J"].mean() / 1000)})
        occ = [dirref.sector_of(x) for x in v["mdir"]]
        ref["directions"] += dirref.rows(s, v["P"], occ, len(J), 24.0)
    c = [r for r in ref["monthly"] if r["cell_id"] == 2]
    for k in ("hm0_mean_m", "te_mean_s", "power_mean_kw_m"):
        x = np.array([r[k] for r in c])
        ref["continuity"][k] = float((x.max() - x.min()) / x.mean())
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as fh:
        json.dump(ref, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
