#!/usr/bin/python3
"""Reference values for stats/design (design sea states), made with Debian's
python3-scipy and python3-numpy:

    /usr/bin/python3 testdata/design/make_scipy_design_refs.py

from the repository root; writes testdata/design/scipy_design_refs.json.

1. A sample of 200 000 sea states drawn (numpy, seeded) from a joint model of
   the conditional modelling approach (DNV-RP-C205, section 3.6.3): Hm0 a
   3-parameter Weibull, ln Te given Hm0 normal with mean a0 + a1 h^a2 and
   standard deviation b0 + b1 exp(-b2 h). The parameters are invented for the
   check (a plausible open-ocean shape), not taken from any site.
   Stored: the sample binned as swellgrid bins it (Hm0 histogram of 0.05 m up
   to 20 m; joint Hm0 x Te table of 0.5 m x 1 s up to 10 m x 20 s, open last
   bins), and from the raw sample: scipy.stats.weibull_min.fit (maximum
   likelihood, location free), the per-row mean Hm0 and mean / standard
   deviation of ln Te in the 0.5 m rows, and scipy.optimize.curve_fit of the
   mean and standard-deviation functions to those rows (weights: row counts).
2. IFORM environmental contours (Winterstein et al. 1993; DNV-RP-C205 section
   3.7.2) of the northern North Sea joint model of Haver & Winterstein (2009),
   parameters quoted from memory: Hs a hybrid log-normal (h <= 3.213 m:
   mu 0.801, sigma 0.371) / Weibull (h > 3.213 m: scale 2.713, shape 1.531)
   marginal; ln Tp given Hs normal with mean 1.780 + 0.288 h^0.474 and
   variance 0.001 + 0.097 exp(-0.255 h). Return periods 1 and 100 years,
   3-hour sea states, 36 points from angle 0, computed here with scipy.stats.
"""
import json
import numpy as np
import scipy
from scipy import stats, optimize

rng = np.random.default_rng(20261202)
N = 200_000
gam, alpha, beta = 0.3, 1.8, 1.4
a = (1.2, 0.6, 0.45)
b = (0.05, 0.15, 0.4)
h = gam + alpha * rng.weibull(beta, N)
mu = a[0] + a[1] * h ** a[2]
sd = b[0] + b[1] * np.exp(-b[2] * h)
te = np.exp(mu + sd * rng.standard_normal(N))

# swellgrid's binning: Hm0 histogram bins of 0.05 m, 400 regular bins up to 20 m plus one open bin.
hist = np.bincount(np.minimum((h / 0.05).astype(int), 400), minlength=401)
# joint table: 0.5 m x 1 s, 20 x 20 regular bins up to 10 m and 20 s, one open row and column.
ih = np.minimum((h / 0.5).astype(int), 20)
it = np.minimum((te / 1.0).astype(int), 20)
scatter = np.zeros((21, 21), dtype=int)
np.add.at(scatter, (ih, it), 1)

c, loc, scale = stats.weibull_min.fit(h, 1.3, loc=0.2, scale=1.7)

rows = []
for r in range(20):
    m = ih == r
    if m.sum() < 50:
        continue
    lt = np.log(te[m])
    rows.append({"row": r, "n": int(m.sum()), "hm0_mean": float(h[m].mean()),
                 "ln_te_mean": float(lt.mean()), "ln_te_std": float(lt.std())})
hm = np.array([x["hm0_mean"] for x in rows])
lm = np.array([x["ln_te_mean"] for x in rows])
ls = np.array([x["ln_te_std"] for x in rows])
w = np.array([x["n"] for x in rows], dtype=float)
fmu = lambda x, a0, a1, a2: a0 + a1 * x ** a2
fsd = lambda x, b0, b1, b2: b0 + b1 * np.exp(-b2 * x)
pmu, _ = optimize.curve_fit(fmu, hm, lm, p0=(1, 1, 0.5), sigma=1 / np.sqrt(w), maxfev=20000)
psd, _ = optimize.curve_fit(fsd, hm, ls, p0=(0.05, 0.1, 0.3), sigma=1 / np.sqrt(w), maxfev=20000)

# Haver & Winterstein (2009) northern North Sea model, parameters from memory (see above).
eta = 3.213
def hs_ppf(p):
    ln = stats.lognorm(s=0.371, scale=np.exp(0.801))
    if p <= ln.cdf(eta):
        return float(ln.ppf(p))
    return float(stats.weibull_min(1.531, scale=2.713).ppf(p))
contours = {}
for T in (1, 100):
    pe = 3.0 / (T * 365.25 * 24)
    bta = stats.norm.ppf(1 - pe)
    pts = []
    for k in range(36):
        th = 2 * np.pi * k / 36
        u1, u2 = bta * np.cos(th), bta * np.sin(th)
        hs = hs_ppf(stats.norm.cdf(u1))
        m = 1.780 + 0.288 * hs ** 0.474
        s = np.sqrt(0.001 + 0.097 * np.exp(-0.255 * hs))
        pts.append([hs, float(np.exp(m + s * u2))])
    contours[str(T)] = {"beta": float(bta), "points": pts}

out = {
    "made_by": "make_scipy_design_refs.py",
    "numpy": np.__version__, "scipy": scipy.__version__,
    "sample": {"n": N, "weibull_truth": [gam, alpha, beta], "mu_truth": a, "sigma_truth": b},
    "hm0_hist_res_m": 0.05, "hm0_hist": hist.tolist(),
    "scatter_hm0_step_m": 0.5, "scatter_te_step_s": 1.0, "scatter": scatter.tolist(),
    "weibull_min_fit": {"shape": c, "loc": loc, "scale": scale},
    "rows": rows, "curve_fit_mu": pmu.tolist(), "curve_fit_sigma": psd.tolist(),
    "haver_winterstein_2009": {"sea_state_h": 3, "n_points": 36, "contours": contours},
}
with open("testdata/design/scipy_design_refs.json", "w") as f:
    json.dump(out, f, indent=1)
print("weibull_min.fit", c, loc, scale)
print("mu", pmu, "sigma", psd)
print("HW 100y beta", contours["100"]["beta"], "max hs", max(p[0] for p in contours["100"]["points"]))
