#!/usr/bin/python3
"""Every column of `swellgrid validate`'s tables, computed independently of
swellgrid (issue 15): from the invented stations station_synth.csv and
station_mid.csv (written by make_station.py) and the invented hindcast
fixture ../bulk_monthly/sgfx_bulk_2001-0[1-4].nc read with Debian's
python3-netcdf4, with numpy (means, quantiles, correlation), scipy (the
dispersion relation) and pyproj (the geodesic on WGS 84). Written to
columns_expected.json (or the path given as the first argument); the tests
TestValidateSyntheticStation and TestValidateBilinearAndDistance compare
validation.parquet, validation_qq.parquet and validation_pairs.parquet with
it, and TestValidateColumnsReproduced reruns this script.

Definitions (those stats/validate documents):
  matching     each measured time to the nearest hindcast step, kept when
               within 30 min (validation.max_time_diff_min's default); a
               time more than 30 min before the first or after the last
               step is outside the record
  variables    those the station has a value of somewhere in its record (an
               empty CSV column is not a measurement)
  location     nearest: the nearest sea cell (sea_mask = 1) by the geodesic
               distance (distance_km: also pyproj's geodesic on the sphere of
               radius 6371.0088 km, the great circle swellgrid documents); bilinear: the four cells around the station, weights
               (1-a)(1-b), a(1-b), (1-a)b, ab of its fractional position
               (directions: the atan2 of the weighted sines and cosines)
  statistics   over the pairs with both sides finite: bias = mean(m - o),
               RMSE = sqrt(mean((m - o)^2)), scatter index = RMSE / mean(o),
               r = Pearson (numpy.corrcoef), slope_origin = sum mo / sum o^2,
               slope_symmetric = sqrt(sum m^2 / sum o^2); directions: the
               circular means atan2(sum sin, sum cos), the circular mean of the
               differences wrapped to [-180, 180) and their RMS
  periods      all, month_01..12 and DJF/MAM/JJA/SON by the measured time's
               month, storm_p95: measured Hm0 above its 95th percentile
  quantiles    numpy.percentile(x, 1..99, method="linear") (Hyndman-Fan 7)
               of each side over the pairs with both sides finite
  power        J = rho g Hm0^2 cg(1/Te, h) / 16 (IEC TS 62600-101 bulk
               approximation), rho 1025 kg/m^3, g 9.81 m/s^2, h the nearest
               cell's depth, k from omega^2 = g k tanh(k h) by scipy brentq

Everything here is invented (no real place, buoy or organisation).
Run from this directory:  /usr/bin/python3 make_columns.py
"""
import datetime as dt
import glob
import json
import math
import sys

import netCDF4
import numpy as np
import pyproj
import scipy
from scipy import optimize

RHO, G = 1025.0, 9.81
TOL_S = 30 * 60
STORM_PCT = 95.0
GEOD = pyproj.Geod(ellps="WGS84")
# the sphere of the IUGG mean radius R1 = 6371.0088 km (Moritz 2000, GRS 80),
# whose great circle swellgrid documents (export/rundir.Haversine)
SPHERE = pyproj.Geod(a=6371008.8, b=6371008.8)

# The hindcast fixture, as swellgrid's run of it reads it.
files = sorted(glob.glob("../bulk_monthly/sgfx_bulk_2001-0[1-4].nc"))
steps, fields = [], {"hm0": [], "te": [], "tp": [], "wdir": []}
for f in files:
    with netCDF4.Dataset(f) as ds:
        lat, lon = np.asarray(ds["lat"][:], float), np.asarray(ds["lon"][:], float)
        depth = ds["depth"][:].filled(np.nan).astype(float)
        sea = np.asarray(ds["sea_mask"][:]) == 1
        steps += list(netCDF4.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar, only_use_cftime_datetimes=False))
        for k in fields:
            fields[k].append(ds[k][:].filled(np.nan).astype(float))
fields = {k: np.concatenate(v) for k, v in fields.items()}
EPOCH = dt.datetime(2001, 1, 1)
step_s = np.array([int(round((t - EPOCH).total_seconds())) for t in steps])
# cells in ascending latitude then longitude (swellgrid's cell ids)
oy, ox = np.argsort(lat), np.argsort(lon)
LATS, LONS = lat[oy], lon[ox]
NX = len(LONS)


def cell_of(j, i):
    return int(j * NX + i)


def at(name, j, i):
    """The series of a field at sorted indices (j, i)."""
    return fields[name][:, oy[j], ox[i]]


def group_velocity(f, h):
    """cg (m/s) of frequency f (Hz) at depth h (m): omega^2 = g k tanh(k h)."""
    w = 2 * math.pi * f
    y = w * w * h / G
    kh = optimize.brentq(lambda x: x * math.tanh(x) - y, 1e-12, max(y, math.sqrt(y)) + 10, xtol=1e-15, rtol=1e-15, maxiter=200)
    k = kh / h
    return 0.5 * (w / k) * (1 + 2 * kh / math.sinh(2 * kh)) if kh < 350 else 0.5 * w / k


def power_kw(hm0, te, h):
    out = np.full(len(hm0), np.nan)
    for i, (a, b) in enumerate(zip(hm0, te)):
        if a >= 0 and b > 0:
            out[i] = RHO * G * a * a * group_velocity(1 / b, h) / 16 / 1000
    return out


def read_stations(path):
    """Rows of a station CSV by station, in file order, the header's columns."""
    out, head = {}, None
    for line in open(path):
        if line.startswith("#"):
            continue
        r = line.strip().split(",")
        if head is None:
            head = r
            continue
        d = dict(zip(head, r))
        out.setdefault(d["station"], []).append(d)
    return out


def num(d, k):
    v = d.get(k, "")
    return float(v) if v != "" else np.nan


def wrap(d):
    return np.mod(d + 180, 360) - 180


def circmean(x):
    return math.degrees(math.atan2(np.sum(np.sin(np.radians(x))), np.sum(np.cos(np.radians(x)))))


def stats(m, o, circular):
    ok = np.isfinite(m) & np.isfinite(o)
    m, o = m[ok], o[ok]
    s = dict.fromkeys(["obs_mean", "model_mean", "bias", "rmse", "scatter_index", "r", "slope_origin", "slope_symmetric"], np.nan)
    s["n"] = int(ok.sum())
    if s["n"] == 0:
        return s
    if circular:
        d = wrap(m - o)
        s.update(obs_mean=np.mod(circmean(o), 360), model_mean=np.mod(circmean(m), 360),
                 bias=float(wrap(circmean(d))), rmse=math.sqrt(np.mean(d ** 2)))
        return s
    rmse = math.sqrt(np.mean((m - o) ** 2))
    s.update(obs_mean=np.mean(o), model_mean=np.mean(m), bias=np.mean(m - o), rmse=rmse, scatter_index=rmse / np.mean(o),
             r=np.corrcoef(m, o)[0, 1] if len(m) > 1 else np.nan,
             slope_origin=np.sum(m * o) / np.sum(o * o), slope_symmetric=math.sqrt(np.sum(m * m) / np.sum(o * o)))
    return s


SEASONS = [("DJF", (12, 1, 2)), ("MAM", (3, 4, 5)), ("JJA", (6, 7, 8)), ("SON", (9, 10, 11))]
VARS = [("hm0", "m", "hm0_m"), ("te", "s", "te_s"), ("tp", "s", "tp_s"), ("power", "kW/m", None), ("dir", "deg", "dir_deg")]


def station(name, recs, location):
    slon, slat = float(recs[0]["lon"]), float(recs[0]["lat"])
    # nearest sea cell by the WGS 84 geodesic
    best = None
    for j in range(len(LATS)):
        for i in range(NX):
            if not sea[oy[j], ox[i]]:
                continue
            d = GEOD.inv(slon, slat, LONS[i], LATS[j])[2] / 1000
            if best is None or d < best[0]:
                best = (d, j, i)
    dist, jn, inn = best
    cells = [(jn, inn, 1.0)]
    if location == "bilinear":
        i0 = int(np.searchsorted(LONS, slon)) - 1
        j0 = int(np.searchsorted(LATS, slat)) - 1
        a = (slon - LONS[i0]) / (LONS[i0 + 1] - LONS[i0])
        b = (slat - LATS[j0]) / (LATS[j0 + 1] - LATS[j0])
        cells = [(j0, i0, (1 - a) * (1 - b)), (j0, i0 + 1, a * (1 - b)), (j0 + 1, i0, (1 - a) * b), (j0 + 1, i0 + 1, a * b)]
    # time matching
    match, outside, unpaired = [], 0, 0
    for k, d in enumerate(recs):
        t = dt.datetime.strptime(d["time"], "%Y-%m-%dT%H:%M:%SZ")
        ts = int(round((t - EPOCH).total_seconds()))
        if ts < step_s[0] - TOL_S or ts > step_s[-1] + TOL_S:
            outside += 1
            continue
        s = int(np.argmin(np.abs(step_s - ts)))  # first of equals: the earlier step
        if abs(step_s[s] - ts) > TOL_S:
            unpaired += 1
            continue
        match.append((k, s, t, ts))
    steps_m = np.array([s for _, s, _, _ in match])
    mod = {}
    for v, src in (("hm0", "hm0"), ("te", "te"), ("tp", "tp")):
        acc = sum(w * at(src, j, i)[steps_m] for j, i, w in cells if w != 0)
        mod[v] = acc / sum(w for _, _, w in cells if w != 0)
    sx = sum(w * np.cos(np.radians(at("wdir", j, i)[steps_m])) for j, i, w in cells if w != 0)
    sy = sum(w * np.sin(np.radians(at("wdir", j, i)[steps_m])) for j, i, w in cells if w != 0)
    mod["dir"] = np.mod(np.degrees(np.arctan2(sy, sx)), 360)
    obs = {}
    for v, _, col in VARS:
        if col is None:
            continue
        # a variable the station measures: a value somewhere in its record
        if np.isfinite([num(d, col) for d in recs]).any():
            obs[v] = np.array([num(recs[k], col) for k, _, _, _ in match])
    h = float(depth[oy[jn], ox[inn]])
    if "hm0" in obs and "te" in obs:
        obs["power"] = power_kw(obs["hm0"], obs["te"], h)
        mod["power"] = power_kw(mod["hm0"], mod["te"], h)
    months = np.array([t.month for _, _, t, _ in match])
    groups = [("all", np.ones(len(match), bool))]
    groups += [("month_%02d" % mo, months == mo) for mo in range(1, 13)]
    groups += [(s, np.isin(months, ms)) for s, ms in SEASONS]
    if "hm0" in obs:
        ho = obs["hm0"]
        thr = np.percentile(ho[np.isfinite(ho)], STORM_PCT, method="linear")
        groups.append(("storm_p95", ho > thr))
    rows, qq = [], []
    for v, unit, _ in VARS:
        if v not in obs or not np.isfinite(mod[v]).any():
            continue
        for p, g in groups:
            r = {"station": name, "variable": v, "unit": unit, "period": p}
            r.update(stats(mod[v][g], obs[v][g], v == "dir"))
            rows.append(r)
        if v == "dir":
            continue
        for p, g in [groups[0]] + ([groups[-1]] if "hm0" in obs else []):
            m, o = mod[v][g], obs[v][g]
            ok = np.isfinite(m) & np.isfinite(o)
            pct = np.arange(1, 100, dtype=float)
            qo = np.percentile(o[ok], pct, method="linear") if ok.any() else np.full(99, np.nan)
            qm = np.percentile(m[ok], pct, method="linear") if ok.any() else np.full(99, np.nan)
            for k in range(99):
                qq.append({"station": name, "variable": v, "period": p, "percentile": pct[k], "obs": qo[k], "model": qm[k]})
    nan = np.full(len(match), np.nan)
    pairs = {"time": [t.strftime("%Y-%m-%d %H:%M:%S") for _, _, t, _ in match],
             "time_diff_min": [(ts - step_s[s]) / 60 for _, s, _, ts in match]}
    for v, col in (("hm0", "hm0_%s_m"), ("te", "te_%s_s"), ("tp", "tp_%s_s"), ("power", "power_%s_kw_m"), ("dir", "dir_%s_deg")):
        pairs[col % "obs"] = list(obs.get(v, nan))
        pairs[col % "model"] = list(mod.get(v, nan)) if (v != "power" or "power" in obs) else list(nan)
    place = {"lon": slon, "lat": slat, "cell_id": cell_of(jn, inn), "cell_lon": float(LONS[inn]), "cell_lat": float(LATS[jn]),
             "distance_km_wgs84": dist, "distance_km_sphere": SPHERE.inv(slon, slat, LONS[inn], LATS[jn])[2] / 1000, "location": location, "weights": [w for _, _, w in cells],
             "matched": len(match), "outside": outside, "unpaired": unpaired, "depth_m": h}
    return place, rows, qq, pairs


def clean(x):
    """NaN as null (JSON has no NaN); numpy scalars as Python numbers."""
    if isinstance(x, dict):
        return {k: clean(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [clean(v) for v in x]
    if isinstance(x, (float, np.floating)):
        return None if math.isnan(x) else float(x)
    if isinstance(x, np.integer):
        return int(x)
    return x


out = {"source": "testdata/validate/make_columns.py (Debian python3-netcdf4, numpy, scipy, pyproj)",
       "versions": {"numpy": np.__version__, "scipy": scipy.__version__, "netcdf4": netCDF4.__version__, "pyproj": pyproj.__version__},
       "runs": {}}
for run, path, location in (("nearest", "station_synth.csv", "nearest"), ("bilinear", "station_mid.csv", "bilinear")):
    res = {"stations": {}, "rows": [], "qq": [], "pairs": {}}
    for name, recs in read_stations(path).items():
        place, rows, qq, pairs = station(name, recs, location)
        res["stations"][name] = place
        res["rows"] += rows
        res["qq"] += qq
        res["pairs"][name] = pairs
    out["runs"][run] = res
dest = sys.argv[1] if len(sys.argv) > 1 else "columns_expected.json"
with open(dest, "w") as f:
    json.dump(clean(out), f, separators=(",", ":"))
    f.write("\n")
for run, res in out["runs"].items():
    for name, p in res["stations"].items():
        print(run, name, "cell", p["cell_id"], "%.6f km" % p["distance_km_wgs84"], "matched", p["matched"], "outside", p["outside"], "unpaired", p["unpaired"])
