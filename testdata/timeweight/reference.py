#!/usr/bin/python3
"""Independent computation of swellgrid's tables on the time-weighting
fixtures (make_fixtures.py), every statistic weighting each time step by its
duration, with Debian's python3-netcdf4, python3-numpy and python3-scipy; no
swellgrid code. Writes reference_<variant>.json (committed), which
pipelines/engine/timeweight_test.go compares with the tables and manifest of a run.

The duration rule (issue 27; the README's time axis section):
- the record's times t_0 < ... < t_{n-1} are the union of every file's times
  (read with netCDF4.num2date in each file's own units); a time held by two
  files is one step: per role (variable), identical values (NaN == NaN) are
  used once and listed; different values refuse the run naming both files and
  the time, unless input.duplicate_steps says "first" (the earlier file's
  values) or "last" (the later file's);
- d_i = t_{i+1} - t_i; the local step q_i is the larger of the upper quartiles
  (nearest rank: sorted value ceil(0.75 m) - 1 of m) of the up to 12
  differences before d_i and of the up to 12 after it (each side on its own);
  d_i is a gap when d_i > 1.5 q_i;
- the weight of step i is d_i when no gap follows it, else d_{i-1} (when that
  is not a gap), else q_i (the last step: d_{n-2} or q_{n-2}); a record of one
  step weighs 1 h;
- every statistic weights step i by w_i (hours), its whole weight in the
  calendar month and year of t_i; a calm spell runs over steps with
  t_i + w_i == t_{i+1} (a gap breaks it) and lasts the sum of their weights;
- segments: runs of equal weight of at least 3 steps are constant; shorter
  runs in a row form one irregular segment (its smallest and largest weight).

Everything else is the definition of testdata/e2e/reference.py (numpy and
scipy as the reference libraries; sources beside each function there), with
the count of steps replaced by the sum of their weights:
- means, standard deviations (population), circular mean direction, device
  power and energy shares: weighted sums over the valid steps;
- percentiles: the weighted sample quantile (the smallest value whose
  cumulative weight reaches p/100 of the total); swellgrid reads them off a
  histogram of hours, within one bin;
- coverage: hours covered with a valid value over the hours of the period (a
  month's, a year's; the cell's: from the first step's start to the last
  step's end), at most 1 (a share: a step straddling a month's end puts its
  whole weight in its own month);
- the GPD threshold: the grouped-data 99 % quantile of Hm0 on the histogram
  of hours; the peak rate: peaks per year of covered time (8766 h);
- complete years (for the GEV): covered time with a valid Hm0 at least 80 %
  of the calendar year.
Fits (GPD, threshold diagnostics) are those of testdata/e2e/reference.py, run
on the same peaks; GEV fits are made only with at least MIN_YEARS maxima
(none of these fixtures has so many; their count and flags are checked).
Run: /usr/bin/python3 testdata/timeweight/reference.py [VARIANT ...]
     /usr/bin/python3 testdata/timeweight/reference.py --out DIR [VARIANT ...]
     /usr/bin/python3 testdata/timeweight/reference.py --check-e2e
The last runs this weighted computation on the constant 6-hourly e2e fixture
and compares it with testdata/e2e/reference.json (it must agree: a constant
step weighs every step the same).
"""
import calendar
import glob
import importlib.util
import json
import math
import os
import sys

import netCDF4
import numpy as np
import scipy
from scipy import stats

HERE = os.path.dirname(os.path.abspath(__file__))
_spec = importlib.util.spec_from_file_location("e2e_reference", os.path.join(HERE, "..", "e2e", "reference.py"))
E2E = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(E2E)

sys.dont_write_bytecode = True  # no __pycache__ in testdata
sys.path.insert(0, HERE)
from make_fixtures import VARIANTS  # noqa: E402  (the variants and their specs)

RHO, G = E2E.RHO, E2E.G
PERCENTILES, PERIODS, COVERAGE_MIN = E2E.PERCENTILES, E2E.PERIODS, E2E.COVERAGE_MIN
HOURS_PER_YEAR, HM0_RES, LADDER = E2E.HOURS_PER_YEAR, E2E.HM0_RES, E2E.LADDER
SEP_H, MAX_PEAKS_PER_YEAR, BREAKING_RATIO = E2E.SEP_H, E2E.MAX_PEAKS_PER_YEAR, E2E.BREAKING_RATIO
SC_H, SC_HMAX, SC_T, SC_TMAX = E2E.SC_H, E2E.SC_HMAX, E2E.SC_T, E2E.SC_TMAX
WIN_LIMITS, WIN_DURS = E2E.WIN_LIMITS, E2E.WIN_DURS
Z975 = E2E.Z975
MIN_YEARS, MIN_PEAKS, MAX_EXTRAPOLATION, SHAPE_RANGE = 10, 20, 4.0, (-0.5, 0.5)  # the README's defaults
NEIGHBOURS, GAP_FACTOR = 12, 1.5  # the duration rule
ROLES = {"hs": "hm0", "te": "te", "tp": "tp", "mwd": "dir"}  # the fixtures' variables and their roles
EPOCH = np.datetime64("2001-01-01T00:00:00", "s")
CHECK_E2E = False  # --check-e2e: the e2e fixture's 12 years (its GEV is not recomputed here)


# ---------------------------------------------------------------- time axis

def file_times(ds):
    """A file's times as whole seconds since EPOCH, from its own units and
    calendar (netCDF4.num2date; standard calendar)."""
    v = ds["time"]
    dates = netCDF4.num2date(v[:], v.units, getattr(v, "calendar", "standard"),
                             only_use_cftime_datetimes=False, only_use_python_datetimes=True)
    return (np.array(dates, dtype="datetime64[s]") - EPOCH).astype(np.int64)


def text(sec):
    """A time as swellgrid's manifest writes it (YYYY-MM-DD HH:MM:SS)."""
    return str(EPOCH + np.timedelta64(int(sec), "s")).replace("T", " ")


def read(directory, policy):
    """Reads every file of directory; returns the record (times in seconds,
    fields (time, ny, nx)), the depth, the duplicates, and the refusal (None,
    or the time and files of the first conflicting duplicate when policy is
    None). Files are taken in the order of their first time."""
    files = []
    for p in sorted(glob.glob(os.path.join(directory, "*.nc"))):
        with netCDF4.Dataset(p) as ds:
            f = {"path": p, "t": file_times(ds)}
            for name in ("hs", "te", "tp", "mwd"):
                f[name] = np.ma.filled(ds[name][:].astype(float), np.nan)
            depth = np.ma.filled(ds["depth"][:].astype(float), np.nan)
        files.append(f)
    files.sort(key=lambda f: f["t"][0])
    held = {}  # time -> [(file index, step index)]
    for k, f in enumerate(files):
        for i, s in enumerate(f["t"]):
            held.setdefault(int(s), []).append((k, i))
    times = np.array(sorted(held), dtype=np.int64)
    out = {name: np.empty((len(times),) + files[0][name].shape[1:]) for name in ("hs", "te", "tp", "mwd")}
    dups, refused = [], None
    for n, s in enumerate(times):
        src = held[int(s)]
        for name, role in ROLES.items():
            pick = src[0]
            if len(src) > 1:
                vals = [files[k][name][i] for k, i in src]
                same = all(np.array_equal(vals[0], v, equal_nan=True) for v in vals[1:])
                if not same and policy is None and refused is None:
                    refused = {"time": text(s), "files": [os.path.basename(files[k]["path"]) for k, _ in src]}
                # the file used: the later one under "last", else the earlier
                # (identical values: the same either way)
                pick = src[-1] if policy == "last" else src[0]
                dups.append({"role": role, "time": text(s), "files": [os.path.basename(files[k]["path"]) for k, _ in src],
                             "identical": bool(same), "used": os.path.basename(files[pick[0]]["path"])})
            out[name][n] = files[pick[0]][name][pick[1]]
    dups.sort(key=lambda d: (d["role"], d["time"]))
    return times, out, depth, dups, refused


def durations(t):
    """Weights w (hours) of steps at times t (hours), the gap flags of the
    differences and the local steps q (the duration rule, module docstring)."""
    n = len(t)
    if n == 1:
        return np.array([1.0]), np.zeros(0, bool), np.zeros(0)
    d = np.diff(t)
    q, gap = d.copy(), np.zeros(n - 1, bool)

    def uq(x):  # upper quartile, nearest rank; 0 of nothing
        return np.sort(x)[math.ceil(0.75 * len(x)) - 1] if len(x) else 0.0
    for i in range(n - 1):
        qi = max(uq(d[max(0, i - NEIGHBOURS):i]), uq(d[i + 1:i + NEIGHBOURS + 1]))
        if qi > 0:
            q[i] = qi
            gap[i] = d[i] > GAP_FACTOR * qi
    w = np.empty(n)
    for i in range(n):
        if i < n - 1 and not gap[i]:
            w[i] = d[i]
        elif i >= 1 and not gap[i - 1]:
            w[i] = d[i - 1]
        else:
            w[i] = q[min(i, n - 2)]
    return w, gap, q


def segments(tsec, w):
    """The manifest's time segments: runs of equal weight of >= 3 steps are
    constant; consecutive shorter runs form one irregular segment."""
    runs, i = [], 0
    while i < len(w):
        j = i
        while j + 1 < len(w) and w[j + 1] == w[i]:
            j += 1
        runs.append((i, j))
        i = j + 1
    out, pend = [], None

    def seg(a, b, const):
        ww = w[a:b + 1]
        return {"first": text(tsec[a]), "last": text(tsec[b]), "steps": int(b - a + 1), "hours": float(ww.sum()),
                "step_hours": float(ww[0]) if const else 0.0, "min_step_hours": float(ww.min()), "max_step_hours": float(ww.max())}
    for a, b in runs:
        if b - a + 1 >= 3:
            if pend:
                out.append(seg(pend[0], pend[1], False))
                pend = None
            out.append(seg(a, b, True))
        else:
            pend = (pend[0] if pend else a, b)
    if pend:
        out.append(seg(pend[0], pend[1], False))
    return out


# ---------------------------------------------------------------- weighted statistics

def wmean(x, w):
    return float(np.sum(w * x) / np.sum(w)) if np.sum(w) > 0 else None


def wstd(x, w):
    """Population standard deviation with weights w (numpy ddof 0 when equal)."""
    m = np.sum(w * x) / np.sum(w)
    return float(math.sqrt(np.sum(w * (x - m) ** 2) / np.sum(w)))


def wquantile(x, w, p):
    """Weighted sample quantile: the smallest x whose cumulative weight reaches
    p/100 of the total (inverse of the weighted empirical distribution)."""
    o = np.argsort(x, kind="stable")
    c = np.cumsum(w[o])
    return float(x[o][min(np.searchsorted(c, p / 100.0 * c[-1], side="left"), len(x) - 1)])


def grouped_percentile(x, w, p, res=HM0_RES):
    """testdata/e2e/reference.py's grouped_percentile on a histogram of hours:
    the value where the cumulative weight of the bins of res reaches p/100 of
    the total, linear within the bin, clamped to the sample's range."""
    b = np.floor(x / res).astype(int)
    counts = np.bincount(b, weights=w)
    target = p / 100.0 * w.sum()
    cum = np.cumsum(counts)
    i = int(np.argmax(cum >= target))
    before = cum[i] - counts[i]
    v = i * res + res * (target - before) / counts[i]
    return float(min(max(v, x.min()), x.max()))


def storm_peaks(t, h, te, tp, years):
    """Declustered storm peaks (the definition of testdata/e2e/reference.py,
    on time, not on a count of steps): a finite step whose Hm0 is strictly
    larger than every finite Hm0 less than SEP_H before it and not smaller than
    any less than SEP_H after it; at most MAX_PEAKS_PER_YEAR a calendar year,
    the largest (earlier wins ties)."""
    ok = np.isfinite(h)
    t, h, te, tp, years = t[ok], h[ok], te[ok], tp[ok], years[ok]
    lo = np.searchsorted(t, t - SEP_H, side="right")
    hi = np.searchsorted(t, t + SEP_H, side="left")
    peak = np.array([(lo[i] == i or h[lo[i]:i].max() < h[i]) and (hi[i] == i + 1 or h[i + 1:hi[i]].max() <= h[i])
                     for i in range(len(t))], bool)
    t, h, te, tp, years = t[peak], h[peak], te[peak], tp[peak], years[peak]
    keep = np.zeros(len(t), bool)
    for y in np.unique(years):
        idx = np.nonzero(years == y)[0]
        keep[sorted(idx, key=lambda i: (-h[i], t[i]))[:MAX_PEAKS_PER_YEAR]] = True
    return t[keep], h[keep], te[keep], tp[keep]


def scatter(h, e, J, w):
    """Joint occurrence of Hm0 and Te in hours (testdata/e2e/reference.py's
    scatter with weights)."""
    nh, nt = int(math.ceil(SC_HMAX / SC_H - 1e-9)) + 1, int(math.ceil(SC_TMAX / SC_T - 1e-9)) + 1
    r = np.minimum(np.floor(h / SC_H).astype(int), nh - 1)
    c = np.minimum(np.floor(e / SC_T).astype(int), nt - 1)
    rows = []
    for a in range(nh):
        for b in range(nt):
            sel = (r == a) & (c == b)
            if sel.any():
                rows.append({"hm0_lo_m": a * SC_H, "hm0_hi_m": (a + 1) * SC_H if a < nh - 1 else None,
                             "te_lo_s": b * SC_T, "te_hi_s": (b + 1) * SC_T if b < nt - 1 else None,
                             "hours": float(w[sel].sum()), "time_share": float(w[sel].sum() / w.sum()),
                             "power_mean_kw_m": wmean(J[sel], w[sel])})
    return rows


def exceedance(x, w, edges, name):
    """Share of the valid time at or above each histogram edge, up to the first
    edge above the maximum."""
    rows = []
    for v in edges:
        share = float(w[x >= v].sum() / w.sum())
        rows.append({"variable": name, "value": float(v), "share_exceeded": share})
        if v > x.max() or share == 0:
            break
    return rows


def month_hours(y, m):
    return calendar.monthrange(y, m)[1] * 24.0


def windows(t, w, h, years, months):
    """Weather windows by duration: a calm spell is a run of steps with a
    valid Hm0 below the limit, each starting where the previous one's interval
    ends (t_i + w_i == t_{i+1}); its length is the sum of its weights; a spell
    of at least the duration is a window, counted in the month of its first
    step, its hours credited to the months of its steps (the definition of
    testdata/e2e/reference.py, on time)."""
    vh = np.isfinite(h)
    cont = np.concatenate([[False], t[:-1] + w[:-1] == t[1:]])
    valid_h = {m: float(w[vh & (months == m)].sum()) for m in range(1, 13)}
    meq = {m: 0.0 for m in range(1, 13)}
    for y in np.unique(years):
        for m in range(1, 13):
            c = w[vh & (years == y) & (months == m)].sum()
            if c > 0:
                meq[m] += min(1.0, c / month_hours(y, m))
    rows = []
    for lim in WIN_LIMITS:
        calm = vh & (np.nan_to_num(h, nan=1e9) < lim)
        spells, cur = [], []
        for i in range(len(t)):
            if calm[i] and cur and cont[i]:
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
                if w[sp].sum() >= dur:
                    count[int(months[sp[0]])] += 1
                    for i in sp:
                        hours[int(months[i])] += w[i]
            for m in range(1, 13):
                vhm = valid_h[m]
                rows.append({"hm0_limit_m": lim, "min_duration_h": dur, "month": m, "window_hours": hours[m],
                             "valid_hours": vhm, "fraction_in_windows": min(1.0, hours[m] / vhm) if vhm else None,
                             "windows": count[m], "windows_per_month": count[m] / meq[m] if vhm else None})
    return rows


def device_classes(hm0, te, dev):
    return E2E.device_classes(hm0, te, dev)


# ---------------------------------------------------------------- one cell

def annual_years(cid, w, years, ylist, h, e, J, v, vh, devs, c, tables):
    """Year by year and the AEP bands, every step weighted by its duration
    w (as testdata/e2e/reference.py, whose steps are all 6 h): per calendar
    year with data, the weighted mean J, valid hours, the year's hours,
    coverage_frac, excluded below coverage_min; each device's energy = its
    weighted mean power over the steps with Hm0 and Te x the year's hours /
    1000; interannual_std_kw_m (ddof 1); the bands from the complete years'
    weighted mean device powers (see testdata/e2e/reference.py)."""
    means, dev_means = [], {n: [] for n in devs}
    for y in ylist:
        sel = years == y
        ds = sel & np.isfinite(h) & np.isfinite(e)
        if not (sel & (v | vh)).any() and not ds.any():
            continue
        yh = 8784.0 if calendar.isleap(y) else 8760.0
        vs = sel & v
        cov = min(1.0, float(w[vs].sum()) / yh)
        excl = bool(cov < COVERAGE_MIN)
        tables["annual"].append({"cell_id": cid, "year": y, "device": "", "power_mean_kw_m": wmean(J[vs], w[vs]) if vs.any() else None,
                                 "energy_mwh": None, "valid_hours": float(w[vs].sum()), "hours": yh, "coverage_frac": cov, "excluded": excl})
        if not excl:
            means.append(wmean(J[vs], w[vs]))
        for name, dev in devs.items():
            pw = wmean(E2E.device_power(h[ds], e[ds], dev)[0], w[ds]) if ds.any() else None
            tables["annual"].append({"cell_id": cid, "year": y, "device": name, "power_mean_kw_m": None,
                                     "energy_mwh": None if pw is None else pw * yh / 1000, "valid_hours": float(w[ds].sum()),
                                     "hours": yh, "coverage_frac": min(1.0, float(w[ds].sum()) / yh), "excluded": excl})
            if not excl and pw is not None:
                dev_means[name].append(pw)
    c["interannual_std_kw_m"] = float(np.std(means, ddof=1)) if len(means) >= 2 else None
    c["annual_years"] = len(means)
    for name in devs:
        x = np.array(dev_means[name])
        iav = x.std(ddof=1) / x.mean() if len(x) >= 2 else None
        rec = iav / math.sqrt(len(x)) if iav is not None else None
        for H in E2E.HORIZONS:
            fut = iav / math.sqrt(H) if iav is not None else None
            tot = math.sqrt(rec ** 2 + fut ** 2 + E2E.MODEL_FRAC ** 2) if iav is not None else None
            p50 = c["aep_%s_mwh" % name]
            tables["aep_bands"].append({"cell_id": cid, "device": name, "horizon_y": H, "years_used": len(x), "aep_p50_mwh": p50,
                                        "interannual_frac": iav, "u_record_frac": rec, "u_future_frac": fut, "u_model_frac": E2E.MODEL_FRAC,
                                        "u_total_frac": tot,
                                        "aep_p90_mwh": None if tot is None else p50 * (1 - stats.norm.ppf(0.90) * tot),
                                        "aep_p99_mwh": None if tot is None else p50 * (1 - stats.norm.ppf(0.99) * tot)})


def cell(cid, t, w, years, months, h, e, p, d, depth, devs, tables):
    cg = np.array([E2E.group_velocity(1 / x, depth) if np.isfinite(x) else np.nan for x in e])
    J = RHO * G * h ** 2 * cg / 16 / 1000  # kW/m
    v = np.isfinite(J)
    vh = np.isfinite(h)
    rec_h = t[-1] + w[-1] - t[0]
    c = {"cell_id": cid, "depth_m": depth, "steps": int(len(t)), "coverage": min(1.0, float(w[v].sum()) / rec_h),
         "power_mean_kw_m": wmean(J[v], w[v]), "power_std_kw_m": wstd(J[v], w[v]), "power_max_kw_m": float(J[v].max()),
         "hm0_mean_m": wmean(h[vh], w[vh]), "hm0_max_m": float(h[vh].max()),
         "te_mean_s": wmean(e[np.isfinite(e)], w[np.isfinite(e)]), "tp_mean_s": wmean(p[np.isfinite(p)], w[np.isfinite(p)])}
    c["power_cov"] = c["power_std_kw_m"] / c["power_mean_kw_m"]
    for q in PERCENTILES:
        c["power_p%g_kw_m" % q] = wquantile(J[v], w[v], q)
        c["hm0_p%g_m" % q] = wquantile(h[vh], w[vh], q)
    fd = np.isfinite(d)
    rad = np.radians(d[fd])
    c["dir_mean_deg"] = math.degrees(math.atan2(np.sum(w[fd] * np.sin(rad)), np.sum(w[fd] * np.cos(rad)))) % 360

    # year-months of the record's span; climatology over the included ones
    ylist = list(range(int(years.min()), int(years.max()) + 1))
    first, last = (int(years[0]), int(months[0])), (int(years[-1]), int(months[-1]))
    inc = np.zeros(len(t), bool)
    withdata = {m: 0 for m in range(1, 13)}
    nused = {m: 0 for m in range(1, 13)}
    excluded_months = 0
    for y in ylist:
        for m in range(1, 13):
            if not (first <= (y, m) <= last):
                continue
            sel = (years == y) & (months == m)
            vs = sel & v
            hs = sel & vh
            cov = min(1.0, float(w[vs].sum()) / month_hours(y, m))
            tables["monthly"].append({"cell_id": cid, "period": "year_month", "year": y, "month": m, "coverage": cov,
                                      "valid_hours": float(w[vs].sum()), "power_mean_kw_m": wmean(J[vs], w[vs]),
                                      "hm0_mean_m": wmean(h[hs], w[hs]), "excluded": bool(cov < COVERAGE_MIN)})
            if (sel & (v | vh)).any():
                withdata[m] += 1
                if cov >= COVERAGE_MIN:
                    inc |= sel
                    nused[m] += 1
                else:
                    excluded_months += 1
    monthJ = {}
    for m in range(1, 13):
        sm = inc & (months == m)
        monthJ[m] = wmean(J[sm & v], w[sm & v]) if (sm & v).any() else None
        tables["climatology"].append({"cell_id": cid, "period": "calendar_month", "year": 0, "month": m,
                                      "power_mean_kw_m": monthJ[m],
                                      "hm0_mean_m": wmean(h[sm & vh], w[sm & vh]) if (sm & vh).any() else None,
                                      "valid_hours": float(w[sm & v].sum()),
                                      "coverage": nused[m] / withdata[m] if withdata[m] else None, "excluded": False})
    seas = []
    for name, ms in (("DJF", [12, 1, 2]), ("MAM", [3, 4, 5]), ("JJA", [6, 7, 8]), ("SON", [9, 10, 11])):
        s_ = inc & np.isin(months, ms)
        seas.append(wmean(J[s_ & v], w[s_ & v]) if (s_ & v).any() else None)
        tables["climatology"].append({"cell_id": cid, "period": "season_" + name, "year": 0, "month": 0,
                                      "power_mean_kw_m": seas[-1],
                                      "hm0_mean_m": wmean(h[s_ & vh], w[s_ & vh]) if (s_ & vh).any() else None,
                                      "valid_hours": float(w[s_ & v].sum()), "coverage": None, "excluded": False})
    annual = wmean(J[inc & v], w[inc & v]) if (inc & v).any() else None
    c["mvi"] = (max(monthJ.values()) - min(monthJ.values())) / annual if None not in monthJ.values() else None
    c["svi"] = (max(seas) - min(seas)) / annual if None not in seas else None
    # years: coverage of the calendar year with a valid J (climate), with a
    # valid Hm0 (complete years of the extremes)
    yJ, excluded_years, complete = [], [], []
    for y in ylist:
        sel = years == y
        if not (sel & (v | vh)).any():
            continue
        yh = 8784.0 if calendar.isleap(y) else 8760.0
        if w[sel & v].sum() / yh >= COVERAGE_MIN:
            yi = sel & inc & v
            yJ.append(wmean(J[yi], w[yi]))
        else:
            excluded_years.append(y)
        if w[sel & vh].sum() >= COVERAGE_MIN * yh:
            complete.append(y)
    c["interannual_cov"] = float(np.std(yJ) / np.mean(yJ)) if len(yJ) >= 2 else None
    for name, dev in devs.items():
        pw, _, _ = E2E.device_power(h[v], e[v], dev)
        mean_kw = wmean(pw, w[v])
        c["aep_%s_mwh" % name] = mean_kw * HOURS_PER_YEAR / 1000
        c["cf_%s" % name] = mean_kw / dev[2].max()
        above, below, outside = device_classes(h[v], e[v], dev)
        E = J[v] * w[v]
        c["above_rated_%s" % name] = E[above].sum() / E.sum()
        c["below_cutin_%s" % name] = E[below].sum() / E.sum()
        c["energy_outside_matrix_%s_frac" % name] = E[outside].sum() / E.sum()
    c["hm0_depth_limit_m"] = BREAKING_RATIO * depth if math.isfinite(depth) and depth > 0 else None
    annual_years(cid, w, years, ylist, h, e, J, v, vh, devs, c, tables)

    # extremes: complete years, storm peaks above the 99 % quantile of hours
    c["gev_years"] = len(complete)
    present = [y for y in ylist if (years == y).any() and vh[years == y].any()]
    incomplete = any(y not in complete for y in present[1:-1])
    flags = {"low_coverage": c["coverage"] < COVERAGE_MIN, "years_excluded": len(excluded_years) > 0,
             "months_excluded": excluded_months > 0, "gev_incomplete_years": incomplete}
    gy = len(complete)
    flags["gev_no_fit"] = gy < 3
    flags["gev_few_years"] = 3 <= gy < MIN_YEARS
    flags["gev_extrapolation_limit"] = gy >= 3 and any(T > MAX_EXTRAPOLATION * gy for T in PERIODS)
    # A level not published (few years, no fit, too far beyond the record)
    # is null with its intervals and associated periods.
    unpublished = {"hm0_m": None, "hm0_lo_m": None, "hm0_hi_m": None, "hm0_delta_lo_m": None, "hm0_delta_hi_m": None,
                   "te_s": None, "tp_s": None}
    gev_rows = []
    for T in PERIODS:
        tag = "%g" % T
        pub = bool(gy >= MIN_YEARS and T <= MAX_EXTRAPOLATION * gy)  # only with --check-e2e (not recomputed)
        gev_rows.append(dict({} if pub else unpublished, cell_id=cid, method="gev_annual_maxima", return_period_y=T, n=gy,
                             published=pub))
        for k in ("hm0_rl%sy_m", "hm0_rl%sy_lo_m", "hm0_rl%sy_hi_m", "te_rl%sy_s"):
            if not pub:
                c[k % tag] = None
    if gy >= MIN_YEARS and not CHECK_E2E:
        raise SystemExit("reference.py: GEV fits are not part of this reference (fixtures of fewer than %d years)" % MIN_YEARS)

    hv, wv = h[vh], w[vh]
    u = grouped_percentile(hv, wv, 99)
    pt, ph, pte, ptp = storm_peaks(t, h, e, p, years)
    sel = ph > u
    exc = ph[sel] - u
    n = int(sel.sum())
    rec_years = float(wv.sum()) / HOURS_PER_YEAR
    lam = n / rec_years
    c.update({"gpd_threshold_m": u, "gpd_peaks_per_year": lam, "gpd_n": n})
    flags["gpd_no_fit"] = n < 2
    flags["gpd_few_peaks"] = 2 <= n < MIN_PEAKS
    flags["gpd_extrapolation_limit"] = n >= 2 and any(T > MAX_EXTRAPOLATION * rec_years for T in PERIODS)
    fitted = n >= MIN_PEAKS
    gpd_rows = []
    if fitted:
        s, xi, cov, ll = E2E.gpd_fit(exc)
        c.update({"gpd_scale_m": s, "gpd_shape": xi})
        aset = (ph[sel], pte[sel], ptp[sel])
        assoc = {}
        for nm, per in (("te", aset[1]), ("tp", aset[2])):
            ok = per > 0
            B, A = np.polyfit(np.log(aset[0][ok]), np.log(per[ok]), 1)
            assoc[nm] = (A, B)
        limit = 3 * float(hv.max())  # upper ends searched up to 3 x the record's largest Hm0
    for T in PERIODS:
        tag = "%g" % T
        row = dict(unpublished, cell_id=cid, method="gpd_storm_peaks", return_period_y=T, n=n, loc_or_threshold_m=u,
                   published=False)
        c["hm0_pot_rl%sy_m" % tag] = c["hm0_pot_rl%sy_lo_m" % tag] = c["hm0_pot_rl%sy_hi_m" % tag] = None
        pub = fitted and T <= MAX_EXTRAPOLATION * rec_years and SHAPE_RANGE[0] <= xi <= SHAPE_RANGE[1]
        if fitted:
            row.update({"scale_m": s, "shape": xi})
        if pub:
            z = E2E.gpd_level(u, s, xi, lam, T)
            lo, hi = E2E.gpd_profile(u, exc, s, xi, lam, T, ll, limit)
            m = lam * T
            g = np.array([s * T * m ** (xi - 1), (m ** xi - 1) / xi, -s / xi ** 2 * (m ** xi - 1) + s / xi * m ** xi * math.log(m)])
            V = np.zeros((3, 3))
            V[0, 0] = lam ** 2 / n
            V[1:, 1:] = cov
            sd = math.sqrt(g @ V @ g)
            at = lambda nm: math.exp(assoc[nm][0] + assoc[nm][1] * math.log(z))
            row.update({"published": True, "hm0_m": z, "hm0_lo_m": lo, "hm0_hi_m": hi, "hm0_delta_lo_m": max(z - Z975 * sd, u),
                        "hm0_delta_hi_m": z + Z975 * sd, "te_s": at("te"), "tp_s": at("tp")})
            c["hm0_pot_rl%sy_m" % tag], c["hm0_pot_rl%sy_lo_m" % tag], c["hm0_pot_rl%sy_hi_m" % tag] = z, lo, hi
        gpd_rows.append(row)
    tables["extremes"].extend(gev_rows + gpd_rows)
    for q in LADDER:
        uq = grouped_percentile(hv, wv, 100 * q)
        x = ph[ph > uq] - uq
        r = {"cell_id": cid, "quantile": q, "threshold_m": uq, "n_peaks": len(x)}
        if len(x) >= 2:
            me, sdm = x.mean(), x.std(ddof=1) / math.sqrt(len(x))
            r.update({"mean_excess_m": me, "mean_excess_lo_m": me - Z975 * sdm, "mean_excess_hi_m": me + Z975 * sdm})
        if len(x) >= MIN_PEAKS:
            sq, xq, cq, _ = E2E.gpd_fit(x)
            ms = sq - xq * uq
            vm = cq[0, 0] - 2 * uq * cq[0, 1] + uq * uq * cq[1, 1]
            se = math.sqrt(cq[1, 1])
            r.update({"shape": xq, "shape_lo": xq - Z975 * se, "shape_hi": xq + Z975 * se, "modified_scale_m": ms,
                      "modified_scale_lo_m": ms - Z975 * math.sqrt(vm), "modified_scale_hi_m": ms + Z975 * math.sqrt(vm)})
        tables["threshold_diagnostics"].append(r)

    # scatter, exceedance, windows
    sj = vh & np.isfinite(e) & v
    for r in scatter(h[sj], e[sj], J[sj], w[sj]):
        tables["scatter"].append(dict(r, cell_id=cid))
    for r in exceedance(hv, wv, np.arange(0, 401) * HM0_RES, "hm0_m") + exceedance(J[v], w[v], E2E.power_edges(), "power_kw_m"):
        tables["exceedance"].append(dict(r, cell_id=cid))
    for r in windows(t, w, h, years, months):
        tables["windows"].append(dict(r, cell_id=cid))
    c["flags"] = {k: bool(x) for k, x in flags.items()}
    return c


def compute(directory, policy, devs, source):
    tsec, f, depth, dups, refused = read(directory, policy)
    ref = {"source": source, "numpy": np.__version__, "scipy": scipy.__version__, "netCDF4": netCDF4.__version__,
           "duplicate_steps": dups}
    if refused is not None:
        ref["refused"] = refused
        return ref
    t = tsec / 3600.0
    w, gap, q = durations(t)
    dates = EPOCH + tsec.astype("timedelta64[s]")
    years = dates.astype("datetime64[Y]").astype(int) + 1970
    months = dates.astype("datetime64[M]").astype(int) % 12 + 1
    ref.update({"time_segments": segments(tsec, w), "steps": int(len(t)), "time_start": text(tsec[0]), "time_end": text(tsec[-1]),
                "gaps": [{"after": text(tsec[i]), "before": text(tsec[i + 1]), "missing_hours": float(t[i + 1] - t[i] - w[i])}
                         for i in np.nonzero(gap)[0]],
                "covered_hours": float(w.sum())})
    ny, nx = depth.shape
    cells = []
    tables = {k: [] for k in ["monthly", "climatology", "scatter", "exceedance", "windows", "extremes", "threshold_diagnostics", "annual", "aep_bands"]}
    for cid in range(ny * nx):
        j, i = divmod(cid, nx)
        c = cell(cid, t, w, years, months, f["hs"][:, j, i], f["te"][:, j, i], f["tp"][:, j, i], f["mwd"][:, j, i],
                 float(depth[j, i]), devs, tables)
        cells.append({k: (float(x) if isinstance(x, (float, np.floating)) else x) for k, x in c.items()})
    ref["cells"] = cells
    ref.update(tables)
    return ref


def write(ref, out):
    """One row per line (as testdata/e2e/reference.py writes)."""
    with open(out, "w") as fh:
        fh.write("{\n")
        keys = sorted(ref)
        for n, k in enumerate(keys):
            v = ref[k]
            fh.write(json.dumps(k) + ": ")
            if isinstance(v, list):
                fh.write("[\n" + ",\n".join(json.dumps(r, sort_keys=True, default=float) for r in v) + "\n]")
            else:
                fh.write(json.dumps(v, sort_keys=True, default=float))
            fh.write(",\n" if n < len(keys) - 1 else "\n")
        fh.write("}\n")


def devices():
    return {n: E2E.matrix(os.path.join(HERE, "..", "e2e", "device_%s.csv" % n[-1])) for n in ["wec_a", "wec_b"]}


def check_e2e():
    """The weighted computation on the constant-step e2e fixture against
    testdata/e2e/reference.json: prints the largest relative difference per
    table and column and fails above 1e-9 (exact columns: any difference)."""
    global CHECK_E2E
    CHECK_E2E = True
    ref = compute(os.path.join(HERE, "..", "e2e", "bulk"), None, devices(), "check")
    with open(os.path.join(HERE, "..", "e2e", "reference.json")) as fh:
        old = json.load(fh)
    keys = {"cells": ["cell_id"], "monthly": ["cell_id", "year", "month"], "climatology": ["cell_id", "period", "month"],
            "scatter": ["cell_id", "hm0_lo_m", "te_lo_s"], "exceedance": ["cell_id", "variable", "value"],
            "windows": ["cell_id", "hm0_limit_m", "min_duration_h", "month"], "threshold_diagnostics": ["cell_id", "quantile"],
            "extremes": ["cell_id", "method", "return_period_y"], "annual": ["cell_id", "year", "device"],
            "aep_bands": ["cell_id", "device", "horizon_y"]}
    # Columns from maximum-likelihood fits: scipy's optimisers stop at their
    # tolerances, and a threshold differing in the 15th digit moves the optimum
    # found by about 1e-7 (relative; absolute below 1): 1e-5 there, 1e-9 elsewhere.
    fitted = {"gpd_scale_m", "gpd_shape", "scale_m", "shape", "shape_lo", "shape_hi", "modified_scale_m",
              "modified_scale_lo_m", "modified_scale_hi_m", "hm0_m", "hm0_lo_m", "hm0_hi_m", "hm0_delta_lo_m",
              "hm0_delta_hi_m", "te_s", "tp_s"} | {"hm0_pot_rl%gy_%s" % (T, s) for T in PERIODS for s in ("m", "lo_m", "hi_m")}
    bad = 0
    for table, kk in keys.items():
        o = {tuple(r[k] for k in kk): r for r in old[table]}
        mine = [r for r in ref[table] if table != "extremes" or r["method"] == "gpd_storm_peaks"]
        if table != "extremes" and len(mine) != len(o):
            print("%s: %d rows, e2e %d" % (table, len(mine), len(o)))
            bad += 1
        worst = {}
        for r in mine:
            orow = o.get(tuple(r[k] for k in kk))
            if orow is None:
                print("%s: no e2e row %s" % (table, [r[k] for k in kk]))
                bad += 1
                continue
            for col, a in r.items():
                b = orow.get(col)
                if col in kk or col not in orow or isinstance(a, (str, dict)) or (a is None and b is None):
                    continue
                if (a is None) != (b is None):
                    print("%s %s %s: %s, e2e %s" % (table, [r[k] for k in kk], col, a, b))
                    bad += 1
                    continue
                if col.startswith("power_p") or col.startswith("hm0_p"):
                    continue  # percentiles: numpy.percentile there, the weighted quantile here (within a bin)
                dd = abs(float(a) - float(b)) / max(abs(float(b)), 1.0 if col in fitted else 1e-300)
                if dd > worst.get(col, (-1,))[0]:
                    worst[col] = (dd, a, b)
        for col in sorted(worst):
            dd, a, b = worst[col]
            flag = dd > (1e-5 if col in fitted else 1e-9)
            bad += flag
            print("%-22s %-34s largest relative difference %.3g%s" % (table, col, dd, "  <-- " + repr((a, b)) if flag else ""))
    if bad:
        raise SystemExit("check-e2e: %d differences" % bad)
    print("check-e2e: the weighted computation reproduces testdata/e2e/reference.json")


def main():
    args = sys.argv[1:]
    if args == ["--check-e2e"]:
        return check_e2e()
    out = HERE
    if len(args) >= 2 and args[0] == "--out":
        out, args = args[1], args[2:]
    devs = devices()
    for v in args or sorted(VARIANTS):
        d, policy = VARIANTS[v]
        ref = compute(os.path.join(HERE, d), policy, devs, "testdata/timeweight/reference.py")
        ref["variant"], ref["fixture"], ref["duplicate_policy"] = v, d, policy
        write(ref, os.path.join(out, "reference_%s.json" % v))


if __name__ == "__main__":
    main()
