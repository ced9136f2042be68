#!/usr/bin/python3
"""Independent reference (Debian's numpy and python3-netcdf4) for the
bias-corrected atlas (issue 30, uncertainty.correct = "linear"), on the
fixture of make_fixture.py.

Writes
  station_corr.csv      the invented station of station.csv (same times and
                        measured Hm0: hindcast / 1.1 x (1 + AR(1) error)),
                        with a measured Te that is the hindcast's Te x 0.93
                        x (1 + 0.02 z), z standard normal (seed 31), so that
                        both slopes differ from 1; synthetic, labelled so.
  corr_reference.json   the slopes through the origin of measured on
                        modelled Hm0 and Te over the pairs,
                        b = sum(m o) / sum(m m) (least squares without an
                        intercept, common practice); and per cell within
                        REACH_KM of the station: every step corrected
                        (Hm0' = b_H Hm0, Te' = b_T Te) before its power
                        (deep water, exact: rho g^2 Hm0'^2 Te' / (64 pi), the
                        fixture's depth is 1000 m) and the device's power
                        (bin lookup, as make_ref.py), then the means of
                        Hm0', Te' and J', numpy's percentiles of J' and the
                        device's AEP (mean power x 8766 h); cells beyond
                        reach have none (in_reach false).

Run from this directory after make_fixture.py:  /usr/bin/python3 make_corr_ref.py
"""
import csv
import glob
import json
import numpy as np
import netCDF4

from make_fixture import STATION

REACH_KM = 40.0
RHO, G = 1025.0, 9.81
PCTS = [10, 50, 90, 99]
TE_SCALE, TE_NOISE = 0.93, 0.02

hm, te, tt = [], [], []
for f in sorted(glob.glob("hindcast_*.nc")):
    with netCDF4.Dataset(f) as ds:
        lon, lat = ds["lon"][:].astype(float), ds["lat"][:].astype(float)
        hm.append(np.ma.filled(ds["hm0"][:].astype(float), np.nan))
        te.append(np.ma.filled(ds["te"][:].astype(float), np.nan))
        t = netCDF4.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar, only_use_cftime_datetimes=False)
        tt += [x.strftime("%Y-%m-%dT%H:%M:%SZ") for x in t]
hm, te = np.concatenate(hm), np.concatenate(te)
index = {t: k for k, t in enumerate(tt)}
ix, iy = int(np.where(lon == STATION[1])[0][0]), int(np.where(lat == STATION[2])[0][0])

# the station: station.csv's times and Hm0, a new measured Te
rng = np.random.default_rng(31)
rows = []
with open("station.csv") as f:
    for r in csv.DictReader(l for l in f if not l.startswith("#")):
        rows.append(r)
steps = np.array([index[r["time"]] for r in rows])
obs_h = np.array([float(r["hm0_m"]) for r in rows])
obs_t = te[steps, iy, ix] * TE_SCALE * (1 + TE_NOISE * rng.standard_normal(len(rows)))
with open("station_corr.csv", "w") as f:
    f.write("# comment: invented synthetic station record, not a measurement (testdata/uncertainty/make_corr_ref.py): "
            f"the times and measured Hm0 of station.csv; measured Te = hindcast Te x {TE_SCALE} x (1 + {TE_NOISE} z), z standard normal, seed 31\n")
    f.write("# source: swellgrid test fixture; synthetic, no real place, buoy or organisation\n")
    f.write("time,station,lon,lat,hm0_m,te_s\n")
    for k, r in enumerate(rows):
        f.write(f"{r['time']},{r['station']},{r['lon']},{r['lat']},{r['hm0_m']},{repr(float(obs_t[k]))}\n")

mod_h, mod_t = hm[steps, iy, ix], te[steps, iy, ix]
b_h = float(np.sum(mod_h * obs_h) / np.sum(mod_h * mod_h))
b_t = float(np.sum(mod_t * obs_t) / np.sum(mod_t * mod_t))

# device (bin lookup), as make_ref.py
drows = [l.strip() for l in open("device.csv") if l.strip() and not l.startswith("#")]
tc = np.array([float(x) for x in drows[0].split(",")[1:]])
hc = np.array([float(r.split(",")[0]) for r in drows[1:]])
pm = np.array([[float(x) for x in r.split(",")[1:]] for r in drows[1:]])


def edges(c):
    e = (c[1:] + c[:-1]) / 2
    return np.concatenate([[c[0] - (c[1] - c[0]) / 2], e, [c[-1] + (c[-1] - c[-2]) / 2]])


def device(h, t):
    i = np.searchsorted(edges(hc), h, side="right") - 1
    j = np.searchsorted(edges(tc), t, side="right") - 1
    ok = (i >= 0) & (i < len(hc)) & (j >= 0) & (j < len(tc))
    out = np.zeros_like(h)
    out[ok] = pm[i[ok], j[ok]]
    return out


def hav(lon1, lat1, lon2, lat2):
    R = 6371.0088
    p1, p2 = np.radians(lat1), np.radians(lat2)
    dp, dl = p2 - p1, np.radians(lon2 - lon1)
    a = np.sin(dp / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    return 2 * R * np.arcsin(np.minimum(1, np.sqrt(a)))


cells = []
for jy in range(len(lat)):
    for jx in range(len(lon)):
        d = float(hav(lon[jx], lat[jy], STATION[1], STATION[2]))
        c = {"cell_id": jy * len(lon) + jx, "station_km": d, "in_reach": bool(d <= REACH_KM)}
        h, t = hm[:, jy, jx], te[:, jy, jx]
        J = RHO * G * G * h * h * t / (64 * np.pi) / 1000
        c["power_mean_raw_kw_m"] = float(J.mean())
        c["aep_raw_mwh"] = float(device(h, t).mean() * 8766.0 / 1000.0)
        if c["in_reach"]:
            hcorr, tcorr = b_h * h, b_t * t
            Jc = RHO * G * G * hcorr * hcorr * tcorr / (64 * np.pi) / 1000
            c.update({"hm0_mean_corr_m": float(hcorr.mean()), "te_mean_corr_s": float(tcorr.mean()),
                      "power_mean_corr_kw_m": float(Jc.mean()),
                      "power_pct_corr_kw_m": [float(np.percentile(Jc, p)) for p in PCTS],
                      "aep_corr_mwh": float(device(hcorr, tcorr).mean() * 8766.0 / 1000.0)})
        cells.append(c)

ref = {"source": "make_corr_ref.py (Debian numpy and python3-netcdf4) on the fixture of make_fixture.py and station_corr.csv",
       "station": STATION[0], "pairs": int(len(steps)), "reach_km": REACH_KM, "percentiles": PCTS,
       "hm0_slope": b_h, "te_slope": b_t, "cells": cells}
with open("corr_reference.json", "w") as f:
    json.dump(ref, f, indent=1)
print(json.dumps({k: v for k, v in ref.items() if k != "cells"}, indent=1))
for c in cells:
    print(c)
