#!/usr/bin/python3
"""Independent references (Debian's numpy and python3-netcdf4) for the AEP
bands' model uncertainty from a validation (issue 30), on the fixture of
make_fixture.py.

Writes
  pairs_ref.csv   the station's pairs as numpy computes them: wave power
                  (up to the constant rho g^2 / (64 pi), which cancels in a
                  ratio: deep water) and the device's power through its
                  matrix (bin lookup: the bin whose edges, midway between
                  centres, hold the sea state; zero outside), hindcast and
                  measured side.
  reference.json  the relative biases sum(model)/sum(obs) - 1; Monte Carlo
                  bands of the circular block bootstrap's standard error
                  (the same procedure, Politis and Romano 1992 from memory,
                  with numpy's own generator over many seeds: the Go
                  estimate, with its own generator and one seed, must fall
                  inside); the same for blocks of one pair (the iid
                  bootstrap, which must fall below: the errors are
                  autocorrelated); the true sampling spread of the power
                  bias from regenerated AR(1) errors; the injected bias; per
                  cell the distance to the station, the device's AEP, its
                  inter-annual spread and the record-length and future
                  uncertainties (u = cv / sqrt(n), common practice).

Run from this directory after make_fixture.py:  /usr/bin/python3 make_ref.py
"""
import csv
import glob
import json
import numpy as np
import netCDF4

from make_fixture import B_H, SIGMA, PHI, STATION

BLOCK, REPS, SEEDS = 48, 200, 300
REACH_KM = 40.0
HORIZONS = [1.0, 10.0]

# hindcast
hm, te, tt, years = [], [], [], []
for f in sorted(glob.glob("hindcast_*.nc")):
    with netCDF4.Dataset(f) as ds:
        lon, lat = ds["lon"][:].astype(float), ds["lat"][:].astype(float)
        hm.append(np.ma.filled(ds["hm0"][:].astype(float), np.nan))
        te.append(np.ma.filled(ds["te"][:].astype(float), np.nan))
        t = netCDF4.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar, only_use_cftime_datetimes=False)
        tt += [x.strftime("%Y-%m-%dT%H:%M:%SZ") for x in t]
        years += [x.year for x in t]
hm, te, years = np.concatenate(hm), np.concatenate(te), np.array(years)

# device (bin lookup)
rows = [l.strip() for l in open("device.csv") if l.strip() and not l.startswith("#")]
tc = np.array([float(x) for x in rows[0].split(",")[1:]])
hc = np.array([float(r.split(",")[0]) for r in rows[1:]])
pm = np.array([[float(x) for x in r.split(",")[1:]] for r in rows[1:]])


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


# station pairs
index = {t: k for k, t in enumerate(tt)}
obs_h, obs_t, steps = [], [], []
with open("station.csv") as f:
    for r in csv.DictReader(l for l in f if not l.startswith("#")):
        steps.append(index[r["time"]])
        obs_h.append(float(r["hm0_m"]))
        obs_t.append(float(r["te_s"]))
steps, obs_h, obs_t = np.array(steps), np.array(obs_h), np.array(obs_t)
ix, iy = int(np.where(lon == STATION[1])[0][0]), int(np.where(lat == STATION[2])[0][0])
mod_h, mod_t = hm[steps, iy, ix], te[steps, iy, ix]
P_mod, P_obs = mod_h ** 2 * mod_t, obs_h ** 2 * obs_t
D_mod, D_obs = device(mod_h, mod_t), device(obs_h, obs_t)
with open("pairs_ref.csv", "w") as f:
    f.write("# the station's pairs as numpy computes them (make_ref.py): wave power without rho g^2/(64 pi), device power (kW)\n")
    f.write("power_model,power_obs,device_model,device_obs\n")
    for k in range(len(steps)):
        f.write(f"{P_mod[k]!r},{P_obs[k]!r},{D_mod[k]!r},{D_obs[k]!r}\n")


def rel_bias(m, o):
    return m.sum() / o.sum() - 1


def cbb_se(series, L, R, rng):
    """Circular block bootstrap standard error of each series' relative bias."""
    n = len(series[0][0])
    nb = -(-n // L)
    starts = rng.integers(0, n, size=(R, nb))
    idx = ((starts[:, :, None] + np.arange(L)[None, None, :]) % n).reshape(R, -1)[:, :n]
    return [np.std(m[idx].sum(1) / o[idx].sum(1) - 1, ddof=1) for m, o in series]


series = [(P_mod, P_obs), (D_mod, D_obs)]
se_block = np.array([cbb_se(series, BLOCK, REPS, np.random.default_rng(s)) for s in range(SEEDS)])
se_iid = np.array([cbb_se(series, 1, REPS, np.random.default_rng(10000 + s)) for s in range(SEEDS)])

# true sampling spread of the power bias: regenerated AR(1) errors, same hindcast
rng = np.random.default_rng(7)
sims = []
for _ in range(1000):
    z = rng.standard_normal(len(steps))
    e = np.empty(len(steps))
    e[0] = SIGMA * z[0]
    for i in range(1, len(e)):
        e[i] = PHI * e[i - 1] + np.sqrt(1 - PHI ** 2) * SIGMA * z[i]
    oh = mod_h / (1 + B_H) * (1 + e)
    sims.append(rel_bias(P_mod, oh ** 2 * mod_t))


def hav(lon1, lat1, lon2, lat2):
    R = 6371.0088
    p1, p2 = np.radians(lat1), np.radians(lat2)
    dp, dl = p2 - p1, np.radians(lon2 - lon1)
    a = np.sin(dp / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    return 2 * R * np.arcsin(np.minimum(1, np.sqrt(a)))


cells = []
for jy in range(len(lat)):
    for jx in range(len(lon)):
        dp = device(hm[:, jy, jx], te[:, jy, jx])
        yearly = np.array([dp[years == y].mean() for y in sorted(set(years))])
        cv = np.std(yearly, ddof=1) / yearly.mean()
        d = hav(lon[jx], lat[jy], STATION[1], STATION[2])
        cells.append({"cell_id": jy * len(lon) + jx, "lon": lon[jx], "lat": lat[jy], "station_km": d,
                      "in_reach": bool(d <= REACH_KM), "aep_mwh": dp.mean() * 8766.0 / 1000.0,
                      "interannual_frac": cv, "u_record_frac": cv / np.sqrt(len(yearly)),
                      "u_future_frac": [cv / np.sqrt(h) for h in HORIZONS]})

q = lambda a: [float(np.min(a)), float(np.percentile(a, 0.5)), float(np.percentile(a, 99.5)), float(np.max(a))]
ref = {
    "source": "make_ref.py (Debian numpy and python3-netcdf4) on the fixture of make_fixture.py",
    "station": STATION[0], "pairs": int(len(steps)),
    "block_pairs": BLOCK, "bootstrap_reps": REPS, "seeds": SEEDS, "reach_km": REACH_KM, "horizons_y": HORIZONS,
    "injected": {"hm0_bias_frac": B_H, "ar1_phi": PHI, "ar1_sd": SIGMA,
                 "power_bias_frac": (1 + B_H) ** 2 / (1 + SIGMA ** 2) - 1},
    "power_bias_frac": rel_bias(P_mod, P_obs), "aep_bias_frac": rel_bias(D_mod, D_obs),
    "power_se_band": q(se_block[:, 0]), "aep_se_band": q(se_block[:, 1]),
    "power_se_band_iid": q(se_iid[:, 0]), "aep_se_band_iid": q(se_iid[:, 1]),
    "power_bias_true_sd": float(np.std(sims, ddof=1)),
    "cells": cells,
}
with open("reference.json", "w") as f:
    json.dump(ref, f, indent=1, default=float)
print(json.dumps({k: v for k, v in ref.items() if k != "cells"}, indent=1, default=float))
for c in cells:
    print(c)
