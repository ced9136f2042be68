#!/usr/bin/python3
"""Independent reference for swellgrid's device-yield columns
(pipelines/engine/columns_test.go, TestDeviceYieldAgainstNumpy).

Writes:
  - testdata/devices/tp_matrix.csv: an invented power matrix (kW) over Hm0 and
    Tp (corner label "hm0_m\\tp_s"), largest entry 661 kW, zero first row
    (cut-in), non-uniform Tp centres; the run's spec gives rated_kw = 750.
  - testdata/devices/bulk_no_tp.nc (python3-netcdf4): hm0, te and depth of
    testdata/bulk_monthly/sgfx_bulk_2001-01.nc, without tp (invented,
    synthetic data, labelled so).
  - testdata/devices/reference.json, computed here with numpy without
    swellgrid's code, per cell:
      record "bulk_monthly" (24 files, Tp from the files):
        device "tpbin" (bin lookup) and "tpbil" (bilinear);
      record "no_tp" (bulk_no_tp.nc, Tp = Te / 0.9, the default te_over_tp):
        device "tpbin".
    For each: mean power P (time mean over steps with valid Hm0 and Tp),
    aep_mwh = P * 8766 h / 1000 (IEC TS 62600-100 method: mean power times the
    hours of a mean year, 365.25 d; from memory), cf = P / 750 kW,
    outside_energy_share = sum(J over sea states beyond the matrix edges:
    Hm0 above the top row's edge or Tp beyond the outer column edges) / sum(J),
    with J = rho g Hm0^2 cg(Te, h) / 16 (bulk power in finite depth, linear
    theory; cg from w^2 = g k tanh(k h) by vectorised Newton iteration to
    machine precision), rho = 1025 kg/m3, g = 9.81 m/s2.
Lookup rules reimplemented from the documentation (climate.Device):
  bin edges half-way between centres, outer bins as wide as their neighbour
  spacing, bins closed below; below the lowest Hm0 edge: below cut-in (0 kW);
  beyond the other edges: outside (0 kW); bilinear: textbook interpolation
  between the surrounding centres with the fractions clamped to [0, 1] (the
  outer centre's value held out to the outer edge).
Run from the module root: /usr/bin/python3 testdata/devices/make_reference.py
"""
import glob
import json
import math

import netCDF4
import numpy as np

RHO, G, RATED, ALPHA = 1025.0, 9.81, 750.0, 0.9
H_C = np.array([0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 3.5, 4.0, 4.5, 5.0])
T_C = np.array([7.0, 8.0, 9.0, 10.0, 11.0, 12.5])
P = np.zeros((H_C.size, T_C.size))
for i, h in enumerate(H_C):
    for j, tp in enumerate(T_C):
        P[i, j] = 0.0 if i == 0 else round(min(661.0, 9.0 * h * h * tp * (1.2 - 0.04 * tp)), 1)
P[-1, :3] = 661.0
assert P.max() == 661.0

with open("testdata/devices/tp_matrix.csv", "w") as fh:
    fh.write("# invented power matrix (kW) over Hm0 (rows, m) and Tp (columns, s), for tests only\n")
    fh.write("# made by testdata/devices/make_reference.py; the device's rated power (750 kW) is given in the spec\n")
    fh.write("hm0_m\\tp_s," + ",".join("%g" % t for t in T_C) + "\n")
    for i, h in enumerate(H_C):
        fh.write("%g," % h + ",".join("%g" % p for p in P[i]) + "\n")


def edges(c):
    e = np.empty(c.size + 1)
    e[0] = c[0] - (c[1] - c[0]) / 2
    e[1:-1] = (c[:-1] + c[1:]) / 2
    e[-1] = c[-1] + (c[-1] - c[-2]) / 2
    return e


HE, TE = edges(H_C), edges(T_C)


def classify(h, t):
    """0 inside, 1 below cut-in (Hm0 below the lowest edge), 2 outside."""
    cls = np.zeros(h.shape, dtype=int)
    cls[(h >= HE[-1]) | (t < TE[0]) | (t >= TE[-1]) | np.isnan(t)] = 2
    cls[h < HE[0]] = 1
    return cls


def power_bin(h, t):
    i = np.clip(np.searchsorted(HE, h, side="right") - 1, 0, H_C.size - 1)
    j = np.clip(np.searchsorted(TE, t, side="right") - 1, 0, T_C.size - 1)
    p = P[i, j]
    return np.where(classify(h, t) == 0, p, 0.0)


def frac(c, x):
    k = np.clip(np.searchsorted(c, x, side="left") - 1, 0, c.size - 2)
    u = np.clip((x - c[k]) / (c[k + 1] - c[k]), 0.0, 1.0)
    return k, u


def power_bilinear(h, t):
    k, u = frac(H_C, h)
    l, v = frac(T_C, t)
    p = (1 - u) * ((1 - v) * P[k, l] + v * P[k, l + 1]) + u * ((1 - v) * P[k + 1, l] + v * P[k + 1, l + 1])
    return np.where(classify(h, t) == 0, p, 0.0)


def cg(period, depth):
    w = 2 * np.pi / period
    k = w * w / G / np.sqrt(np.tanh(w * w * depth / G))  # first guess
    for _ in range(60):
        f = G * k * np.tanh(k * depth) - w * w
        df = G * np.tanh(k * depth) + G * k * depth / np.cosh(k * depth) ** 2
        k = k - f / df
    kh = k * depth
    return 0.5 * (1 + 2 * kh / np.sinh(2 * kh)) * w / k


def read(files, with_tp):
    hs, te, tp = [], [], []
    for f in files:
        ds = netCDF4.Dataset(f)
        hs.append(np.ma.filled(ds["hm0"][:].astype(float), np.nan))
        te.append(np.ma.filled(ds["te"][:].astype(float), np.nan))
        if with_tp:
            tp.append(np.ma.filled(ds["tp"][:].astype(float), np.nan))
        depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
        assert ds["hm0"].dimensions == ("time", "lat", "lon")
        lon2, lat2 = np.meshgrid(ds["lon"][:], ds["lat"][:])
    hs, te = np.concatenate(hs), np.concatenate(te)
    tp = np.concatenate(tp) if with_tp else te / ALPHA
    nt = hs.shape[0]
    return hs.reshape(nt, -1), te.reshape(nt, -1), tp.reshape(nt, -1), depth.reshape(-1), lon2.reshape(-1), lat2.reshape(-1)


def yields(hs, te, tp, depth, lon, lat, lookup):
    out = []
    for c in range(hs.shape[1]):
        h, e, t = hs[:, c], te[:, c], tp[:, c]
        ok = np.isfinite(h) & np.isfinite(t)
        if not ok.any() or not np.isfinite(depth[c]):
            continue
        h, e, t = h[ok], e[ok], t[ok]
        p = lookup(h, t)
        J = RHO * G * h * h * cg(e, depth[c]) / 16
        cls = classify(h, t)
        mean = p.mean()
        out.append({"lon": float(lon[c]), "lat": float(lat[c]), "mean_power_kw": float(mean), "aep_mwh": float(mean * 8766 / 1000),
                    "cf": float(mean / RATED), "outside_energy_share": float(J[cls == 2].sum() / J.sum()),
                    "steps": int(ok.sum())})
    return out


files = sorted(glob.glob("testdata/bulk_monthly/sgfx_bulk_*.nc"))
assert len(files) == 24
hs, te, tp, depth, lon, lat = read(files, True)
ref = {"bulk_monthly": {"tpbin": yields(hs, te, tp, depth, lon, lat, power_bin),
                        "tpbil": yields(hs, te, tp, depth, lon, lat, power_bilinear)}}

src = netCDF4.Dataset("testdata/bulk_monthly/sgfx_bulk_2001-01.nc")
nc = netCDF4.Dataset("testdata/devices/bulk_no_tp.nc", "w", format="NETCDF4")
nc.Conventions = "CF-1.8"
nc.title = "swellgrid fixture: synthetic bulk grid without a peak period (hm0, te, depth of sgfx_bulk_2001-01)"
nc.synthetic = "yes"
nc.comment = ("Invented, synthetic data: a copy of part of testdata/bulk_monthly/sgfx_bulk_2001-01.nc written with "
              "python3-netcdf4 by testdata/devices/make_reference.py; describes no real place; for software tests only.")
nc.caution = "Invented data for software tests only. Not for design, siting, consenting or any decision."
for name, dim in src.dimensions.items():
    nc.createDimension(name, len(dim))
for name in ["time", "lat", "lon", "hm0", "te", "depth", "sea_mask"]:
    v = src[name]
    fill = v.getncattr("_FillValue") if "_FillValue" in v.ncattrs() else None
    w = nc.createVariable(name, v.dtype, v.dimensions, fill_value=fill)
    w.setncatts({a: v.getncattr(a) for a in v.ncattrs() if a != "_FillValue"})
    w[:] = v[:]
nc.close()
hs, te, tp, depth, lon, lat = read(["testdata/devices/bulk_no_tp.nc"], False)
ref["no_tp"] = {"tpbin": yields(hs, te, tp, depth, lon, lat, power_bin)}
ref["made_with"] = {"numpy": np.__version__, "netCDF4": netCDF4.__version__, "script": "testdata/devices/make_reference.py"}
json.dump(ref, open("testdata/devices/reference.json", "w"), indent=1)
for k in ("bulk_monthly", "no_tp"):
    for dev, rows in ref[k].items():
        r = rows
        print(k, dev, len(r), "cells; first", r[0])
        print("   max outside share", max(x["outside_energy_share"] for x in r))
