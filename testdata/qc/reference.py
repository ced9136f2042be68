#!/usr/bin/python3
"""Reference for pipelines/engine/qc_counts_test.go, computed from testdata/qc/qc_bulk.nc
read with Debian's python3-netcdf4, independently of swellgrid (numpy 1.24,
scipy 1.10 on Debian 12).

The rule checked (the README's "invalid_values"; the bounds are the state's,
stats/climate/fixed.go, and beyond any sea state: common practice): a value
present in the file (not _FillValue, not NaN) is unusable when
  - Hm0, Te or Tp is negative, infinite, or 64 m / 64 s or more;
  - the direction is infinite;
it is counted in invalid_values and left out of every statistic; a step whose
Hm0 or Te is unusable has no wave power either. Then per cell:
  hm0_mean_m, hm0_max_m, te_mean_s, tp_mean_s over the usable values;
  power_mean_kw_m: J = rho g Hm0^2 cg(1/Te, h) / 16 over the steps with usable
    Hm0 and Te > 0 (cg from the linear dispersion relation solved with
    scipy.optimize.brentq; rho 1025 kg/m3, g 9.81 m/s2), coverage the share
    of the steps with such a J;
  gev_loc_m, gev_scale_m, gev_shape: scipy.stats.genextreme.fit of the
    calendar-year maxima of the usable Hm0 (shape with the Coles sign, -c);
and for cell 0 the 95 % parametric-bootstrap interval of the 5-, 10- and
25-year levels (extremes.bootstrap): B samples of the fitted GEV drawn with
numpy's default_rng, refitted with genextreme.fit, ends by numpy.percentile
("inverted_cdf"), each with the 99.9 % Monte Carlo band of its order
statistics (as testdata/extremes/make_bootstrap_refs.py).
Run: /usr/bin/python3 testdata/qc/reference.py [OUT]  (default
testdata/qc/reference.json)
"""
import json
import math
import os
import sys

import netCDF4
import numpy as np
import scipy
from scipy import optimize, stats

HERE = os.path.dirname(os.path.abspath(__file__))
RHO, G = 1025.0, 9.81
LIMIT = 64.0
BOOT_B, BOOT_PERIODS = 1000, [5.0, 10.0, 25.0]


def group_velocity(f, h):
    w = 2 * math.pi * f
    y = w * w * h / G
    kh = optimize.brentq(lambda x: x * math.tanh(x) - y, 1e-12, max(y, math.sqrt(y)) + 10, xtol=1e-15, rtol=1e-15, maxiter=200)
    k = kh / h
    n = 0.5 * (1 + 2 * kh / math.sinh(2 * kh)) if kh < 300 else 0.5
    return n * w / k


def bootstrap(mx, c, loc, scale):
    rng = np.random.default_rng(20261202)
    samples = [[] for _ in BOOT_PERIODS]
    for _ in range(BOOT_B):
        y = stats.genextreme.rvs(c, loc=loc, scale=scale, size=len(mx), random_state=rng)
        bc, bl, bs = stats.genextreme.fit(y, c, loc=loc, scale=scale)
        for i, T in enumerate(BOOT_PERIODS):
            samples[i].append(stats.genextreme.ppf(1 - 1 / T, bc, loc=bl, scale=bs))
    rows = []
    for i, T in enumerate(BOOT_PERIODS):
        s = np.sort(samples[i])
        n = len(s)
        ends = []
        for p in (0.025, 0.975):
            half = 3.29 * math.sqrt(n * p * (1 - p))
            lo, hi = int(max(0, math.floor(n * p - half))), int(min(n - 1, math.ceil(n * p + half)))
            ends.append({"value": float(np.percentile(s, 100 * p, method="inverted_cdf")), "band": [float(s[lo]), float(s[hi])]})
        rows.append({"cell_id": 0, "return_period_y": T, "ends": ends})
    return {"B": BOOT_B, "seed_note": "numpy default_rng(20261202); swellgrid's own seed differs", "levels": rows}


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with netCDF4.Dataset(os.path.join(HERE, "qc_bulk.nc")) as ds:
        t = ds["time"][:].astype(float)
        raw = {n: np.ma.filled(ds[n][:].astype(float), np.nan) for n in ["hs", "te", "tp", "mwd"]}
        depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
    years = (np.datetime64("2001-01-01T00") + t.astype("timedelta64[h]")).astype("datetime64[Y]").astype(int) + 1970
    ny, nx = depth.shape
    cells = []
    for cid in range(ny * nx):
        j, i = divmod(cid, nx)
        v = {n: raw[n][:, j, i] for n in raw}
        present = {n: ~np.isnan(v[n]) for n in v}
        usable = {n: present[n] & (v[n] >= 0) & (v[n] < LIMIT) for n in ["hs", "te", "tp"]}
        usable["mwd"] = present["mwd"] & np.isfinite(v["mwd"])
        invalid = int(sum((present[n] & ~usable[n]).sum() for n in v))
        h, e, p = v["hs"], v["te"], v["tp"]
        pw = usable["hs"] & usable["te"] & (e > 0)
        cg = np.array([group_velocity(1 / x, depth[j, i]) for x in e[pw]])
        J = RHO * G * h[pw] ** 2 * cg / 16 / 1000  # kW/m
        mx = np.array([h[(years == y) & usable["hs"]].max() for y in range(2001, 2013)])
        cc, loc, scale = stats.genextreme.fit(mx)
        if cid == 0:
            boot = bootstrap(mx, cc, loc, scale)
        cells.append({
            "cell_id": cid, "invalid_values": invalid,
            "hm0_mean_m": float(h[usable["hs"]].mean()), "hm0_max_m": float(h[usable["hs"]].max()),
            "te_mean_s": float(e[usable["te"]].mean()), "tp_mean_s": float(p[usable["tp"]].mean()),
            "power_mean_kw_m": float(J.mean()), "coverage": float(pw.sum()) / len(t),
            "gev_loc_m": float(loc), "gev_scale_m": float(scale), "gev_shape": float(-cc),
        })
    ref = {"source": "testdata/qc/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "cells": cells, "bootstrap": boot}
    with open(out, "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


if __name__ == "__main__":
    main()
