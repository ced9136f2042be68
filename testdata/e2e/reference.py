#!/usr/bin/python3
"""Independent computation of the output columns of swellgrid on the bulk
fixture (make_fixture.py), with Debian's python3-netcdf4, python3-numpy and
python3-scipy; no swellgrid code. Writes reference.json (committed), which
pipelines/e2e_columns_test.go compares with every table of a run; the test
reruns this script when the tools are there (always under CI=true).

Definitions (README "Methods"; sources named beside each):
- J = rho g Hm0^2 cg(1/Te, h) / 16, cg = n omega/k from the linear dispersion
  relation omega^2 = g k tanh(k h) solved with scipy.optimize.brentq (IEC TS
  62600-101 bulk approximation; DNV-RP-C205 3.2 for the dispersion relation);
  rho 1025 kg/m3, g 9.81 m/s2.
- Steps are regular (6 h); a step is valid where Hm0, Te (and so J) are
  present; means are over valid steps (time-weighted = equal weights here),
  std is the population std (numpy ddof 0).
- coverage = valid steps / steps of the record span (first to last step).
- percentiles: numpy.percentile; swellgrid reads them off a histogram, so the
  test allows one bin (Hm0 0.05 m; J 1/32 of an octave, 2.2 %).
- dir_mean_deg: circular mean atan2(sum sin, sum cos) (common practice).
- monthly climatology: calendar-month mean of J over the year-months with at
  least coverage_min of their time valid; MVI = (max - min calendar-month
  mean) / annual mean, SVI the same over DJF, MAM, JJA, SON (Cornett 2008);
  interannual_cov = std/mean of the years' mean J (ddof 0).
- device: power of the Hm0 x Te bin holding the sea state (edges half-way
  between centres, IEC TS 62600-100), 0 outside; AEP = mean power * 8766 h
  (365.25 days) / 1000 MWh; CF = mean power / largest matrix power.
- GEV: maximum likelihood fit of the calendar-year maxima of Hm0 with
  scipy.stats.genextreme.fit (shape reported with the Coles sign, -c);
  return level = genextreme.ppf(1 - 1/T); the 95 % delta-method interval from
  the inverse of a finite-difference Hessian of genextreme.nnlf.
Run: /usr/bin/python3 testdata/e2e/reference.py [OUT.json]
"""
import calendar
import glob
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
PERCENTILES = [10.0, 50.0, 90.0, 99.0]
PERIODS = [2.0, 5.0, 10.0]
COVERAGE_MIN = 0.8
HOURS_PER_YEAR = 8766.0


def group_velocity(f, h):
    w = 2 * math.pi * f
    if not (h > 0) or not math.isfinite(h):
        return G / (2 * w)
    y = w * w * h / G
    kh = optimize.brentq(lambda x: x * math.tanh(x) - y, 1e-12, max(y, math.sqrt(y)) + 10, xtol=1e-15, rtol=1e-15, maxiter=200)
    k = kh / h
    n = 0.5 * (1 + 2 * kh / math.sinh(2 * kh)) if kh < 300 else 0.5
    return n * w / k


def read():
    files = sorted(glob.glob(os.path.join(HERE, "bulk", "*.nc")))
    t, hs, te, tp, dr = [], [], [], [], []
    for p in files:
        with netCDF4.Dataset(p) as ds:
            t.append(ds["time"][:].astype(float))
            for lst, name in [(hs, "hs"), (te, "te"), (tp, "tp"), (dr, "mwd")]:
                lst.append(np.ma.filled(ds[name][:].astype(float), np.nan))
            depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
    return np.concatenate(t), np.concatenate(hs), np.concatenate(te), np.concatenate(tp), np.concatenate(dr), depth


def matrix(path):
    rows = [l.strip() for l in open(path) if l.strip() and not l.startswith("#")]
    te = np.array([float(x) for x in rows[0].split(",")[1:]])
    hm = np.array([float(r.split(",")[0]) for r in rows[1:]])
    p = np.array([[float(x) for x in r.split(",")[1:]] for r in rows[1:]])
    return hm, te, p


def edges(c):
    e = (c[1:] + c[:-1]) / 2
    return np.concatenate([[c[0] - (c[1] - c[0]) / 2], e, [c[-1] + (c[-1] - c[-2]) / 2]])


def device_power(hm0, te, dev):
    hc, tc, p = dev
    he, tee = edges(hc), edges(tc)
    i = np.searchsorted(he, hm0, side="right") - 1
    j = np.searchsorted(tee, te, side="right") - 1
    ok = (i >= 0) & (i < len(hc)) & (j >= 0) & (j < len(tc))
    out = np.zeros_like(hm0)
    out[ok] = p[i[ok], j[ok]]
    return out, i < 0, i >= 0


def gev_delta(x, c, loc, scale, T):
    th = np.array([c, loc, scale])

    def nll(v):
        return stats.genextreme.nnlf(v, x)

    hs = np.array([1e-4, 1e-4 * scale, 1e-4 * scale])
    H = np.zeros((3, 3))
    for a in range(3):
        for b in range(3):
            ea, eb = np.eye(3)[a] * hs[a], np.eye(3)[b] * hs[b]
            H[a, b] = (nll(th + ea + eb) - nll(th + ea - eb) - nll(th - ea + eb) + nll(th - ea - eb)) / (4 * hs[a] * hs[b])
    cov = np.linalg.inv(H)
    out = []
    for T_ in T:
        q = 1 - 1 / T_
        f = lambda v: stats.genextreme.ppf(q, v[0], loc=v[1], scale=v[2])
        g = np.array([(f(th + np.eye(3)[a] * hs[a]) - f(th - np.eye(3)[a] * hs[a])) / (2 * hs[a]) for a in range(3)])
        se = math.sqrt(g @ cov @ g)
        rl = f(th)
        out.append((rl, rl - 1.959963984540054 * se, rl + 1.959963984540054 * se))
    return out


def main():
    t, hs, te, tp, dr, depth = read()
    dates = np.datetime64("2001-01-01T00") + t.astype("timedelta64[h]")
    years = dates.astype("datetime64[Y]").astype(int) + 1970
    months = dates.astype("datetime64[M]").astype(int) % 12 + 1
    span = int(round((t[-1] - t[0]) / 6)) + 1
    devs = {n: matrix(os.path.join(HERE, "device_%s.csv" % n[-1])) for n in ["wec_a", "wec_b"]}
    ny, nx = depth.shape
    cells, monthly = [], []
    for cid in range(ny * nx):
        j, i = divmod(cid, nx)
        h, e, p, d = hs[:, j, i], te[:, j, i], tp[:, j, i], dr[:, j, i]
        h_ = depth[j, i]
        cg = np.array([group_velocity(1 / x, h_) if np.isfinite(x) else np.nan for x in e])
        J = RHO * G * h ** 2 * cg / 16 / 1000  # kW/m
        v = np.isfinite(J)
        Jv, hv = J[v], h[v]
        c = {"cell_id": cid, "depth_m": h_, "steps": int(len(t)), "coverage": float(v.sum()) / span,
             "power_mean_kw_m": Jv.mean(), "power_std_kw_m": Jv.std(), "power_max_kw_m": Jv.max(),
             "hm0_mean_m": hv.mean(), "hm0_max_m": hv.max(), "te_mean_s": np.nanmean(e), "tp_mean_s": np.nanmean(p)}
        c["power_cov"] = c["power_std_kw_m"] / c["power_mean_kw_m"]
        for q in PERCENTILES:
            c["power_p%g_kw_m" % q] = float(np.percentile(Jv, q))
            c["hm0_p%g_m" % q] = float(np.percentile(hv, q))
        rad = np.radians(d[np.isfinite(d)])
        c["dir_mean_deg"] = math.degrees(math.atan2(np.sin(rad).sum(), np.cos(rad).sum())) % 360
        # year-months, climatology, indices
        mJ = {m: [] for m in range(1, 13)}
        yJ = {}
        for y in range(2001, 2013):
            for m in range(1, 13):
                sel = (years == y) & (months == m)
                nom = calendar.monthrange(y, m)[1] * 4
                vs = sel & v
                cov = vs.sum() / nom
                row = {"cell_id": cid, "year": y, "month": m, "coverage": cov, "valid_hours": 6.0 * vs.sum(),
                       "power_mean_kw_m": J[vs].mean() if vs.any() else None,
                       "hm0_mean_m": h[sel & np.isfinite(h)].mean() if (sel & np.isfinite(h)).any() else None,
                       "excluded": bool(cov < COVERAGE_MIN)}
                monthly.append(row)
                if cov >= COVERAGE_MIN:
                    mJ[m].append(J[vs])
                    yJ.setdefault(y, []).append(J[vs])
        monthJ = {m: np.concatenate(mJ[m]).mean() for m in mJ}
        annual = np.concatenate([x for m in mJ for x in mJ[m]]).mean()
        c["mvi"] = (max(monthJ.values()) - min(monthJ.values())) / annual
        seas = [np.concatenate([x for m in ms for x in mJ[m]]).mean() for ms in ([12, 1, 2], [3, 4, 5], [6, 7, 8], [9, 10, 11])]
        c["svi"] = (max(seas) - min(seas)) / annual
        ym = np.array([np.concatenate(yJ[y]).mean() for y in sorted(yJ)])
        c["interannual_cov"] = ym.std() / ym.mean()
        for name, dev in devs.items():
            pw, below, _ = device_power(h[v], e[v], dev)
            mean_kw = pw.mean()
            c["aep_%s_mwh" % name] = mean_kw * HOURS_PER_YEAR / 1000
            c["cf_%s" % name] = mean_kw / dev[2].max()
        # GEV on calendar-year maxima
        mx = np.array([h[(years == y) & np.isfinite(h)].max() for y in range(2001, 2013)])
        cc, loc, scale = stats.genextreme.fit(mx)
        c.update({"gev_loc_m": loc, "gev_scale_m": scale, "gev_shape": -cc, "gev_years": len(mx)})
        for T, (rl, lo, hi) in zip(PERIODS, gev_delta(mx, cc, loc, scale, PERIODS)):
            tag = "%g" % T
            c["hm0_rl%sy_m" % tag], c["hm0_rl%sy_lo_m" % tag], c["hm0_rl%sy_hi_m" % tag] = rl, lo, hi
        c["gpd_threshold_m"] = float(np.percentile(hv, 99))
        cells.append({k: (float(x) if isinstance(x, (float, np.floating)) else x) for k, x in c.items()})
    ref = {"source": "testdata/e2e/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "cells": cells, "monthly": monthly}
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True, default=float)
        f.write("\n")


if __name__ == "__main__":
    main()
