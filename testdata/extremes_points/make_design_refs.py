#!/usr/bin/python3
"""Independent design sea states for extremes_points.nc (the reference of the
end-to-end check of the design columns, pipelines TestDesignEndToEnd), with
Debian's python3-netcdf4, python3-numpy and python3-scipy:

    /usr/bin/python3 testdata/extremes_points/make_design_refs.py

(from the repository root); writes testdata/extremes_points/design_refs.json.
For stations 1 and 2, from the unbinned 6-hourly sea states: Hm0 marginal by
scipy.stats.weibull_min.fit (3 parameters), ln Te given Hm0 normal with mean
a0 + a1 h^a2 and sd b0 + b1 exp(-b2 h) fitted by scipy.optimize.curve_fit to
the moments of ln Te in 0.5 m Hm0 rows (rows with at least 1e-4 of the steps,
weights the row counts) (DNV-RP-C205 section 3.6.3), and the IFORM contour
(Winterstein et al. 1993) for 1, 10, 50 and 100 years with 6-hour sea states:
its largest Hm0 and the median Te there, and 36 points from angle 0.
"""
import json
import numpy as np
import netCDF4
from scipy import stats, optimize

ds = netCDF4.Dataset("testdata/extremes_points/extremes_points.nc")
H = np.asarray(ds["hm0"][:], dtype=float)
T = np.asarray(ds["te"][:], dtype=float)
out = {}
for st in (1, 2):
    h, te = H[:, st], T[:, st]
    c, loc, scale = stats.weibull_min.fit(h, 1.5, loc=0.9 * h.min(), scale=h.mean())
    ih = (h / 0.5).astype(int)
    hm, lm, ls, w = [], [], [], []
    for r in range(ih.max() + 1):
        m = ih == r
        if m.sum() < 1e-4 * len(h) or m.sum() < 2:
            continue
        hm.append(h[m].mean()); lm.append(np.log(te[m]).mean()); ls.append(np.log(te[m]).std()); w.append(m.sum())
    hm, lm, ls, w = map(np.array, (hm, lm, ls, w))
    pmu, _ = optimize.curve_fit(lambda x, a0, a1, a2: a0 + a1 * x ** a2, hm, lm, p0=(1, 0.5, 0.5), sigma=1 / np.sqrt(w), maxfev=20000)
    psd, _ = optimize.curve_fit(lambda x, b0, b1, b2: b0 + b1 * np.exp(-b2 * x), hm, ls, p0=(0.05, 0.1, 0.3), sigma=1 / np.sqrt(w), maxfev=20000)
    mu = lambda x: pmu[0] + pmu[1] * x ** pmu[2]
    sg = lambda x: psd[0] + psd[1] * np.exp(-psd[2] * x)
    W = stats.weibull_min(c, loc=loc, scale=scale)
    res = {"weibull": [loc, scale, c], "mu": pmu.tolist(), "sigma": psd.tolist(), "contours": {}}
    for Ty in (1, 10, 50, 100):
        beta = stats.norm.ppf(1 - 6.0 / (Ty * 8766))
        pts = []
        for k in range(36):
            th = 2 * np.pi * k / 36
            x = float(W.isf(stats.norm.sf(beta * np.cos(th))))
            pts.append([x, float(np.exp(mu(x) + sg(x) * beta * np.sin(th)))])
        hmax = float(W.isf(stats.norm.sf(beta)))
        res["contours"][str(Ty)] = {"hm0_max": hmax, "te_at_max": float(np.exp(mu(hmax))), "points": pts}
    out[str(st)] = res
    print(st, res["weibull"], res["contours"]["100"]["hm0_max"], res["contours"]["100"]["te_at_max"])
with open("testdata/extremes_points/design_refs.json", "w") as f:
    json.dump(out, f, indent=1)
