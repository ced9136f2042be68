#!/usr/bin/python3
"""Independent computation of the cells.parquet columns that a spectral run
fills (te_mean_s, tp_mean_s, width_mean, directionality, dir_max_power_deg,
with hm0_mean_m, power_mean_kw_m and dir_mean_deg alongside) with Debian's
python3-netcdf4, python3-numpy and python3-scipy; no swellgrid code. Writes
reference.json, which pipelines/engine/spectral_e2e_test.go compares with runs on
three spectral files written by python3-netcdf4 (invented, synthetic data):
  - ../directions/spectral_dirs.nc: 2-D, directions descending and offset by
    7.5 deg, depths 15 to 4000 m, station 3 with all energy in one direction;
  - ../spectral_badbins/spectral_badbins.nc: 2-D, two-peaked seas, missing,
    NaN, +Inf and negative bins and whole steps missing;
  - spectral_1d_cols.nc (make_fixture.py): 1-D, frequencies descending, end-bin
    peaks, a fill value, a negative bin and a step missing whole.

Per step (definitions: DESIGN.md "Computation", IEC TS 62600-101, DNV-RP-C205
sec. 3.5, quoted from memory):
  - a bin that is missing (fill value), NaN, infinite or negative counts as
    0; a spectrum with every bin missing is a missing step; a step is valid
    when m0 > 0;
  - df_i: numpy.gradient of the sorted frequencies (half the distance to the
    two neighbours, the one-sided distance at the ends); dtheta_j: half the
    two circular gaps to the neighbouring directions (radians);
  - E_i = sum_j S_ij dtheta_j (the 1-D spectrum as given for 1-D input),
    m_n = sum_i f_i^n E_i df_i, computed here by numpy.einsum;
  - Hm0 = 4 sqrt(m0), Te = m_-1 / m0, eps0 = sqrt(max(m0 m_-2 / m_-1^2 - 1, 0));
  - Tp = 1 / f at the vertex of the parabola through the largest E_i (lowest
    frequency on ties) and its two neighbours in frequency, fitted here with
    numpy.polyfit (degree 2, exact through 3 points), kept between the
    neighbours; 1 / f of the largest bin when it is an end bin (common
    practice);
  - J = rho g sum_ij cg(f_i, h) S_ij df_i dtheta_j, cg from omega^2 =
    g k tanh(k h) by scipy.optimize.brentq (testdata/e2e/reference.py's
    group_velocity), rho 1025 kg/m3, g 9.81 m/s2;
  - 2-D only: J(theta) = sum_j A_j max(cos(theta - theta_j), 0) with
    A_j = rho g sum_i cg_i S_ij df_i dtheta_j (IEC TS 62600-101 directionally
    resolved power); its maximum found by a 0.05 deg grid search over the
    circle, then scipy.optimize.minimize_scalar (bounded) within one grid
    step either side; directionality = J_theta,max / J, the direction of the
    maximum theta_max; mean direction atan2(sum_j sin(theta_j) V_j,
    sum_j cos(theta_j) V_j), V_j = sum_i S_ij df_i dtheta_j (first-order
    moments, Kuik et al. 1988, common practice).
Record columns per station, over the valid steps (all fixtures are regular
in time, so time weights are equal):
  te_mean_s, tp_mean_s, hm0_mean_m, width_mean: means of Te, Tp, Hm0, eps0;
  power_mean_kw_m: mean J / 1000;
  directionality: sum(J d) / sum(J) (power-weighted, as the schema states);
  dir_max_power_deg: atan2(sum J sin theta_max, sum J cos theta_max);
  dir_mean_deg: circular mean of the step mean directions (Mardia and Jupp
  2000, sec. 2.2), dir_resultant its mean resultant length R (the test's
  tolerance for dir_mean_deg grows as 1/R); the direction columns are null
  (None) for 1-D input.
Run: /usr/bin/python3 testdata/spectral_cols/reference.py [OUT.json]
"""
import importlib.util
import json
import math
import os
import sys

import netCDF4
import numpy as np
import scipy
from scipy import optimize

HERE = os.path.dirname(os.path.abspath(__file__))
RHO, G = 1025.0, 9.81
FIXTURES = [("spectral_dirs", "testdata/directions/spectral_dirs.nc"),
            ("spectral_badbins", "testdata/spectral_badbins/spectral_badbins.nc"),
            ("spectral_1d", "testdata/spectral_cols/spectral_1d_cols.nc")]
SPECTRA = ("sea_surface_wave_directional_variance_spectral_density", "sea_surface_wave_variance_spectral_density")

spec = importlib.util.spec_from_file_location("e2eref", os.path.join(HERE, "..", "e2e", "reference.py"))
e2eref = importlib.util.module_from_spec(spec)
spec.loader.exec_module(e2eref)
group_velocity = e2eref.group_velocity


def read(path):
    with netCDF4.Dataset(os.path.join(HERE, "..", "..", path)) as ds:
        var = [v for v in ds.variables.values() if getattr(v, "standard_name", "") in SPECTRA]
        assert len(var) == 1, path
        v = var[0]
        S = np.ma.filled(v[:].astype(float), np.nan)
        f = ds["frequency"][:].astype(float)
        d = ds["direction"][:].astype(float) % 360 if "direction" in ds.variables else None
        depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
        t = ds["time"][:].astype(float)
    assert np.unique(np.diff(t)).size == 1, path + ": not regular in time"
    if d is None:
        S = S[..., None]  # one direction slot of width 1
    return f, d, depth, S


def widths(f, d):
    order = np.argsort(f)
    df = np.empty_like(f)
    df[order] = np.gradient(f[order])
    if d is None:
        return df, np.ones(1)
    o = np.argsort(d)
    ds_ = d[o]
    dth = np.empty_like(d)
    dth[o] = np.radians(((np.roll(ds_, -1) - ds_) % 360 + (ds_ - np.roll(ds_, 1)) % 360) / 2)
    return df, dth


def peak_period(f, E):
    """Tp of one 1-D spectrum E(f) (frequencies in any order)."""
    o = np.argsort(f)
    x, y = f[o], E[o]
    b = int(np.argmax(y))  # first, i.e. lowest frequency, on ties
    if b == 0 or b == len(x) - 1:
        return 1 / x[b]
    xs, ys = x[b - 1:b + 2], y[b - 1:b + 2]
    if ys[0] == ys[1] == ys[2]:
        return 1 / xs[1]
    a2, a1, _ = np.polyfit(xs, ys, 2)
    v = min(max(-a1 / (2 * a2), xs[0]), xs[2])
    return 1 / v


def max_directional_power(A, th):
    """max over theta of sum_j A_j max(cos(theta - theta_j), 0) and its
    direction in degrees [0, 360): grid search, then bounded refinement."""
    step = math.radians(0.05)
    grid = np.arange(0, 2 * math.pi, step)
    c = np.cos(grid[:, None] - th[None, :])
    Jg = np.where(c > 0, c, 0) @ A
    g0 = grid[int(np.argmax(Jg))]

    def neg(x):
        cc = np.cos(x - th)
        return -float(np.sum(A * np.where(cc > 0, cc, 0)))
    r = optimize.minimize_scalar(neg, bounds=(g0 - step, g0 + step), method="bounded",
                                 options={"xatol": 1e-12, "maxiter": 500})
    x, v = (r.x, -r.fun) if -r.fun >= Jg.max() else (g0, Jg.max())
    return v, math.degrees(x) % 360


def circ_deg(w, deg):
    r = np.radians(deg)
    return float(np.degrees(np.arctan2(np.sum(w * np.sin(r)), np.sum(w * np.cos(r)))) % 360)


def station(f, d, h, S, df, dth):
    """The record columns of one station; S: (time, frequency, direction)."""
    whole = np.all(np.isnan(S), axis=(1, 2))
    good = np.isfinite(S) & (S >= 0)
    sc = np.where(good, S, 0.0)
    E = np.einsum("tij,j->ti", sc, dth)
    m = {n: E @ (f ** n * df) for n in (-2, -1, 0)}
    ok = ~whole & (m[0] > 0)
    m0, mm1, mm2 = m[0][ok], m[-1][ok], m[-2][ok]
    te = mm1 / m0
    eps0 = np.sqrt(np.maximum(m0 * mm2 / mm1 ** 2 - 1, 0))
    tp = np.array([peak_period(f, e) for e in E[ok]])
    cg = np.array([group_velocity(x, h) for x in f])
    A = RHO * G * np.einsum("tij,i,j->tj", sc[ok], cg * df, dth)  # W/m from each direction
    J = A.sum(axis=1)
    out = {"steps_valid": int(ok.sum()), "bad_bins": int(np.sum(~good[~whole])),
           "te_mean_s": float(te.mean()), "tp_mean_s": float(tp.mean()), "width_mean": float(eps0.mean()),
           "hm0_mean_m": float((4 * np.sqrt(m0)).mean()), "power_mean_kw_m": float(J.mean() / 1000),
           "directionality": None, "dir_max_power_deg": None, "dir_mean_deg": None, "dir_resultant": None}
    if d is None:
        return out
    th = np.radians(d)
    best = [max_directional_power(a, th) for a in A]
    jmax = np.array([b[0] for b in best])
    dmax = np.array([b[1] for b in best])
    dirn = np.minimum(jmax / J, 1.0)
    V = np.einsum("tij,i,j->tj", sc[ok], df, dth)
    mdir = np.degrees(np.arctan2(V @ np.sin(th), V @ np.cos(th))) % 360
    out.update({"directionality": float(np.sum(J * dirn) / np.sum(J)),
                "dir_max_power_deg": circ_deg(J, dmax),
                "dir_mean_deg": circ_deg(np.ones_like(mdir), mdir),
                "dir_resultant": float(np.hypot(np.cos(np.radians(mdir)).mean(), np.sin(np.radians(mdir)).mean()))})
    return out


def main():
    ref = {"source": "testdata/spectral_cols/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "fixtures": []}
    for name, path in FIXTURES:
        f, d, depth, S = read(path)
        df, dth = widths(f, d)
        cells = []
        for s in range(S.shape[1]):
            row = {"cell_id": s}
            row.update(station(f, d, float(depth[s]), S[:, s], df, dth))
            cells.append(row)
        ref["fixtures"].append({"name": name, "path": path, "cells": cells})
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as fh:
        json.dump(ref, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
