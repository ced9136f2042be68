#!/usr/bin/python3
"""Independent per-cell mean wave power for every layout of testdata/layouts,
read with Debian's python3-netcdf4 (its own CF unpacking: _FillValue,
scale_factor/add_offset) and computed with numpy/scipy:
  bulk:     J = rho g Hm0^2 cg(1/Te, h) / 16   (IEC TS 62600-101 bulk form),
            deep water: J = rho g^2 Hm0^2 Te / (64 pi);
  spectra:  J = rho g sum_f sum_theta cg(f, h) S(f, theta) df dtheta;
  cg from linear dispersion w^2 = g k tanh(k h) (scipy.optimize.brentq);
  depth varying in time: each step's own depth; a height with
  positive = "up" is depth = -height.
The mean is over the steps where J is finite (every step has the same
length). rho = 1025 kg/m3, g = 9.81 m/s2 (swellgrid's defaults).
Usage (from the module root):
  /usr/bin/python3 testdata/layouts/make_layouts_ref.py [OUT.json]
(default testdata/layouts/layouts_ref.json; the Go test reruns it into a
temporary file and checks it against the stored one).
"""
import glob
import json
import math
import sys

import netCDF4
import numpy as np
import scipy
from scipy.optimize import brentq

RHO, G = 1025.0, 9.81
ROOT = "testdata/layouts"


def cg(freq, h):
    w = 2 * math.pi * freq
    if not (h > 0) or math.isinf(h):
        return G / (2 * w)
    k = brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-9, 1e4, xtol=1e-15, rtol=1e-15)
    c = w / k
    n = 0.5 * (1 + 2 * k * h / math.sinh(2 * k * h)) if k * h < 350 else 0.5
    return n * c


cgv = np.vectorize(cg)


def var(ds, name):
    v = ds.variables[name]
    v.set_auto_maskandscale(True)
    return np.ma.filled(v[:].astype(float), np.nan)


def bulk_power(hs, te, h):
    ok = np.isfinite(hs) & np.isfinite(te) & (te > 0) & np.isfinite(h) & (h > 0)
    J = np.full(hs.shape, np.nan)
    J[ok] = RHO * G * hs[ok] ** 2 * cgv(1 / te[ok], h[ok]) / 16
    return J


def mean_kw(J):
    """Per-cell mean (kW/m) over finite steps; J is (time, cells...)."""
    with np.errstate(invalid="ignore"):
        m = np.nanmean(J, axis=0) / 1000
    return [None if not np.isfinite(x) else float(x) for x in np.ravel(m)]


out = {}

# split/: one variable per file, joined on time; depth in depth.nc.
with netCDF4.Dataset(f"{ROOT}/split/depth.nc") as ds:
    depth = var(ds, "depth")
    lat = ds.variables["lat"][:]
times, parts = {}, {}
for role in ("hs", "te"):
    for p in sorted(glob.glob(f"{ROOT}/split/{role}_*.nc")):
        with netCDF4.Dataset(p) as ds:
            t = netCDF4.num2date(ds.variables["time"][:], ds.variables["time"].units, only_use_cftime_datetimes=False)
            for k, tt in enumerate(t):
                parts.setdefault(tt, {})[role] = var(ds, role)[k]
steps = sorted(parts)
hs = np.array([parts[t].get("hs", np.full(depth.shape, np.nan)) for t in steps])
te = np.array([parts[t].get("te", np.full(depth.shape, np.nan)) for t in steps])
# Cells in canonical order: latitude ascending (rows), longitude ascending.
order = np.argsort(lat)
J = bulk_power(hs, te, np.broadcast_to(depth, hs.shape))[:, order, :]
out["split"] = {"power_mean_kw_m": mean_kw(J), "steps": len(steps)}

# combined/: the same values in one file per month.
hs, te = [], []
for p in sorted(glob.glob(f"{ROOT}/combined/*.nc")):
    with netCDF4.Dataset(p) as ds:
        hs.append(var(ds, "hs")), te.append(var(ds, "te"))
        depth = var(ds, "depth")
hs, te = np.concatenate(hs), np.concatenate(te)
J = bulk_power(hs, te, np.broadcast_to(depth, hs.shape))[:, order, :]
out["combined"] = {"power_mean_kw_m": mean_kw(J), "steps": int(hs.shape[0])}

# tstation/: 2-D spectra at stations whose lon/lat are (time, station).
with netCDF4.Dataset(f"{ROOT}/tstation/points_2001-01.nc") as ds:
    f = var(ds, "frequency")
    d = var(ds, "direction")
    S = var(ds, "efth")
    h = var(ds, "dpt")
    names = [s.strip() for s in netCDF4.chartostring(ds.variables["station_name"][:])]
fs = np.sort(f)
mid = (fs[1:] + fs[:-1]) / 2
lo = np.concatenate([[fs[0] - (mid[0] - fs[0])], mid])
hi = np.concatenate([mid, [fs[-1] + (fs[-1] - mid[-1])]])
df = np.empty_like(f)
df[np.argsort(f)] = hi - lo
dth = np.full(d.shape, math.radians(360 / len(d)))  # evenly spaced directions
Jst = []
for st in range(S.shape[1]):
    w = cgv(f, h[st])[:, None] * df[:, None] * dth[None, :]
    Jst.append(RHO * G * np.einsum("tfd,fd->t", S[:, st], w))
out["tstation"] = {"power_mean_kw_m": mean_kw(np.array(Jst).T), "steps": int(S.shape[0]), "names": names}

# tidal_pts/: depth(time, node).
with netCDF4.Dataset(f"{ROOT}/tidal_pts/tidal_points.nc") as ds:
    J = bulk_power(var(ds, "hs"), var(ds, "te"), var(ds, "depth"))
    Jstatic = bulk_power(var(ds, "hs"), var(ds, "te"), np.broadcast_to(var(ds, "depth")[0], J.shape))
out["tidal_pts"] = {"power_mean_kw_m": mean_kw(J), "first_step_depth_power_mean_kw_m": mean_kw(Jstatic), "steps": int(J.shape[0])}

# tidal_grid/: bed_elev(time, lat, lon), positive up: depth = -height.
with netCDF4.Dataset(f"{ROOT}/tidal_grid/tidal_grid_2001-01.nc") as ds:
    assert ds.variables["bed_elev"].positive == "up"
    J = bulk_power(var(ds, "swh"), var(ds, "te"), -var(ds, "bed_elev"))
    order = np.argsort(ds.variables["lat"][:])
out["tidal_grid"] = {"power_mean_kw_m": mean_kw(J[:, order, :]), "steps": int(J.shape[0])}

# shortnames/: int16 packed per file, no standard names; deep water.
hs, te = [], []
for p in sorted(glob.glob(f"{ROOT}/shortnames/*.nc")):
    with netCDF4.Dataset(p) as ds:
        hs.append(var(ds, "hsig")), te.append(var(ds, "tm10"))
        order = np.argsort(ds.variables["latitude"][:])
hs, te = np.concatenate(hs), np.concatenate(te)
with np.errstate(invalid="ignore"):
    J = np.where(np.isfinite(hs) & (te > 0), RHO * G * G * hs ** 2 * te / (64 * math.pi), np.nan)
out["shortnames_deep"] = {"power_mean_kw_m": mean_kw(J[:, order, :]), "steps": int(hs.shape[0])}

out["made_with"] = {"numpy": np.__version__, "scipy": scipy.__version__, "netCDF4": netCDF4.__version__,
                    "script": "testdata/layouts/make_layouts_ref.py"}
path = sys.argv[1] if len(sys.argv) > 1 else f"{ROOT}/layouts_ref.json"
with open(path, "w") as fh:
    json.dump(out, fh, indent=1, sort_keys=True)
print("wrote", path)
