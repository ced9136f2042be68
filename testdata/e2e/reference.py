#!/usr/bin/python3
"""Independent computation of the output columns of swellgrid on the bulk
fixture (make_fixture.py), with Debian's python3-netcdf4, python3-numpy and
python3-scipy; no swellgrid code. Writes reference.json (committed), which
pipelines/engine/e2e_columns_test.go compares with every table of a run; the test
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
  the inverse of a finite-difference Hessian of genextreme.nnlf; the 95 %
  profile-likelihood interval (gev_profile).
- GPD on declustered storm peaks (storm_peaks) above the grouped-data 99 %
  quantile of Hm0 (grouped_percentile), rate per valid year of 8766 h;
  return levels, profile and delta intervals, associated Te/Tp (extras);
  threshold diagnostics over the quantile ladder.
- device energy shares (device_classes), depth limit 0.6 x depth, joint
  occurrence (scatter), exceedance curves on the histogram edges
  (exceedance), weather windows (windows), calendar-month and season rows,
  IFORM design contours (design).
- year by year (annual): per calendar year (the spec's analysis year) the
  mean J of its valid steps, valid hours (6 h a step), the year's hours
  (calendar.isleap), coverage_frac = valid / year hours, excluded below
  coverage_min; each device's energy = mean device power over the year's
  steps with Hm0 and Te x the year's hours / 1000 MWh;
  interannual_std_kw_m = numpy.std(ddof=1) of the complete years' mean J.
- monthly device yield (monthly_yield): per device, each year-month's mean
  device power over its steps with Hm0 and Te, valid hours (6 h a step),
  the month's hours (calendar.monthrange), coverage_frac = valid / hours,
  excluded below coverage_min or without data, energy = mean power x hours /
  1000 MWh; the calendar-month rows pool the device power of the included
  year-months (mean of their steps), times the mean hours of those months,
  coverage_frac = included / year-months with data, years_used = included.
- AEP bands (aep_bands): over the complete years, interannual_frac =
  std(ddof=1) / mean of the years' mean device power; u_record =
  interannual / sqrt(years), u_future = interannual / sqrt(horizon),
  u_model = 0.10 (the spec's default, uncertainty.model_frac), u_total =
  sqrt(u_record^2 + u_future^2 + u_model^2) (independent errors, JCGM 100
  "GUM" 5.1.2, from memory); P90 = P50 (1 - z u_total) with z =
  scipy.stats.norm.ppf(0.9), P99 with norm.ppf(0.99) (common practice in
  energy-yield assessment, from memory); P50 = the AEP; horizons 1 and 10
  years (the spec's default uncertainty.horizons_y).
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
HORIZONS = [1.0, 10.0]  # uncertainty.horizons_y, the spec's default
MODEL_FRAC = 0.10  # uncertainty.model_frac, the spec's default


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


CHI2_95 = 3.841458820694124  # scipy.stats.chi2.ppf(0.95, 1)
Z975 = 1.959963984540054
HM0_RES = 0.05
LADDER = [0.95, 0.96, 0.97, 0.98, 0.99, 0.995]
SEP_H = 48.0
MAX_PEAKS_PER_YEAR = 50
BREAKING_RATIO = 0.6
SC_H, SC_HMAX, SC_T, SC_TMAX = 0.5, 10.0, 1.0, 20.0
WIN_LIMITS = [1.5, 2.0, 2.5]
WIN_DURS = [6.0, 12.0, 24.0, 48.0]
DESIGN_PERIODS = [1.0, 10.0, 50.0, 100.0]
DESIGN_POINTS = 36
DT_H = 6.0


def grouped_percentile(x, p, res=HM0_RES):
    """Percentile of grouped data: the value where the cumulative count of the
    histogram (bins of res) reaches p/100 of the total, linear within the bin
    (uniform density in a bin; common practice for grouped data), clamped to
    the sample's range."""
    b = np.floor(x / res).astype(int)
    counts = np.bincount(b)
    target = p / 100.0 * len(x)
    cum = np.cumsum(counts)
    i = int(np.argmax(cum >= target))
    before = cum[i] - counts[i]
    v = i * res + res * (target - before) / counts[i]
    return float(min(max(v, x.min()), x.max()))


def storm_peaks(t, h, te, tp):
    """Declustered storm peaks: a finite step whose Hm0 is strictly larger than
    every Hm0 less than SEP_H before it and not smaller than any less than
    SEP_H after it (separation-time criterion, common practice; Coles 2001,
    5.3.2)."""
    ok = np.isfinite(h)
    t, h, te, tp = t[ok], h[ok], te[ok], tp[ok]
    n = len(t)
    peak = np.ones(n, bool)
    for k in range(1, int(SEP_H / DT_H) + 2):
        # earlier neighbours
        near = np.zeros(n, bool)
        near[k:] = (t[k:] - t[:-k]) < SEP_H
        peak[k:] &= ~near[k:] | (h[k:] > h[:-k])
        # later neighbours
        near = np.zeros(n, bool)
        near[:-k] = (t[k:] - t[:-k]) < SEP_H
        peak[:-k] &= ~near[:-k] | (h[:-k] >= h[k:])
    t, h, te, tp = t[peak], h[peak], te[peak], tp[peak]
    # at most MAX_PEAKS_PER_YEAR peaks per calendar year are kept, the
    # largest (the bounded state of README "Storm peaks"; earlier wins ties)
    yr = (np.datetime64("2001-01-01T00") + t.astype("timedelta64[h]")).astype("datetime64[Y]").astype(int)
    keep = np.zeros(len(t), bool)
    for y in np.unique(yr):
        idx = np.nonzero(yr == y)[0]
        order = sorted(idx, key=lambda i: (-h[i], t[i]))
        keep[order[:MAX_PEAKS_PER_YEAR]] = True
    return t[keep], h[keep], te[keep], tp[keep]


def hessian(f, x, rel=1e-4):
    x = np.asarray(x, float)
    hs = rel * np.maximum(np.abs(x), 1e-2)
    n = len(x)
    H = np.zeros((n, n))
    E = np.eye(n)
    for a in range(n):
        for b in range(n):
            ea, eb = E[a] * hs[a], E[b] * hs[b]
            H[a, b] = (f(x + ea + eb) - f(x + ea - eb) - f(x - ea + eb) + f(x - ea - eb)) / (4 * hs[a] * hs[b])
    return H


def gpd_fit(exc):
    """GPD maximum likelihood (scipy.stats.genpareto.fit, location 0) with the
    covariance of (scale, shape) from a finite-difference observed information."""
    c, _, s = stats.genpareto.fit(exc, floc=0)
    nll = lambda v: stats.genpareto.nnlf((v[1], 0, v[0]), exc)
    # polish (scipy's fit stops at its optimiser's default tolerance)
    r = optimize.minimize(nll, [s, c], method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 20000})
    s, c = r.x
    cov = np.linalg.inv(hessian(nll, [s, c]))
    return s, c, cov, -r.fun


def gpd_level(u, s, c, lam, T):
    """x_T = u + sigma/xi [(lambda T)^xi - 1] (Coles 2001, eq. 4.12)."""
    m = lam * T
    return u + s * math.log(m) if abs(c) < 1e-12 else u + s / c * (m ** c - 1)


def gpd_profile(u, exc, s, c, lam, T, ll_max, limit):
    """95 % profile-likelihood interval of x_T with lambda fixed (Coles 2001,
    4.3.3): sigma = (x_T - u) xi / ((lambda T)^xi - 1), maximised over xi."""
    m = lam * T

    def prof(z):
        def nll(xi):
            sig = (z - u) * math.log(m) if abs(xi) < 1e-9 else (z - u) * xi / (m ** xi - 1)
            if not sig > 0:
                return 1e300
            v = stats.genpareto.nnlf((xi, 0, sig), exc)
            return v if math.isfinite(v) else 1e300
        best = optimize.minimize_scalar(nll, bounds=(-1.5, 1.5), method="bounded", options={"xatol": 1e-10})
        return 2 * (best.fun + ll_max) - CHI2_95

    z0 = gpd_level(u, s, c, lam, T)
    return profile_ends(prof, z0, u + 1e-9, limit, 0.05 * s)


def profile_ends(dev, z0, lo_bound, hi_bound, step):
    """Where dev(z) = 2 (l_max - l_p(z)) - chi2 crosses 0 either side of z0;
    lo_bound when it stays below 0 down to lo_bound, None (open) above hi_bound."""
    out = []
    for sgn, bound in ((-1, lo_bound), (1, hi_bound)):
        a, z = z0, z0
        end = None
        while True:
            z = z + sgn * step
            if (sgn < 0 and z <= bound) or (sgn > 0 and z >= bound):
                if sgn < 0 and dev(bound) < 0:
                    end = bound
                elif sgn < 0:
                    end = optimize.brentq(dev, bound, a, xtol=1e-10)
                break
            if dev(z) > 0:
                end = optimize.brentq(dev, min(a, z), max(a, z), xtol=1e-10)
                break
            a = z
            step *= 1.3
        out.append(end)
    return out


def gev_profile(x, c, loc, scale, T, ll_max, limit):
    """95 % profile-likelihood interval of the T-year GEV level (Coles 2001,
    3.3.3): loc = z_T - scale ((-log(1-1/T))^(-xi) - 1)/xi, maximised over
    (scale, xi) with scipy's Nelder-Mead on scipy's genextreme.nnlf."""
    yp = -math.log(1 - 1 / T)
    state = {"x0": np.array([math.log(scale), -c])}

    def prof(z):
        def nll(p):
            sig, xi = math.exp(p[0]), p[1]
            a = -math.log(yp) if abs(xi) < 1e-9 else (yp ** (-xi) - 1) / xi
            v = stats.genextreme.nnlf((-xi, z - sig * a, sig), x)
            return v if math.isfinite(v) else 1e300
        x0 = state["x0"].copy()
        for _ in range(60):
            if nll(x0) < 1e299:
                break
            x0[0] += 0.25
        r = optimize.minimize(nll, x0, method="Nelder-Mead", options={"xatol": 1e-9, "fatol": 1e-10, "maxiter": 20000})
        return 2 * (r.fun + ll_max) - CHI2_95

    z0 = stats.genextreme.ppf(1 - 1 / T, c, loc=loc, scale=scale)
    lo, hi = profile_ends(prof, z0, 0.0, limit, 0.05 * scale)
    return max(lo, 0.0), hi


def windows(t, h, years, months, v_h):
    """Weather windows: maximal spells of consecutive 6-hourly steps (no gap
    between them) with a valid Hm0 below the limit, lasting at least the
    duration; a window is counted in the month its first step falls in and
    its time credited to the months of its steps (DNV-ST-N001 weather-window
    definition in its simplest persistence form; common practice)."""
    rows = []
    cont = np.concatenate([[False], np.diff(t) == DT_H])
    valid_h = {m: DT_H * (v_h & (months == m)).sum() for m in range(1, 13)}
    meq = {m: 0.0 for m in range(1, 13)}
    for y in range(2001, 2013):
        for m in range(1, 13):
            n = (v_h & (years == y) & (months == m)).sum()
            if n:
                meq[m] += min(1.0, n * DT_H / (calendar.monthrange(y, m)[1] * 24))
    for lim in WIN_LIMITS:
        calm = v_h & (np.nan_to_num(h, nan=1e9) < lim)
        spells, cur = [], []
        for i in range(len(t)):
            if calm[i] and (cur and cont[i]):
                cur.append(i)
            else:
                if cur:
                    spells.append(cur)
                cur = [i] if calm[i] else []
        if cur:
            spells.append(cur)
        for dur in WIN_DURS:
            hours = {m: 0.0 for m in range(1, 13)}
            count = {m: 0 for m in range(1, 13)}
            for sp in spells:
                if len(sp) * DT_H >= dur:
                    count[int(months[sp[0]])] += 1
                    for i in sp:
                        hours[int(months[i])] += DT_H
            for m in range(1, 13):
                vh = valid_h[m]
                rows.append({"hm0_limit_m": lim, "min_duration_h": dur, "month": m, "window_hours": hours[m],
                             "valid_hours": vh, "fraction_in_windows": min(1.0, hours[m] / vh) if vh else None,
                             "windows": count[m], "windows_per_month": count[m] / meq[m] if vh else None})
    return rows


def power_edges():
    """Lower edges of the power histogram (32 bins per doubling above 1 kW/m,
    32 bins of 1/32 below; README "Methods")."""
    e = [i / 32 for i in range(32)]
    for o in range(15):
        e += [2.0 ** o * (1 + k / 32) for k in range(32)]
    return np.array(e + [2.0 ** 15])


def exceedance(x, edges, name):
    rows = []
    for v in edges:
        share = float((x >= v).mean())
        rows.append({"variable": name, "value": float(v), "share_exceeded": share})
        if v > x.max() or share == 0:
            break
    return rows


def scatter(h, e, J):
    nh, nt = int(math.ceil(SC_HMAX / SC_H - 1e-9)) + 1, int(math.ceil(SC_TMAX / SC_T - 1e-9)) + 1
    r = np.minimum(np.floor(h / SC_H).astype(int), nh - 1)
    c = np.minimum(np.floor(e / SC_T).astype(int), nt - 1)
    rows = []
    for a in range(nh):
        for b in range(nt):
            sel = (r == a) & (c == b)
            n = sel.sum()
            if n:
                rows.append({"hm0_lo_m": a * SC_H, "hm0_hi_m": (a + 1) * SC_H if a < nh - 1 else None,
                             "te_lo_s": b * SC_T, "te_hi_s": (b + 1) * SC_T if b < nt - 1 else None,
                             "hours": DT_H * n, "time_share": n / len(h), "power_mean_kw_m": J[sel].mean()})
    return rows


def weibull3_grouped(h):
    """3-parameter Weibull by maximum likelihood on the Hm0 histogram (bins
    of 0.05 m): maximise sum_k n_k log[F(e_k+1) - F(e_k)] (grouped-data ML,
    Kendall and Stuart vol. 2; README "Design sea states"), scipy's
    weibull_min.cdf and Nelder-Mead, started from scipy's fit to the raw
    values, the location kept below the upper edge of the lowest occupied bin.
    The raw-value fit itself is kept as design_raw_* (reference only)."""
    b = np.floor(h / HM0_RES).astype(int)
    counts = np.bincount(b)
    occ = np.nonzero(counts)[0]
    lo_e, hi_e = occ * HM0_RES, (occ + 1) * HM0_RES
    n = counts[occ]
    top = hi_e[0]

    def nll(p):
        k, loc, lam = p
        if not (k > 0 and lam > 0 and loc < top):
            return 1e300
        pr = stats.weibull_min.cdf(hi_e, k, loc=loc, scale=lam) - stats.weibull_min.cdf(lo_e, k, loc=loc, scale=lam)
        if np.any(pr <= 0):
            return 1e300
        return -float(np.sum(n * np.log(pr)))

    x0 = stats.weibull_min.fit(h, 1.5, loc=0.9 * h.min(), scale=h.std())
    r = optimize.minimize(nll, x0, method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-10, "maxiter": 40000})
    return tuple(r.x)


def lnte_grouped(te):
    """Normal law of ln Te in one Hm0 row by maximum likelihood on the row's
    1 s Te counts (grouped data; the bin from 0 and the open column beyond
    20 s censored), scipy.stats.norm.cdf and Nelder-Mead from the raw moments."""
    c = np.minimum(np.floor(te / SC_T).astype(int), int(SC_TMAX / SC_T))
    n = np.bincount(c)
    j = np.nonzero(n)[0]
    lo = np.where(j == 0, -np.inf, np.log(np.maximum(j, 1e-300) * SC_T))
    hi = np.where(j == int(SC_TMAX / SC_T), np.inf, np.log((j + 1) * SC_T))
    w = n[j]

    def nll(p):
        m, ls = p
        sd = math.exp(ls)
        pr = stats.norm.cdf((hi - m) / sd) - stats.norm.cdf((lo - m) / sd)
        if np.any(pr <= 0):
            return 1e300
        return -float(np.sum(w * np.log(pr)))

    l = np.log(te)
    r = optimize.minimize(nll, [l.mean(), math.log(max(l.std(), 1e-3))], method="Nelder-Mead",
                          options={"xatol": 1e-10, "fatol": 1e-10, "maxiter": 20000})
    return r.x[0], math.exp(r.x[1])


def design(h_all, e_all):
    """IFORM environmental contours (Winterstein et al. 1993; DNV-RP-C205
    3.6.3, 3.7.2) of a joint model: Hm0 a 3-parameter Weibull fitted by
    grouped-data maximum likelihood (weibull3_grouped), ln Te given Hm0 normal
    with mean a0 + a1 h^a2 and std b0 + b1 exp(-b2 h), fitted by weighted least
    squares (scipy.optimize.curve_fit) to the mean and std of ln Te in Hm0 rows
    of 0.5 m (rows with under 1e-4 of the time and the open top row left out;
    each row's law by lnte_grouped, its Hm0 the mean of the 0.05 m histogram's
    mid-points inside it)."""
    ok = np.isfinite(h_all) & np.isfinite(e_all)
    h_ = h_all[np.isfinite(h_all)]
    k, loc, lam = weibull3_grouped(h_)
    hh, ee = h_all[ok], e_all[ok]
    r = np.floor(hh / SC_H).astype(int)
    hb = np.floor(h_ / HM0_RES).astype(int)
    mids, hcounts = (np.arange(hb.max() + 1) + 0.5) * HM0_RES, np.bincount(hb)
    rows = []
    for a in range(int(SC_HMAX / SC_H)):
        sel = r == a
        if sel.sum() >= 1e-4 * len(hh) and sel.sum() > 1:
            m, sd = lnte_grouped(ee[sel])
            inrow = (mids >= a * SC_H) & (mids < (a + 1) * SC_H)
            hmean = np.sum(mids[inrow] * hcounts[inrow]) / hcounts[inrow].sum()
            rows.append((hmean, m, sd, sel.sum()))
    rows = np.array(rows)
    w = rows[:, 3] / rows[:, 3].sum()
    (a0, a1, a2), _ = optimize.curve_fit(lambda x, a0, a1, a2: a0 + a1 * x ** a2, rows[:, 0], rows[:, 1], p0=[rows[0, 1], 0.5, 0.5],
                                         sigma=1 / np.sqrt(w), bounds=([-np.inf, -np.inf, 0], [np.inf, np.inf, np.inf]), maxfev=20000)
    (b0, b1, b2), _ = optimize.curve_fit(lambda x, b0, b1, b2: b0 + b1 * np.exp(-b2 * x), rows[:, 0], rows[:, 2], p0=[0.05, 0.1, 0.3],
                                         sigma=1 / np.sqrt(w), bounds=([0, -np.inf, 0], [np.inf, np.inf, np.inf]), maxfev=20000)
    mu = lambda x: a0 + a1 * x ** a2
    sd = lambda x: b0 + b1 * math.exp(-b2 * x)
    out = []
    for T in DESIGN_PERIODS:
        beta = stats.norm.ppf(1 - DT_H / (T * HOURS_PER_YEAR))
        pts = []
        for i in range(DESIGN_POINTS):
            th = 2 * math.pi * i / DESIGN_POINTS
            u1, u2 = beta * math.cos(th), beta * math.sin(th)
            x = stats.weibull_min.ppf(stats.norm.cdf(u1), k, loc=loc, scale=lam)
            pts.append((float(x), float(math.exp(mu(x) + sd(x) * u2))))
        xl = float(stats.weibull_min.ppf(stats.norm.cdf(beta), k, loc=loc, scale=lam))
        out.append((T, xl, float(math.exp(mu(xl))), pts))
    return out


def device_classes(hm0, te, dev):
    """Power and class of each sea state: below cut-in under the lowest Hm0
    edge or where the bin's power is 0, outside beyond the other edges, at
    rated where the power reaches the largest matrix entry (IEC TS 62600-100
    bins, edges half-way between centres)."""
    hc, tc, p = dev
    he, tee = edges(hc), edges(tc)
    i = np.searchsorted(he, hm0, side="right") - 1
    j = np.searchsorted(tee, te, side="right") - 1
    below = i < 0
    outside = ~below & ((i >= len(hc)) | (j < 0) | (j >= len(tc)))
    inside = ~below & ~outside
    pw = np.zeros_like(hm0)
    pw[inside] = p[i[inside], j[inside]]
    below |= inside & (pw == 0)
    above = inside & (pw >= p.max() * (1 - 1e-12))
    return above, below & ~above, outside


def extras(cid, t, h, e, p, J, v, depth, years, months, mJ, mx, gev, devs, c, tables):
    out = {}
    vh = np.isfinite(h)
    hv = h[vh]
    # devices: shares of the incident energy (sum of J dt over steps with Hm0, Te, J valid)
    for name, dev in devs.items():
        sel = vh & np.isfinite(e) & v
        above, below, outside = device_classes(h[sel], e[sel], dev)
        Js = J[sel]
        out["above_rated_%s" % name] = Js[above].sum() / Js.sum()
        out["below_cutin_%s" % name] = Js[below].sum() / Js.sum()
        out["energy_outside_matrix_%s_frac" % name] = Js[outside].sum() / Js.sum()
    out["hm0_depth_limit_m"] = BREAKING_RATIO * depth if math.isfinite(depth) and depth > 0 else None
    limit = 3 * hv.max()

    # GPD on declustered storm peaks above the 99 % grouped quantile of Hm0
    u = grouped_percentile(hv, 99)
    pt, ph, pte, ptp = storm_peaks(t, h, e, p)
    sel = ph > u
    exc = ph[sel] - u
    rec_years = vh.sum() * DT_H / HOURS_PER_YEAR
    lam = sel.sum() / rec_years
    s, xi, cov, ll = gpd_fit(exc)
    out.update({"gpd_threshold_m": u, "gpd_scale_m": s, "gpd_shape": xi, "gpd_peaks_per_year": lam})
    # associated periods: ln T = A + B ln Hm0, least squares over the exceeding peaks (numpy.polyfit)
    assoc = {}
    for nm, per in (("te", pte[sel]), ("tp", ptp[sel])):
        ok = per > 0
        B, A = np.polyfit(np.log(ph[sel][ok]), np.log(per[ok]), 1)
        assoc[nm] = (A, B)
    at = lambda nm, z: math.exp(assoc[nm][0] + assoc[nm][1] * math.log(z))
    gpd_rows = []  # after the GEV rows, as in extremes.parquet
    for T in PERIODS:
        tag = "%g" % T
        z = gpd_level(u, s, xi, lam, T)
        lo, hi = gpd_profile(u, exc, s, xi, lam, T, ll, limit)
        # delta method with the Poisson variance of lambda (Coles 2001, 4.3.3)
        m = lam * T
        g = np.array([s * T * m ** (xi - 1), (m ** xi - 1) / xi, -s / xi ** 2 * (m ** xi - 1) + s / xi * m ** xi * math.log(m)])
        V = np.zeros((3, 3))
        V[0, 0] = lam ** 2 / sel.sum()
        V[1:, 1:] = cov
        sd = math.sqrt(g @ V @ g)
        out["hm0_pot_rl%sy_m" % tag], out["hm0_pot_rl%sy_lo_m" % tag], out["hm0_pot_rl%sy_hi_m" % tag] = z, lo, hi
        gpd_rows.append({"cell_id": cid, "method": "gpd_storm_peaks", "return_period_y": T, "hm0_m": z,
                                   "hm0_lo_m": lo, "hm0_hi_m": hi, "hm0_delta_lo_m": max(z - Z975 * sd, u),
                                   "hm0_delta_hi_m": z + Z975 * sd, "te_s": at("te", z), "tp_s": at("tp", z),
                                   "loc_or_threshold_m": u, "scale_m": s, "shape": xi, "n": int(sel.sum()),
                                   "hm0_boot_lo_m": None, "hm0_boot_hi_m": None})  # no bootstrap asked
    # GEV: profile-likelihood intervals and associated periods of the levels
    cc, loc, scale = gev
    llg = -stats.genextreme.nnlf((cc, loc, scale), mx)
    for T in PERIODS:
        tag = "%g" % T
        z = c["hm0_rl%sy_m" % tag]
        lo, hi = gev_profile(mx, cc, loc, scale, T, llg, limit)
        out["hm0_rl%sy_lo_m" % tag], out["hm0_rl%sy_hi_m" % tag] = lo, hi
        out["te_rl%sy_s" % tag] = at("te", z)
        tables["extremes"].append({"cell_id": cid, "method": "gev_annual_maxima", "return_period_y": T, "hm0_m": z,
                                   "hm0_lo_m": lo, "hm0_hi_m": hi, "hm0_delta_lo_m": max(c["hm0_delta_rl%sy_lo_m" % tag], 0),
                                   "hm0_delta_hi_m": c["hm0_delta_rl%sy_hi_m" % tag], "te_s": at("te", z), "tp_s": at("tp", z),
                                   "loc_or_threshold_m": loc, "scale_m": scale, "shape": -cc, "n": len(mx),
                                   "hm0_boot_lo_m": None, "hm0_boot_hi_m": None})
    tables["extremes"].extend(gpd_rows)
    # threshold diagnostics (Coles 2001, 4.3.1 and 4.3.4)
    for q in LADDER:
        uq = grouped_percentile(hv, 100 * q)
        x = ph[ph > uq] - uq
        me, sdm = x.mean(), x.std(ddof=1) / math.sqrt(len(x))
        sq, xq, cq, _ = gpd_fit(x)
        ms = sq - xq * uq
        vm = cq[0, 0] - 2 * uq * cq[0, 1] + uq * uq * cq[1, 1]
        se = math.sqrt(cq[1, 1])
        tables["threshold_diagnostics"].append({
            "cell_id": cid, "quantile": q, "threshold_m": uq, "n_peaks": len(x),
            "mean_excess_m": me, "mean_excess_lo_m": me - Z975 * sdm, "mean_excess_hi_m": me + Z975 * sdm,
            "shape": xq, "shape_lo": xq - Z975 * se, "shape_hi": xq + Z975 * se,
            "modified_scale_m": ms, "modified_scale_lo_m": ms - Z975 * math.sqrt(vm), "modified_scale_hi_m": ms + Z975 * math.sqrt(vm)})
    # calendar-month climatology and seasons: pooled over the included year-months
    valid_minutes = {}
    for m in range(1, 13):
        Jm = np.concatenate(mJ[m])
        inc = []
        for y in range(2001, 2013):
            sel_ym = (years == y) & (months == m)
            if (sel_ym & v).sum() / (calendar.monthrange(y, m)[1] * 4) >= COVERAGE_MIN:
                inc.append(sel_ym)
        incm = np.any(inc, axis=0)
        withdata = sum(1 for y in range(2001, 2013) if ((years == y) & (months == m) & (v | vh)).any())
        tables["climatology"].append({"cell_id": cid, "period": "calendar_month", "year": 0, "month": m,
                                      "power_mean_kw_m": Jm.mean(), "hm0_mean_m": h[incm & vh].mean(),
                                      "valid_hours": DT_H * len(Jm), "coverage": len(inc) / withdata, "excluded": False})
        valid_minutes[m] = incm
    for name, ms_ in (("DJF", [12, 1, 2]), ("MAM", [3, 4, 5]), ("JJA", [6, 7, 8]), ("SON", [9, 10, 11])):
        inc = np.any([valid_minutes[m] for m in ms_], axis=0)
        tables["climatology"].append({"cell_id": cid, "period": "season_" + name, "year": 0, "month": 0,
                                      "power_mean_kw_m": J[inc & v].mean(), "hm0_mean_m": h[inc & vh].mean(),
                                      "valid_hours": DT_H * (inc & v).sum(), "coverage": None, "excluded": False})
    # joint occurrence, exceedance curves, weather windows
    sj = vh & np.isfinite(e) & v
    for r in scatter(h[sj], e[sj], J[sj]):
        tables["scatter"].append(dict(r, cell_id=cid))
    for r in exceedance(hv, np.arange(0, 401) * HM0_RES, "hm0_m") + exceedance(J[v], power_edges(), "power_kw_m"):
        tables["exceedance"].append(dict(r, cell_id=cid))
    for r in windows(t, h, years, months, vh):
        tables["windows"].append(dict(r, cell_id=cid))
    # design sea states (IFORM)
    for T, xl, tl, pts in design(h, e):
        tag = "%g" % T
        out["design_hm0_%sy_m" % tag], out["design_te_%sy_s" % tag] = xl, tl
        for i, (a, b) in enumerate(pts):
            tables["design"].append({"cell_id": cid, "return_period_y": T, "point": i, "hm0_m": a, "te_s": b})
    return out


def annual_years(cid, h, e, J, v, years, devs, c, tables):
    """Year by year and the AEP bands (see the module docstring)."""
    yrs = range(2001, 2013)
    hours = {y: (366 if calendar.isleap(y) else 365) * 24.0 for y in yrs}
    means, dev_means = [], {n: [] for n in devs}
    for y in yrs:
        sel = years == y
        vs = sel & v
        cov = 6.0 * vs.sum() / hours[y]
        excl = bool(cov < COVERAGE_MIN)
        tables["annual"].append({"cell_id": cid, "year": y, "device": "", "power_mean_kw_m": J[vs].mean(), "energy_mwh": None,
                                 "valid_hours": 6.0 * vs.sum(), "hours": hours[y], "coverage_frac": cov, "excluded": excl})
        if not excl:
            means.append(J[vs].mean())
        ds = sel & np.isfinite(h) & np.isfinite(e)
        for name, dev in devs.items():
            pw = device_power(h[ds], e[ds], dev)[0].mean()
            tables["annual"].append({"cell_id": cid, "year": y, "device": name, "power_mean_kw_m": None,
                                     "energy_mwh": pw * hours[y] / 1000, "valid_hours": 6.0 * ds.sum(), "hours": hours[y],
                                     "coverage_frac": 6.0 * ds.sum() / hours[y], "excluded": excl})
            if not excl:
                dev_means[name].append(pw)
    c["interannual_std_kw_m"] = np.std(means, ddof=1)
    c["annual_years"] = len(means)
    for name in devs:
        x = np.array(dev_means[name])
        iav = x.std(ddof=1) / x.mean()
        rec = iav / math.sqrt(len(x))
        for H in HORIZONS:
            fut = iav / math.sqrt(H)
            tot = math.sqrt(rec ** 2 + fut ** 2 + MODEL_FRAC ** 2)
            p50 = c["aep_%s_mwh" % name]
            tables["aep_bands"].append({"cell_id": cid, "device": name, "horizon_y": H, "years_used": len(x), "aep_p50_mwh": p50,
                                        "interannual_frac": iav, "u_record_frac": rec, "u_future_frac": fut, "u_model_frac": MODEL_FRAC,
                                        "u_total_frac": tot, "aep_p90_mwh": p50 * (1 - stats.norm.ppf(0.90) * tot),
                                        "aep_p99_mwh": p50 * (1 - stats.norm.ppf(0.99) * tot)})


def monthly_yield(cid, h, e, years, months, devs, tables):
    """Monthly device yield (see the module docstring)."""
    ok = np.isfinite(h) & np.isfinite(e)
    for name, dev in devs.items():
        pw = np.full(h.shape, np.nan)
        pw[ok] = device_power(h[ok], e[ok], dev)[0]
        pooled = {m: [] for m in range(1, 13)}
        hours = {m: [] for m in range(1, 13)}
        with_data = {m: 0 for m in range(1, 13)}
        rows = []
        for y in range(2001, 2013):
            for m in range(1, 13):
                ds = (years == y) & (months == m) & ok
                hrs = calendar.monthrange(y, m)[1] * 24.0
                vh = 6.0 * ds.sum()
                cov = min(1.0, vh / hrs)
                mean = pw[ds].mean() if ds.any() else None
                excl = bool(vh == 0 or cov < COVERAGE_MIN)
                rows.append({"cell_id": cid, "device": name, "period": "year_month", "year": y, "month": m,
                             "mean_power_kw": mean, "energy_mwh": None if mean is None else mean * hrs / 1000,
                             "valid_hours": vh, "hours": hrs, "coverage_frac": cov, "years_used": 0, "excluded": excl})
                if ds.any():
                    with_data[m] += 1
                if not excl:
                    pooled[m].append(pw[ds])
                    hours[m].append(hrs)
        for m in range(1, 13):
            x = np.concatenate(pooled[m])
            tables["monthly_yield"].append({"cell_id": cid, "device": name, "period": "calendar_month", "year": 0, "month": m,
                                            "mean_power_kw": x.mean(), "energy_mwh": x.mean() * np.mean(hours[m]) / 1000,
                                            "valid_hours": 6.0 * len(x), "hours": np.mean(hours[m]),
                                            "coverage_frac": len(pooled[m]) / with_data[m], "years_used": len(pooled[m]), "excluded": False})
        tables["monthly_yield"].extend(rows)


def main():
    t, hs, te, tp, dr, depth = read()
    dates = np.datetime64("2001-01-01T00") + t.astype("timedelta64[h]")
    years = dates.astype("datetime64[Y]").astype(int) + 1970
    months = dates.astype("datetime64[M]").astype(int) % 12 + 1
    span = int(round((t[-1] - t[0]) / 6)) + 1
    devs = {n: matrix(os.path.join(HERE, "device_%s.csv" % n[-1])) for n in ["wec_a", "wec_b"]}
    ny, nx = depth.shape
    cells, monthly = [], []
    tables = {k: [] for k in ["climatology", "scatter", "exceedance", "windows", "extremes", "threshold_diagnostics", "design", "annual", "aep_bands", "monthly_yield"]}
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
                row = {"cell_id": cid, "period": "year_month", "year": y, "month": m, "coverage": cov, "valid_hours": 6.0 * vs.sum(),
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
        annual_years(cid, h, e, J, v, years, devs, c, tables)
        monthly_yield(cid, h, e, years, months, devs, tables)
        # GEV on calendar-year maxima
        mx = np.array([h[(years == y) & np.isfinite(h)].max() for y in range(2001, 2013)])
        cc, loc, scale = stats.genextreme.fit(mx)
        c.update({"gev_loc_m": loc, "gev_scale_m": scale, "gev_shape": -cc, "gev_years": len(mx)})
        for T, (rl, lo, hi) in zip(PERIODS, gev_delta(mx, cc, loc, scale, PERIODS)):
            tag = "%g" % T
            c["hm0_rl%sy_m" % tag], c["hm0_delta_rl%sy_lo_m" % tag], c["hm0_delta_rl%sy_hi_m" % tag] = rl, lo, hi
        c.update(extras(cid, t, h, e, p, J, v, h_, years, months, mJ, mx, (cc, loc, scale), devs, c, tables))
        cells.append({k: (float(x) if isinstance(x, (float, np.floating)) else x) for k, x in c.items()})
    ref = {"source": "testdata/e2e/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "cells": cells, "monthly": monthly}
    ref.update(tables)
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as f:
        # one row per line: diffable, half the size of an indented file
        f.write("{\n")
        keys = sorted(ref)
        for n, k in enumerate(keys):
            v = ref[k]
            f.write(json.dumps(k) + ": ")
            if isinstance(v, list):
                f.write("[\n" + ",\n".join(json.dumps(r, sort_keys=True, default=float) for r in v) + "\n]")
            else:
                f.write(json.dumps(v))
            f.write(",\n" if n < len(keys) - 1 else "\n")
        f.write("}\n")


if __name__ == "__main__":
    main()
