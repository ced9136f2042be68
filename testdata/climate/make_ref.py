#!/usr/bin/python3
"""Reference values for stats/climate tests, made with Debian's python3-numpy
and python3-scipy (versions recorded in the output). The samples are invented
(seeded pseudo-random numbers, no real place); they are written to samples.csv
and the statistics numpy/scipy compute from them to reference.json.

Run from this directory:  /usr/bin/python3 make_ref.py
"""
import json
import numpy as np
import scipy
import scipy.stats

rng = np.random.RandomState(20240611)  # legacy generator: stream fixed across numpy versions
n = 4000
# Hm0 (m): Weibull-like; Te (s) tied to Hm0; J (W/m) deep-water bulk formula
hm0 = 2.2 * rng.weibull(1.6, n) + 0.1
te = 3.5 + 2.5 * np.sqrt(hm0) + 0.4 * rng.standard_normal(n)
tp = 1.15 * te + 0.2 * rng.standard_normal(n)
J = 1025 * 9.81**2 * hm0**2 * te / (64 * np.pi)
dirdeg = np.mod(300 + 50 * rng.standard_normal(n), 360)  # wraps through north
# time weights: mostly 1 h, some 3 h (whole minutes)
dt = np.where(rng.rand(n) < 0.2, 3.0, 1.0)
hours = np.concatenate([[0.0], np.cumsum(dt)[:-1]])

with open("samples.csv", "w") as f:
    f.write("# invented samples for tests (see make_ref.py); columns: hours,dt_h,J_w_m,hm0_m,te_s,tp_s,dir_deg\n")
    for row in zip(hours, dt, J, hm0, te, tp, dirdeg):
        f.write(",".join(repr(float(v)) for v in row) + "\n")

pcts = [10, 50, 90, 99]
ref = {
    "numpy_version": np.__version__,
    "scipy_version": scipy.__version__,
    "n": n,
    "percentile_levels": pcts,
    # unit weights (every step counts once): numpy.mean / std(ddof=0) / percentile(linear)
    "unweighted": {
        "J_mean": float(np.mean(J)), "J_std": float(np.std(J)), "J_max": float(np.max(J)),
        "J_percentiles": [float(v) for v in np.percentile(J, pcts)],
        "hm0_mean": float(np.mean(hm0)), "hm0_std": float(np.std(hm0)), "hm0_max": float(np.max(hm0)),
        "hm0_percentiles": [float(v) for v in np.percentile(hm0, pcts)],
        "te_mean": float(np.mean(te)), "tp_mean": float(np.mean(tp)),
        "dir_circmean": float(scipy.stats.circmean(dirdeg, high=360, low=0)),
        "hm0_share_ge": {str(e): float(np.mean(hm0 >= e)) for e in [0.5, 1.0, 2.0, 3.0, 5.0]},
    },
    # time-weighted by dt: numpy.average(weights=dt); std = sqrt(average((x-mean)^2, weights=dt))
    "weighted": {},
}
for name, x in [("J", J), ("hm0", hm0), ("te", te)]:
    m = np.average(x, weights=dt)
    ref["weighted"][name + "_mean"] = float(m)
    ref["weighted"][name + "_std"] = float(np.sqrt(np.average((x - m) ** 2, weights=dt)))

# joint occurrence, unit weights, 0.5 m x 1 s bins, last row/col open (Hm0 >= 10, Te >= 20)
r = np.minimum(np.floor(hm0 / 0.5), 20).astype(int)
c = np.minimum(np.floor(te / 1.0), 20).astype(int)
cells = {}
for i in range(n):
    cells.setdefault((int(r[i]), int(c[i])), []).append(J[i])
ref["scatter_unweighted"] = [
    {"row": k[0], "col": k[1], "count": len(v), "J_mean": float(np.mean(v))} for k, v in sorted(cells.items())
]

with open("reference.json", "w") as f:
    json.dump(ref, f, indent=1, sort_keys=True)
    f.write("\n")
