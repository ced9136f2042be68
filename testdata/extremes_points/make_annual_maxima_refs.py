#!/usr/bin/python3
"""Writes testdata/extremes_points/annual_maxima_refs.csv, the reference of
annual_maxima.parquet for extremes_points.nc run with extremes.year_start_month
= 7 (analysis years from 1 July), with Debian's python3-numpy and
python3-netcdf4 only (no swellgrid code):

    /usr/bin/python3 testdata/extremes_points/make_annual_maxima_refs.py

(from the repository root). Definitions (swellgrid's README, Methods: extremes):
- a step stands for the time until the next step (here every 6 h; the last
  step for the step before it), so a year's valid time is 6 h per step with a
  finite Hm0;
- analysis year y runs from 1 July y to 1 July y+1 (a step of January-June
  belongs to the year before);
- a full year F is the longest analysis year of the record in the file's
  calendar (standard: 366 days when it holds a 29 February), or the largest
  valid time of a year if longer;
- coverage = valid time / F; a year with coverage below 0.8 is left out of the
  GEV ("excluded"); the maximum is the largest Hm0 of the year, the earliest
  on ties (numpy.argmax returns the first), with the Te and Tp of that step.
Values are written as stored (float32, 9 significant digits round-trip).
"""
import datetime as dt

import netCDF4
import numpy as np

START_MONTH = 7
MIN_COVERAGE = 0.8

with netCDF4.Dataset("testdata/extremes_points/extremes_points.nc") as ds:
    tv = ds["time"]
    times = netCDF4.num2date(tv[:], tv.units, tv.calendar, only_use_cftime_datetimes=False)
    hm0 = np.asarray(ds["hm0"][:].filled(np.nan), dtype=np.float32)
    te = np.asarray(ds["te"][:].filled(np.nan), dtype=np.float32)
    tp = np.asarray(ds["tp"][:].filled(np.nan), dtype=np.float32)

hours = np.array([(t - times[0]).total_seconds() / 3600 for t in times])
dur = np.empty_like(hours)
dur[:-1] = np.diff(hours)
dur[-1] = dur[-2]
ayear = np.array([t.year if t.month >= START_MONTH else t.year - 1 for t in times])
years = np.unique(ayear)


def year_hours(y):
    return (dt.datetime(y + 1, START_MONTH, 1) - dt.datetime(y, START_MONTH, 1)).total_seconds() / 3600


rows = []
for s in range(hm0.shape[1]):
    ok = np.isfinite(hm0[:, s])
    valid = {y: dur[(ayear == y) & ok].sum() for y in years}
    covered = {y: dur[ayear == y].sum() for y in years}
    full = max(max(covered[y], year_hours(y)) for y in years)
    for y in years:
        idx = np.flatnonzero((ayear == y) & ok)
        if len(idx) == 0:
            continue
        i = idx[np.argmax(hm0[idx, s])]
        cov = valid[y] / full
        rows.append((s, int(y), times[i].strftime("%Y-%m-%d %H:%M:%S"), hm0[i, s], te[i, s], tp[i, s],
                     valid[y], full, cov, cov < MIN_COVERAGE))

with open("testdata/extremes_points/annual_maxima_refs.csv", "w") as f:
    f.write("# annual maxima of extremes_points.nc, analysis years from 1 July, by make_annual_maxima_refs.py (numpy, netCDF4)\n")
    f.write("cell_id,year,time,hm0_m,te_s,tp_s,valid_hours,full_year_hours,coverage_frac,excluded\n")
    for r in rows:
        f.write("%d,%d,%s,%.9g,%.9g,%.9g,%.17g,%.17g,%.17g,%s\n" % (r[0], r[1], r[2], r[3], r[4], r[5], r[6], r[7], r[8],
                                                                 "true" if r[9] else "false"))
print(len(rows), "rows;", sum(r[9] for r in rows), "excluded")
