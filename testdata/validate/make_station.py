#!/usr/bin/python3
"""A synthetic station made from the hindcast's own values (issue 18's check
of `swellgrid validate`): the fixture testdata/bulk_monthly (months
2001-01 .. 2001-04, invented data) is read with Debian's python3-netcdf4 at
one cell, and stations are written to station_synth.csv with injected
errors, and one between four cells to station_mid.csv. station_expected.json holds the injected values and what the
comparison must give, computed here with numpy from the same series.
The stations are invented (no real place, buoy or organisation).

Run from this directory:  /usr/bin/python3 make_station.py
"""
import datetime as dt
import glob
import json
import numpy as np
import netCDF4

files = sorted(glob.glob("../bulk_monthly/sgfx_bulk_2001-0[1-4].nc"))
times, hm0, te, dirs = [], [], [], []
for f in files:
    with netCDF4.Dataset(f) as ds:
        lat, lon = ds["lat"][:], ds["lon"][:]
        t = netCDF4.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar, only_use_cftime_datetimes=False)
        times += list(t)
        hm0.append(ds["hm0"][:].filled(np.nan).astype(float))
        te.append(ds["te"][:].filled(np.nan).astype(float))
        dirs.append(ds["wdir"][:].filled(np.nan).astype(float))
hm0, te, dirs = np.concatenate(hm0), np.concatenate(te), np.concatenate(dirs)
# the cell: lat index 1 (45.5? see below), lon index 2, by value
jy, ix = 1, 2
LAT, LON = float(np.sort(lat)[jy]), float(np.sort(lon)[ix])
iy_f, ix_f = int(np.where(lat == LAT)[0][0]), int(np.where(lon == LON)[0][0])
cell = jy * len(lon) + ix  # swellgrid's canonical id: rows of ascending latitude
h, T, D = hm0[:, iy_f, ix_f], te[:, iy_f, ix_f], dirs[:, iy_f, ix_f]
n = len(times)
rng = np.random.RandomState(18)

BIAS, NOISE = 0.30, 0.10           # station A: model - obs = BIAS + noise
SCALE, RNOISE = 1.15, 0.05         # station B: model / obs = SCALE (1 + relative noise)
TE_BIAS, DIR_BIAS = -0.4, 10.0     # station A: Te and direction offsets (model - obs)
# Time offsets of the measured times from the hindcast's steps: most within
# +-20 min (matched to their step), every 10th at +45 min (no step within 30
# min: not matched), and 5 measured times before the record (outside).
offs = rng.uniform(-20, 20, n)
offs[::10] = 45.0
noise = rng.standard_normal(n)
rnoise = rng.standard_normal(n)
dnoise = rng.standard_normal(n)

obsA = h - BIAS - NOISE * noise
obsA_te = T - TE_BIAS - 0.2 * rng.standard_normal(n)
obsA_dir = np.mod(D - DIR_BIAS - 3 * dnoise, 360)
obsB = h / (SCALE * (1 + RNOISE * rnoise))
ok_time = np.abs(offs) <= 30

def iso(t, off_min):
    return (t + dt.timedelta(minutes=float(off_min))).strftime("%Y-%m-%dT%H:%M:%SZ")

# the middle of the four cells (jy, ix) .. (jy+1, ix+1): bilinear weights 1/4
LATm, LONm = float(np.sort(lat)[jy] + np.sort(lat)[jy + 1]) / 2, float(np.sort(lon)[ix] + np.sort(lon)[ix + 1]) / 2
iy2, ix2 = int(np.where(lat == np.sort(lat)[jy + 1])[0][0]), int(np.where(lon == np.sort(lon)[ix + 1])[0][0])
mid = (hm0[:, iy_f, ix_f] + hm0[:, iy_f, ix2] + hm0[:, iy2, ix_f] + hm0[:, iy2, ix2]) / 4

with open("station_synth.csv", "w") as f:
    f.write("# comment: invented synthetic stations made from the swellgrid fixture's own values with injected errors; not measurements\n")
    f.write("# source: testdata/validate/make_station.py\n")
    f.write("time,station,lon,lat,hm0_m,te_s,dir_deg\n")
    for k in range(5):  # before the record: outside
        f.write("%s,SYN-A,%.4f,%.4f,1.0,6.0,180\n" % (iso(times[0], -600 - 60 * k), LON + 0.01, LAT + 0.01))
    for i in range(n):
        f.write("%s,SYN-A,%.4f,%.4f,%.6f,%.6f,%.4f\n" % (iso(times[i], offs[i]), LON + 0.01, LAT + 0.01, obsA[i], obsA_te[i], obsA_dir[i]))
    for i in range(n):
        f.write("%s,SYN-B,%.4f,%.4f,%.6f,,\n" % (iso(times[i], offs[i]), LON - 0.01, LAT, obsB[i]))
with open("station_mid.csv", "w") as f:
    f.write("# comment: invented synthetic station between four cells of the swellgrid fixture (their mean Hm0); not a measurement\n")
    f.write("time,station,lon,lat,hm0_m\n")
    for i in range(n):
        f.write("%s,SYN-MID,%.4f,%.4f,%.6f\n" % (iso(times[i], 0), LONm, LATm, mid[i]))

# What validation must give, from the rounded values as written.
def col(rows, k):
    return np.array([float(r[k]) if r[k] != "" else np.nan for r in rows])
rows = [l.strip().split(",") for fn in ("station_synth.csv", "station_mid.csv") for l in open(fn) if not l.startswith(("#", "time"))]
A = [r for r in rows if r[1] == "SYN-A"][5:]
B = [r for r in rows if r[1] == "SYN-B"]
M = [r for r in rows if r[1] == "SYN-MID"]
oA, oAte, oAdir, oB, oM = col(A, 4), col(A, 5), col(A, 6), col(B, 4), col(M, 4)
m = ok_time & np.isfinite(h)
dA = (h - oA)[m]
dAte = (T - oAte)[m & np.isfinite(T)]
ddir = np.mod(D - oAdir + 180, 360) - 180
exp = {
    "cell": cell, "cell_lon": LON, "cell_lat": LAT, "steps": n,
    "injected": {"hm0_bias_m": BIAS, "hm0_noise_m": NOISE, "scale": SCALE, "relative_noise": RNOISE, "te_bias_s": TE_BIAS, "dir_bias_deg": DIR_BIAS},
    "SYN-A": {"measured": n + 5, "matched": int(ok_time.sum()), "outside": 5, "unmatched_inside": int((~ok_time).sum()),
              "n_hm0": int(m.sum()), "hm0_bias": float(dA.mean()), "hm0_bias_se": float(dA.std(ddof=1) / np.sqrt(len(dA))),
              "hm0_rmse": float(np.sqrt(np.mean(dA ** 2))), "hm0_si": float(np.sqrt(np.mean(dA ** 2)) / oA[m].mean()),
              "te_bias": float(dAte.mean()), "te_bias_se": float(dAte.std(ddof=1) / np.sqrt(len(dAte))),
              "dir_rmse": float(np.sqrt(np.mean(ddir[m] ** 2)))},
    "SYN-B": {"matched": int(ok_time.sum()),
              "slope_origin": float(np.sum(h[m] * oB[m]) / np.sum(oB[m] ** 2)),
              "hm0_bias": float((h - oB)[m].mean())},
    "SYN-MID": {"matched": n, "bilinear_bias": float(np.nanmean(mid - oM)), "bilinear_rmse": float(np.sqrt(np.nanmean((mid - oM) ** 2)))},
    "numpy": np.__version__, "netcdf4": netCDF4.__version__,
}
with open("station_expected.json", "w") as f:
    json.dump(exp, f, indent=1)
print(json.dumps(exp, indent=1))
