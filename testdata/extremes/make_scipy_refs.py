#!/usr/bin/python3
"""Reference values for swellgrid/stats/extremes tests, made with Debian's
python3-scipy and python3-numpy (versions written into the output).

Run: /usr/bin/python3 testdata/extremes/make_scipy_refs.py > testdata/extremes/scipy_refs.json

Sign convention: scipy's genextreme shape c is minus the Coles (2001) shape xi;
genpareto's c equals xi. Everything written below uses xi (Coles sign).
Samples are drawn with numpy's default_rng(seed) from known parameters; the
maximum-likelihood fits are scipy's own (genextreme.fit / genpareto.fit with
floc=0), refined with a tight Nelder-Mead tolerance.
"""
import json
import numpy as np
import scipy
from scipy import optimize
from scipy.stats import genextreme, genpareto


def tight_fmin(func, x0, args=(), disp=0):
    return optimize.fmin(func, x0, args=args, disp=disp, xtol=1e-10, ftol=1e-12, maxiter=20000, maxfun=40000)


out = {"scipy": scipy.__version__, "numpy": np.__version__, "gev_fits": [], "gpd_fits": [],
       "gev_values": [], "gpd_values": []}

for seed, (mu, sigma, xi, n) in enumerate([(3.0, 0.8, -0.2, 30), (5.0, 1.2, 0.0, 30), (4.0, 0.6, 0.1, 50),
                                           (8.0, 1.5, 0.3, 100), (2.5, 0.4, -0.05, 65)]):
    rng = np.random.default_rng(1000 + seed)
    x = genextreme.rvs(-xi, loc=mu, scale=sigma, size=n, random_state=rng)
    c, loc, scale = genextreme.fit(x, optimizer=tight_fmin)
    ll = float(np.sum(genextreme.logpdf(x, c, loc=loc, scale=scale)))
    rl100 = float(genextreme.ppf(1 - 1 / 100, c, loc=loc, scale=scale))
    out["gev_fits"].append({"seed": 1000 + seed, "true": [mu, sigma, xi], "x": [float(v) for v in x],
                            "mle": [float(loc), float(scale), float(-c)], "loglik": ll, "rl100": rl100})

for seed, (sigma, xi, n) in enumerate([(1.0, 0.0, 40), (0.7, 0.2, 80), (1.5, -0.2, 60), (0.5, 0.1, 150)]):
    rng = np.random.default_rng(2000 + seed)
    y = genpareto.rvs(xi, loc=0, scale=sigma, size=n, random_state=rng)
    c, loc, scale = genpareto.fit(y, floc=0, optimizer=tight_fmin)
    ll = float(np.sum(genpareto.logpdf(y, c, loc=0, scale=scale)))
    out["gpd_fits"].append({"seed": 2000 + seed, "true": [sigma, xi], "y": [float(v) for v in y],
                            "mle": [float(scale), float(c)], "loglik": ll})

for (mu, sigma, xi) in [(3.0, 0.8, -0.2), (5.0, 1.2, 0.0), (4.0, 0.6, 0.1), (1.0, 2.0, 1e-7), (1.0, 2.0, 0.4)]:
    for z in [mu - sigma, mu, mu + 0.5 * sigma, mu + 3 * sigma]:
        out["gev_values"].append({"par": [mu, sigma, xi], "z": z,
                                  "cdf": float(genextreme.cdf(z, -xi, loc=mu, scale=sigma)),
                                  "logpdf": float(genextreme.logpdf(z, -xi, loc=mu, scale=sigma))})
    for p in [0.5, 0.9, 0.99]:
        out["gev_values"].append({"par": [mu, sigma, xi], "p": p,
                                  "ppf": float(genextreme.ppf(p, -xi, loc=mu, scale=sigma))})

for (u, sigma, xi) in [(2.0, 1.0, 0.0), (2.0, 0.7, 0.2), (1.0, 1.5, -0.2), (0.0, 1.0, -1e-7)]:
    for x in [u + 0.1, u + 1.0, u + 3.0]:
        out["gpd_values"].append({"par": [u, sigma, xi], "x": x,
                                  "sf": float(genpareto.sf(x, xi, loc=u, scale=sigma)),
                                  "logpdf": float(genpareto.logpdf(x, xi, loc=u, scale=sigma))})
    for p in [0.5, 0.9, 0.99]:
        out["gpd_values"].append({"par": [u, sigma, xi], "p": p,
                                  "ppf": float(genpareto.ppf(p, xi, loc=u, scale=sigma))})

# The published exceedance series of the Coles (2001) rainfall example (rain_exceedances.csv).
import os
here = os.path.dirname(os.path.abspath(__file__))
rain = [float(l) for l in open(os.path.join(here, "rain_exceedances.csv")) if l.strip() and not l.startswith("#") and l[0].isdigit()]
c, loc, scale = genpareto.fit(np.array(rain) - 30, floc=0, optimizer=tight_fmin)
out["rain"] = {"threshold": 30, "n": len(rain), "mle": [float(scale), float(c)]}

print(json.dumps(out, indent=1))
