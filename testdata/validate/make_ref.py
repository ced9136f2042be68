#!/usr/bin/python3
"""Reference values for stats/validate, made with Debian's python3-numpy and
python3-scipy (versions recorded in the output). The pairs are invented
(seeded pseudo-random numbers, no real place or instrument): written to
pairs.csv, and the statistics numpy/scipy compute from them to
reference.json.

Run from this directory:  /usr/bin/python3 make_ref.py
"""
import json
import math
import numpy as np
import scipy
import scipy.optimize
import scipy.stats

rng = np.random.RandomState(20261202)  # legacy generator: stream fixed across numpy versions
n = 3000
month = rng.randint(1, 13, n)
obs_hm0 = 1.8 * rng.weibull(1.5, n) + 0.2
mod_hm0 = 0.08 + 1.06 * obs_hm0 + 0.25 * rng.standard_normal(n)
obs_te = 4.0 + 2.2 * np.sqrt(obs_hm0) + 0.5 * rng.standard_normal(n)
mod_te = 0.97 * obs_te - 0.1 + 0.4 * rng.standard_normal(n)
obs_tp = 1.15 * obs_te + 0.3 * rng.standard_normal(n)
mod_tp = 1.12 * mod_te + 0.3 * rng.standard_normal(n)
obs_dir = np.mod(330 + 40 * rng.standard_normal(n), 360)  # wraps through north
mod_dir = np.mod(obs_dir + 6 + 15 * rng.standard_normal(n), 360)
# some missing values on either side
for a in (obs_hm0, mod_hm0, obs_te, mod_te, obs_tp, mod_tp, obs_dir, mod_dir):
    a[rng.rand(n) < 0.02] = np.nan

DEPTH = 40.0
RHO, G = 1025.0, 9.81


def cg(te, h):
    """Group velocity of linear waves at frequency 1/te in depth h:
    w^2 = g k tanh(k h) solved with scipy's brentq; cg = (w/k)(1/2 + kh/sinh(2kh))."""
    w = 2 * math.pi / te
    k = scipy.optimize.brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-9, 100.0, xtol=1e-15, rtol=1e-15)
    kh = k * h
    return w / k * (0.5 + kh / math.sinh(2 * kh))


def power_kw(hm0, te):
    out = np.full(n, np.nan)
    for i in range(n):
        if np.isfinite(hm0[i]) and np.isfinite(te[i]) and hm0[i] >= 0 and te[i] > 0:
            out[i] = RHO * G * hm0[i] ** 2 * cg(te[i], DEPTH) / 16 / 1000
    return out


obs_pw, mod_pw = power_kw(obs_hm0, obs_te), power_kw(mod_hm0, mod_te)


def linear_stats(m, o):
    ok = np.isfinite(m) & np.isfinite(o)
    m, o = m[ok], o[ok]
    d = m - o
    rmse = float(np.sqrt(np.mean(d ** 2)))
    slope0 = float(np.linalg.lstsq(o[:, None], m, rcond=None)[0][0])
    return {
        "n": int(ok.sum()),
        "mean_obs": float(np.mean(o)), "mean_model": float(np.mean(m)),
        "bias": float(np.mean(d)), "rmse": rmse, "scatter_index": rmse / float(np.mean(o)),
        "r": float(scipy.stats.pearsonr(m, o)[0]) if len(m) > 2 else None,
        "slope_origin": slope0,
        "slope_symmetric": float(np.sqrt(np.sum(m ** 2) / np.sum(o ** 2))),
    }


def with_q(st, m, o):
    """Adds the Q-Q quantiles 1..99 (numpy's default "linear" method) of each side."""
    ok = np.isfinite(m) & np.isfinite(o)
    st["q_model"] = np.percentile(m[ok], np.arange(1, 100), method="linear").tolist()
    st["q_obs"] = np.percentile(o[ok], np.arange(1, 100), method="linear").tolist()
    return st


def circ_stats(m, o):
    ok = np.isfinite(m) & np.isfinite(o)
    m, o = m[ok], o[ok]
    d = np.mod(m - o + 180, 360) - 180
    return {
        "n": int(ok.sum()),
        "mean_obs": float(scipy.stats.circmean(o, high=360, low=0)),
        "mean_model": float(scipy.stats.circmean(m, high=360, low=0)),
        "bias": float(scipy.stats.circmean(d, high=180, low=-180)),
        "rmse": float(np.sqrt(np.mean(d ** 2))),
    }


thr = float(np.nanpercentile(obs_hm0, 95, method="linear"))
groups = {"all": np.arange(n)}
for mo in range(1, 13):
    groups["month_%02d" % mo] = np.where(month == mo)[0]
for name, ms in (("DJF", (12, 1, 2)), ("MAM", (3, 4, 5)), ("JJA", (6, 7, 8)), ("SON", (9, 10, 11))):
    groups[name] = np.where(np.isin(month, ms))[0]
with np.errstate(invalid="ignore"):
    groups["storm_p95"] = np.where(obs_hm0 > thr)[0]

ref = {"numpy": np.__version__, "scipy": scipy.__version__, "depth_m": DEPTH, "rho": RHO, "g": G,
       "storm_threshold_m": thr, "groups": {}}
for g, idx in groups.items():
    ref["groups"][g] = {
        "hm0": with_q(linear_stats(mod_hm0[idx], obs_hm0[idx]), mod_hm0[idx], obs_hm0[idx]),
        "te": linear_stats(mod_te[idx], obs_te[idx]),
        "tp": linear_stats(mod_tp[idx], obs_tp[idx]),
        "power": with_q(linear_stats(mod_pw[idx], obs_pw[idx]), mod_pw[idx], obs_pw[idx]),
        "dir": circ_stats(mod_dir[idx], obs_dir[idx]),
    }
with open("reference.json", "w") as f:
    json.dump(ref, f, indent=1)
with open("pairs.csv", "w") as f:
    f.write("# invented pairs for tests (see make_ref.py); columns: month,obs_hm0,mod_hm0,obs_te,mod_te,obs_tp,mod_tp,obs_dir,mod_dir\n")
    for row in zip(month, obs_hm0, mod_hm0, obs_te, mod_te, obs_tp, mod_tp, obs_dir, mod_dir):
        f.write(str(int(row[0])) + "," + ",".join(repr(float(v)) for v in row[1:]) + "\n")
