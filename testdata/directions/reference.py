#!/usr/bin/python3
"""Independent computation of directions.parquet (the directional
distribution of wave power and occurrence) with Debian's python3-netcdf4,
python3-numpy and python3-scipy; no swellgrid code. Writes reference.json,
which pipelines/engine/directions_e2e_test.go compares with two runs.

Sectors: n = 16 (statistics.direction_sectors default), sector k centred on
k*360/n deg nautical "from", spanning [centre - 180/n, centre + 180/n).

Bulk (testdata/e2e/bulk, the e2e fixture): J = rho g Hm0^2 cg(1/Te, h) / 16
(IEC TS 62600-101 bulk approximation; cg from omega^2 = g k tanh(k h) by
scipy.optimize.brentq, testdata/e2e/reference.py's group_velocity); a step
counts where J and the mean direction mwd are present; all of its J comes
from the sector holding mwd.

Spectral (spectral_dirs.nc, make_fixture.py): per direction bin j the energy
flux A_j = rho g sum_i cg(f_i, h) S_ij df_i dtheta_j (IEC TS 62600-101),
df from numpy.gradient of the sorted frequencies, dtheta_j half the circular
gaps to the neighbouring directions; each bin's power spread uniformly over
its arc and given to the sectors by the overlap, computed here as differences
of the bin's piecewise-linear cumulative distribution (numpy.interp) at the
sector edges on the unrolled circle; occurrence from the mean direction
atan2(sum sin(theta_j) E_j, sum cos(theta_j) E_j), E_j = sum_i S_ij df_i dtheta_j
(first-order moments, common practice).

Columns: power_share = sum_t P_kt / sum_kt P_kt; occurrence_share = steps with
the direction in k / steps with a direction; power_mean_kw_m = sum_t P_kt /
steps counted / 1000 (equal 1-hour or 6-hour weights); occurrence_hours =
steps with the direction in k x the step length in hours.
Run: /usr/bin/python3 testdata/directions/reference.py [OUT.json]
"""
import glob
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
N = 16

spec = importlib.util.spec_from_file_location("e2eref", os.path.join(HERE, "..", "e2e", "reference.py"))
e2eref = importlib.util.module_from_spec(spec)
spec.loader.exec_module(e2eref)
group_velocity = e2eref.group_velocity


def sector_of(d):
    w = 360.0 / N
    return int(math.floor(((d % 360.0) + w / 2) / w)) % N


def step_hours(times):
    """The record's step length in hours of a time axis in "hours since"
    units: the most common spacing (the bulk fixture has a month-long gap,
    which counts as no time; common practice for a regular hindcast)."""
    d, n = np.unique(np.diff(np.asarray(times, dtype=float)), return_counts=True)
    return float(d[np.argmax(n)])


def rows(cid, P, occ, counted, dt_h):
    """P: (steps, N) sector powers W/m; occ: sector index per step or -1;
    dt_h: step length in hours."""
    tot = P.sum()
    occ = np.asarray(occ)
    nocc = (occ >= 0).sum()
    out = []
    for k in range(N):
        out.append({"cell_id": cid, "sector": k, "sector_centre_deg": k * 360.0 / N,
                    "power_share": float(P[:, k].sum() / tot) if tot > 0 else None,
                    "occurrence_share": float((occ == k).sum() / nocc) if nocc > 0 else None,
                    "occurrence_hours": float((occ == k).sum() * dt_h),
                    "power_mean_kw_m": float(P[:, k].sum() / counted / 1000)})
    return out


def bulk():
    files = sorted(glob.glob(os.path.join(HERE, "..", "e2e", "bulk", "*.nc")))
    hs, te, dr, tm = [], [], [], []
    for p in files:
        with netCDF4.Dataset(p) as ds:
            assert ds["time"].units.startswith("hours since"), p
            tm.append(ds["time"][:].astype(float))
            for lst, name in [(hs, "hs"), (te, "te"), (dr, "mwd")]:
                lst.append(np.ma.filled(ds[name][:].astype(float), np.nan))
            depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
    hs, te, dr = np.concatenate(hs), np.concatenate(te), np.concatenate(dr)
    dt_h = step_hours(np.concatenate(tm))
    ny, nx = depth.shape
    out = []
    for cid in range(ny * nx):
        j, i = divmod(cid, nx)
        h, e, d = hs[:, j, i], te[:, j, i], dr[:, j, i]
        cg = np.array([group_velocity(1 / x, depth[j, i]) if np.isfinite(x) else np.nan for x in e])
        J = RHO * G * h ** 2 * cg / 16
        v = np.isfinite(J) & np.isfinite(d)
        P = np.zeros((v.sum(), N))
        occ = [sector_of(x) for x in d[v]]
        P[np.arange(v.sum()), occ] = J[v]
        out += rows(cid, P, occ, v.sum(), dt_h)
    return out


def split_matrix(dirs):
    """share[j, k] of bin j's arc in sector k, by its cumulative distribution."""
    nd = len(dirs)
    order = np.argsort(dirs)
    ds_ = dirs[order]
    gap_next = (np.roll(ds_, -1) - ds_) % 360
    gap_prev = (ds_ - np.roll(ds_, 1)) % 360
    lo_s, hi_s = ds_ - gap_prev / 2, ds_ + gap_next / 2
    lo, hi = np.empty(nd), np.empty(nd)
    lo[order], hi[order] = lo_s, hi_s
    w = 360.0 / N
    edges = np.arange(-2 * N, 2 * N + 1) * w - w / 2  # sector edges on the unrolled circle (-720..720)
    share = np.zeros((nd, N))
    for j in range(nd):
        F = np.interp(edges, [lo[j], hi[j]], [0.0, 1.0])  # cumulative share below each edge
        for m in range(len(edges) - 1):
            share[j, (m - 2 * N) % N] += F[m + 1] - F[m]
    return share


def spectral():
    with netCDF4.Dataset(os.path.join(HERE, "spectral_dirs.nc")) as ds:
        f = ds["frequency"][:].astype(float)
        dirs = ds["direction"][:].astype(float) % 360
        S = np.ma.filled(ds["efth"][:].astype(float), np.nan)
        depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
        assert ds["time"].units.startswith("hours since")
        dt_h = step_hours(ds["time"][:])
    order = np.argsort(f)
    df = np.empty_like(f)
    df[order] = np.gradient(f[order])
    o = np.argsort(dirs)
    ds_ = dirs[o]
    dth = np.empty_like(dirs)
    dth[o] = np.radians(((np.roll(ds_, -1) - ds_) % 360 + (ds_ - np.roll(ds_, 1)) % 360) / 2)
    share = split_matrix(dirs)
    out = []
    for s in range(S.shape[1]):
        cg = np.array([group_velocity(x, depth[s]) for x in f])
        A = RHO * G * np.einsum("tij,i,j->tj", S[:, s], cg * df, dth)  # W/m per bin
        P = A @ share
        E = np.einsum("tij,i,j->tj", S[:, s], df, dth)
        rad = np.radians(dirs)
        md = np.degrees(np.arctan2(E @ np.sin(rad), E @ np.cos(rad))) % 360
        out += rows(s, P, [sector_of(x) for x in md], S.shape[0], dt_h)
    return out


def main():
    ref = {"source": "testdata/directions/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "sectors": N, "bulk": bulk(), "spectral": spectral()}
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as fh:
        json.dump(ref, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
