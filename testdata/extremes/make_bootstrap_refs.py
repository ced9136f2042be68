#!/usr/bin/python3
"""Parametric-bootstrap reference for stats/extremes TestBootstrapAgainstScipy,
made with Debian's python3-scipy and python3-numpy (versions written into the
output), independently of swellgrid.

Data: the Port Pirie annual maxima (portpirie.csv, Coles 2001 section 3.4.1)
for the GEV, and the rainfall exceedances of 30 mm (rain_exceedances.csv,
Coles 2001 section 4.4.1; 48.03 years of 365 days) for the GPD. Method (the
parametric bootstrap, Davison and Hinkley 1997 section 2.2): fit by maximum
likelihood with scipy (genextreme.fit; genpareto.fit with floc = threshold);
draw B samples of the fitted law with numpy's default_rng(seed) (the GEV: the
record's number of maxima; the GPD: a Poisson number of exceedances of mean
rate x years, so the rate's uncertainty enters), refit each, and take the
2.5 % and 97.5 % points (numpy.percentile, method "inverted_cdf", the
empirical quantile) of each return level over the refits that converged.
Each end also gets its Monte Carlo band: the order statistics of ranks
B p -+ 3.29 sqrt(B p (1 - p)) (a 99.9 % distribution-free band of the
percentile), within which a second bootstrap of the same size should place
its end.
Run: /usr/bin/python3 testdata/extremes/make_bootstrap_refs.py > testdata/extremes/bootstrap_refs.json
"""
import json
import math
import os

import numpy as np
import scipy
from scipy.stats import genextreme, genpareto

HERE = os.path.dirname(os.path.abspath(__file__))
B = 2000
PERIODS = [10.0, 100.0]


def column(name, k):
    rows = [l for l in open(os.path.join(HERE, name)) if l.strip() and not l.startswith("#")]
    out = []
    for l in rows:
        try:
            out.append(float(l.split(",")[k]))
        except ValueError:
            pass  # a header line
    return np.array(out)


def ends(samples):
    s = np.sort(np.asarray(samples))
    n = len(s)
    out = []
    for p in (0.025, 0.975):
        q = float(np.percentile(s, 100 * p, method="inverted_cdf"))
        half = 3.29 * math.sqrt(n * p * (1 - p))
        lo, hi = int(max(0, math.floor(n * p - half))), int(min(n - 1, math.ceil(n * p + half)))
        out.append({"value": q, "band": [float(s[lo]), float(s[hi])]})
    return out


def gev_level(c, loc, scale, T):
    return genextreme.ppf(1 - 1 / T, c, loc=loc, scale=scale)


def main():
    out = {"scipy": scipy.__version__, "numpy": np.__version__, "B": B, "periods": PERIODS}
    x = column("portpirie.csv", 1)
    c, loc, scale = genextreme.fit(x)
    rng = np.random.default_rng(20261202)
    samples = [[] for _ in PERIODS]
    for _ in range(B):
        y = genextreme.rvs(c, loc=loc, scale=scale, size=len(x), random_state=rng)
        bc, bl, bs = genextreme.fit(y, c, loc=loc, scale=scale)
        for i, T in enumerate(PERIODS):
            samples[i].append(gev_level(bc, bl, bs, T))
    out["gev"] = {"n": len(x), "fit": {"loc": loc, "scale": scale, "shape": -c},
                  "levels": [{"period_y": T, "level": float(gev_level(c, loc, scale, T)), "ends": ends(samples[i])}
                             for i, T in enumerate(PERIODS)]}

    r = column("rain_exceedances.csv", 0)
    u, years = 30.0, 17531.0 / 365
    gc, _, gs = genpareto.fit(r - u, floc=0)
    lam = len(r) / years
    samples = [[] for _ in PERIODS]
    for _ in range(B):
        n = rng.poisson(lam * years)
        y = genpareto.rvs(gc, scale=gs, size=n, random_state=rng)
        bc, _, bs = genpareto.fit(y, gc, floc=0, scale=gs)
        for i, T in enumerate(PERIODS):
            samples[i].append(u + genpareto.ppf(1 - 1 / (T * n / years), bc, scale=bs))
    out["gpd"] = {"threshold": u, "years": years, "n": len(r),
                  "fit": {"scale": gs, "shape": gc, "rate_per_year": lam},
                  "levels": [{"period_y": T, "level": float(u + genpareto.ppf(1 - 1 / (T * lam), gc, scale=gs)), "ends": ends(samples[i])}
                             for i, T in enumerate(PERIODS)]}
    print(json.dumps(out, indent=1, sort_keys=True))


if __name__ == "__main__":
    main()
