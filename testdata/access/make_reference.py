#!/usr/bin/python3
"""Fixture and independent reference of the repair-access waiting time
(stats/climate/access.go, issue 32), with Debian's python3-netcdf4 and
python3-numpy; no swellgrid code.

Invented, synthetic data (no real place): two cells in monthly CF files,
nc/access_2001MM.nc (global attribute synthetic = "yes"):
  cell 0  a known calm/storm pattern: 30 h calm (Hm0 1.0 m) then 18 h of
          storm (Hm0 3.0 m), repeated from 2001-01-01 00:00;
  cell 1  a random sea (fixed seed): an Ornstein-Uhlenbeck variable mapped
          to Hm0 with calm spells of hours to days; Te = 5 + 1.2 Hm0 + noise.
Times: hourly from 2001-01-01 to 2001-03-01, then 3-hourly to 2001-06-01,
with a gap (no steps) from 2001-02-10 06:00 to 2001-02-12 06:00. Each step's
duration follows the time-axis rule of the README (issue 27): w_i = t_{i+1} -
t_i unless a gap follows (then the previous difference); a gap is a
difference above 1.5 times the local step (the larger of the upper quartiles
of the up to 12 differences on each side).

The reference (reference.json), for each cell and access rule:
  rule a  Hm0 < 1.5 m, repair 24 h;
  rule b  Hm0 < 2.0 m and Te < 8 s, repair 12 h.
1. an exact scan on a one-minute grid: a minute is calm when its step is
   calm; rem[x] = calm minutes from x on without a break (a gap breaks);
   instant x is a start when rem[x] >= D; the wait of a failure at x + u
   (0 <= u < 1) is 0 when x and x+1 are starts of one run, else N - x - u
   with N the next start after x (the record's end when none: censored),
   whose integral over the minute is N - x - 1/2. The mean wait is the sum
   over covered minutes over their number; by month of the step.
2. a brute-force Monte Carlo (seed 20261205, 200000 failure instants drawn
   uniformly over the covered time, continuous): the wait to the next start
   interval [a, a + L - D] of each calm run of length L >= D; its mean and
   95 % interval (mean +- 1.96 s / sqrt(n)).
3. for the run of spec.toml (pipelines/engine/access_e2e_test.go): each
   device's power per step by bin lookup in its matrix (the function of
   testdata/e2e/reference.py), its energy by calendar month (sum of w P),
   the availability per month A_m = clip(1 - lambda (W_m + R) / 8766 h)
   with W_m the scan's mean wait, the energy-weighted availability
   sum A_m E_m / sum E_m, the AEP (time-weighted mean power x 8766 h) and
   AEP x availability.
Also series.csv (start minute, duration minutes, month, Hm0, Te per cell)
for the unit test, which does not read NetCDF.
Run: /usr/bin/python3 testdata/access/make_reference.py
"""
import datetime
import json
import math
import os

import importlib.util
import sys

import netCDF4
import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in testdata

HERE = os.path.dirname(os.path.abspath(__file__))
EPOCH = datetime.datetime(2001, 1, 1)
RULES = {"a": (1.5, 0.0, 24.0), "b": (2.0, 8.0, 12.0)}
# spec.toml's devices: (matrix, failures per year, access rule)
DEVICES = {"wec_a": ("device_a.csv", 3.0, "a"), "wec_b": ("device_b.csv", 6.0, "b")}
_spec = importlib.util.spec_from_file_location("e2e_reference", os.path.join(HERE, "..", "e2e", "reference.py"))
E2E = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(E2E)


def times_h():
    t = list(np.arange(0, 59 * 24, 1.0)) + list(np.arange(59 * 24, 151 * 24, 3.0))
    g0, g1 = (40 * 24 + 6), (42 * 24 + 6)
    return np.array([x for x in t if not (g0 <= x < g1)])


def uq(x):
    if len(x) == 0:
        return 0.0
    s = sorted(x)
    return s[math.ceil(0.75 * len(s)) - 1]


def weights(t):
    n = len(t)
    d = np.diff(t)
    gap = np.zeros(n - 1, bool)
    for i in range(n - 1):
        q = max(uq(d[max(0, i - 12):i]), uq(d[i + 1:i + 13]))
        gap[i] = q > 0 and d[i] > 1.5 * q
    w = np.zeros(n)
    for i in range(n):
        if i < n - 1 and not gap[i]:
            w[i] = d[i]
        else:
            w[i] = d[i - 1]  # no gap before a gap or the end in this fixture
    return w


def series(t):
    hm0 = np.zeros((len(t), 2))
    te = np.zeros((len(t), 2))
    ph = np.mod(t, 48.0)
    hm0[:, 0] = np.where(ph < 30, 1.0, 3.0)
    te[:, 0] = np.where(ph < 30, 6.0, 9.0)
    rng = np.random.default_rng(7)
    x, prev = 0.0, t[0]
    for i, ti in enumerate(t):
        dt = ti - prev
        a = math.exp(-dt / 30.0)
        x = a * x + math.sqrt(1 - a * a) * rng.standard_normal()
        prev = ti
        hm0[i, 1] = round(1.8 * math.exp(0.45 * x), 3)
        te[i, 1] = round(5.0 + 1.2 * hm0[i, 1] + 0.6 * rng.standard_normal(), 3)
    return hm0, te


def months(t):
    return np.array([(EPOCH + datetime.timedelta(hours=float(x))).month for x in t])


def minute_scan(start, w, mon, calm, dmin):
    """Exact integral of the wait on a one-minute grid (all times in minutes)."""
    t0, end = start[0], start[-1] + w[-1]
    n = end - t0
    cov = np.zeros(n, bool)
    cm = np.zeros(n, int)
    cl = np.zeros(n, bool)
    for s, ww, m, c in zip(start, w, mon, calm):
        cov[s - t0:s - t0 + ww] = True
        cm[s - t0:s - t0 + ww] = m
        cl[s - t0:s - t0 + ww] = c
    rem = np.zeros(n + 1, np.int64)
    for x in range(n - 1, -1, -1):
        rem[x] = rem[x + 1] + 1 if cl[x] else 0
    startable = rem[:n + 1] >= dmin
    startable[n] = True  # the record's end closes the last stretch (censored)
    nxt = np.zeros(n + 1, np.int64)
    nxt[n] = n
    for x in range(n - 1, -1, -1):
        nxt[x] = x if startable[x] else nxt[x + 1]
    integ = np.zeros(n)
    for x in range(n):
        if not cov[x]:
            continue
        if startable[x] and x + 1 < n + 1 and startable[x + 1] and rem[x] == rem[x + 1] + 1 and x + 1 < n:
            integ[x] = 0.0
            continue
        nn = nxt[x + 1]
        integ[x] = nn - x - 0.5
    # censored: covered time after the last real start instant (the minute
    # that begins at it is not a start after its first instant)
    real = np.nonzero(startable[:n])[0]
    last = real[-1] if len(real) else 0
    cens = int(np.sum(cov[last:]))
    out = {"mean_wait_h": float(integ[cov].sum() / cov.sum() / 60.0), "censored_share": cens / float(cov.sum())}
    mw = []
    for m in range(1, 13):
        k = cov & (cm == m)
        mw.append(float(integ[k].sum() / k.sum() / 60.0) if k.any() else None)
    out["month_wait_h"] = mw
    out["month_hours"] = [float(np.sum(cov & (cm == m))) / 60.0 for m in range(1, 13)]
    return out


def monte_carlo(start, w, calm, dmin, n=200000, seed=20261205):
    """Brute force: random failure instants, wait to the next start interval."""
    # calm runs: contiguous calm steps
    runs, a, e = [], None, None
    for s, ww, c in zip(start, w, calm):
        if c and a is not None and s == e:
            e = s + ww
        else:
            if a is not None:
                runs.append((a, e))
            a, e = (s, s + ww) if c else (None, None)
    if a is not None:
        runs.append((a, e))
    iv = np.array([(ra, rb - dmin) for ra, rb in runs if rb - ra >= dmin], float).reshape(-1, 2)
    end = start[-1] + w[-1]
    rng = np.random.default_rng(seed)
    cw = np.cumsum(w)
    u = rng.uniform(0, cw[-1], n)
    k = np.searchsorted(cw, u, side="right")
    x = start[k] + (u - (cw[k] - w[k]))
    j = np.searchsorted(iv[:, 1], x, side="left") if len(iv) else np.zeros(n, int)
    wait = np.where(j < len(iv), np.maximum(0.0, iv[np.minimum(j, len(iv) - 1), 0] - x), end - x) / 60.0
    m, s = float(wait.mean()), float(wait.std(ddof=1))
    h = 1.96 * s / math.sqrt(n)
    return {"mean_h": m, "lo_h": m - h, "hi_h": m + h, "n": n, "seed": seed}


def write_month(path, t, hm0, te):
    """One CF file of the record (the fixture is split by month, as
    hindcasts are, so that calm runs cross the files' edges)."""
    ds = netCDF4.Dataset(path, "w")
    ds.synthetic = "yes"
    ds.comment = "Invented, synthetic sea states for the repair-access tests of swellgrid (no real place)."
    ds.Conventions = "CF-1.8"
    ds.createDimension("time", len(t))
    ds.createDimension("lat", 1)
    ds.createDimension("lon", 2)
    v = ds.createVariable("time", "f8", ("time",))
    v.units, v.calendar, v.standard_name = "hours since 2001-01-01 00:00:00", "standard", "time"
    v[:] = t
    v = ds.createVariable("lat", "f8", ("lat",))
    v.units, v.standard_name = "degrees_north", "latitude"
    v[:] = [41.0]
    v = ds.createVariable("lon", "f8", ("lon",))
    v.units, v.standard_name = "degrees_east", "longitude"
    v[:] = [20.0, 20.5]
    v = ds.createVariable("hs", "f4", ("time", "lat", "lon"), fill_value=np.float32(-999))
    v.units, v.standard_name = "m", "sea_surface_wave_significant_height"
    v[:] = hm0.reshape(len(t), 1, 2)
    v = ds.createVariable("te", "f4", ("time", "lat", "lon"), fill_value=np.float32(-999))
    v.units = "s"
    v.standard_name = "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"
    v[:] = te.reshape(len(t), 1, 2)
    ds.close()


def main():
    t = times_h()
    w = weights(t)
    hm0, te = series(t)
    mon = months(t)
    start = np.round(t * 60).astype(np.int64)
    wm = np.round(w * 60).astype(np.int64)

    os.makedirs(os.path.join(HERE, "nc"), exist_ok=True)
    for m in sorted(set(mon)):
        k = mon == m
        write_month(os.path.join(HERE, "nc", "access_2001%02d.nc" % m), t[k], hm0[k], te[k])
    # the values as stored (float32), for the unit test and the reference
    hm0 = hm0.astype(np.float32).astype(np.float64)
    te = te.astype(np.float32).astype(np.float64)

    with open(os.path.join(HERE, "series.csv"), "w") as f:
        f.write("# synthetic: invented sea states of testdata/access/nc/ (make_reference.py)\n")
        f.write("start_min,dur_min,month,hm0_0,te_0,hm0_1,te_1\n")
        for i in range(len(t)):
            f.write("%d,%d,%d,%r,%r,%r,%r\n" % (start[i], wm[i], mon[i], hm0[i, 0], te[i, 0], hm0[i, 1], te[i, 1]))

    ref = {"source": "make_reference.py: one-minute scan and Monte Carlo with numpy", "cells": []}
    for c in range(2):
        cell = {}
        for name, (hl, tl, dh) in RULES.items():
            calm = (hm0[:, c] < hl) & ((tl == 0) | (te[:, c] < tl))
            r = minute_scan(start, wm, mon, calm, int(dh * 60))
            r["monte_carlo"] = monte_carlo(start, wm, calm, int(dh * 60))
            cell[name] = r
        ref["cells"].append(cell)
    for c in range(2):
        for name, (mfile, lam, rule) in DEVICES.items():
            dev = E2E.matrix(os.path.join(HERE, "..", "e2e", mfile))
            p, _, _ = E2E.device_power(hm0[:, c], te[:, c], dev)
            e = np.array([np.sum(wm[mon == m] * p[mon == m]) for m in range(1, 13)], float)
            waits = ref["cells"][c][rule]["month_wait_h"]
            rh = RULES[rule][2]
            am = [min(1.0, max(0.0, 1 - lam * (wt + rh) / 8766.0)) if wt is not None else None for wt in waits]
            num = sum(am[m] * e[m] for m in range(12) if am[m] is not None and e[m] > 0)
            den = sum(e[m] for m in range(12) if am[m] is not None and e[m] > 0)
            aep = float(np.sum(wm * p) / np.sum(wm)) * 8766.0 / 1000.0
            ref["cells"][c][name] = {"availability": num / den, "aep_mwh": aep, "energy_available_mwh": aep * num / den,
                                     "month_availability": am, "month_energy_share": [float(x / e.sum()) for x in e]}
    ref["rules"] = {k: {"hm0_m": v[0], "te_s": v[1], "repair_h": v[2]} for k, v in RULES.items()}
    with open(os.path.join(HERE, "reference.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
