#!/usr/bin/python3
"""Reference values for the tests of swellgrid/stats/seastate.

Computed independently of the Go code with Debian's python3-scipy and
python3-numpy (the versions used are written into the output). Run from the
repository root:

    /usr/bin/python3 testdata/seastate/make_reference.py > testdata/seastate/reference.json

The spectra are synthetic (textbook JONSWAP x cos-2s shapes with invented
parameters); they describe no real place.
"""
import json
import math
import sys

import numpy as np
import scipy
from scipy import integrate, optimize, special

RHO, G = 1025.0, 9.81


def wavenumber(f, h):
    """Root of omega^2 = g k tanh(k h), by scipy.optimize.brentq."""
    w = 2 * math.pi * f
    if h is None:
        return w * w / G
    kdeep = w * w / G
    kshal = w / math.sqrt(G * h)
    hi = 10 * max(kdeep, kshal)
    return optimize.brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-14, hi,
                           xtol=1e-300, rtol=4 * np.finfo(float).eps, maxiter=500)


def group_velocity(f, h):
    w = 2 * math.pi * f
    if h is None:
        return G / (2 * w)
    k = wavenumber(f, h)
    kh = k * h
    n = 0.5 * (1 + 2 * kh / math.sinh(2 * kh)) if kh < 350 else 0.5
    return n * w / k


def jonswap_shape(x, gamma):
    """Hasselmann et al. (1973) JONSWAP shape in x = f/fp."""
    if x <= 0:
        return 0.0
    sig = 0.07 if x <= 1 else 0.09
    r = math.exp(-((x - 1) ** 2) / (2 * sig * sig))
    return x ** -5 * math.exp(-1.25 * x ** -4) * gamma ** r


def shape_moment(n, gamma):
    f = lambda x: x ** n * jonswap_shape(x, gamma)
    a, _ = integrate.quad(f, 0, 1, epsabs=0, epsrel=1e-13, limit=500)
    b, _ = integrate.quad(f, 1, 3, epsabs=0, epsrel=1e-13, limit=500)
    c, _ = integrate.quad(f, 3, np.inf, epsabs=0, epsrel=1e-13, limit=500)
    return a + b + c


def jonswap(freq, hm0, tp, gamma):
    fp = 1.0 / tp
    i0 = shape_moment(0, gamma)
    return np.array([hm0 * hm0 / 16 * jonswap_shape(f / fp, gamma) / (fp * i0) for f in freq])


def cos2s_norm(s):
    return 2 ** (2 * s - 1) * special.gamma(s + 1) ** 2 / (math.pi * special.gamma(2 * s + 1))


def cos2s(dirs_deg, mean_deg, s):
    d = np.radians(np.asarray(dirs_deg) - mean_deg)
    return cos2s_norm(s) * np.abs(np.cos(d / 2)) ** (2 * s)


def circular_widths(dirs_deg):
    """Half the circular gap to each neighbour, radians, input order."""
    d = np.mod(np.asarray(dirs_deg, float), 360)
    order = np.argsort(d)
    ds = d[order]
    prev = np.mod(ds - np.roll(ds, 1), 360)
    nxt = np.mod(np.roll(ds, -1) - ds, 360)
    w = np.empty_like(d)
    w[order] = np.radians(0.5 * (prev + nxt))
    return w


def spectrum_case():
    rng = np.random.default_rng(20261201)
    freq_sorted = 0.035 * 1.1 ** np.arange(29)
    fperm = rng.permutation(29)
    freq = freq_sorted[fperm]
    dirs = np.mod(7.5 + 15.0 * np.arange(24), 360)[rng.permutation(24)]
    # synthetic bimodal sea: wind sea plus swell
    s2 = (jonswap(freq, 2.5, 9.3, 2.1)[:, None] * cos2s(dirs, 253.0, 6.0)[None, :]
          + jonswap(freq, 1.2, 14.2, 5.0)[:, None] * cos2s(dirs, 301.0, 12.0)[None, :])
    depth = 30.0
    # bin widths: numpy.gradient of sorted frequencies, mapped back
    df = np.empty(29)
    df[np.argsort(freq)] = np.gradient(np.sort(freq))
    dth = circular_widths(dirs)
    e = (s2 * dth[None, :]).sum(axis=1)
    m = [float(np.sum(freq ** n * e * df)) for n in (-2, -1, 0, 1, 2)]
    cg = np.array([group_velocity(f, depth) for f in freq])
    j = RHO * G * float(np.sum(cg[:, None] * s2 * df[:, None] * dth[None, :]))
    a = RHO * G * (cg[:, None] * s2 * df[:, None] * dth[None, :]).sum(axis=0)
    th = np.radians(dirs)

    def jtheta(t_deg):
        c = np.cos(np.radians(t_deg) - th)
        return float(np.sum(a * np.where(c >= 0, c, 0.0)))

    grid = np.arange(0, 360, 0.01)
    cc = np.cos(np.radians(grid)[:, None] - th[None, :])
    vals = (a[None, :] * np.where(cc >= 0, cc, 0.0)).sum(axis=1)
    g0 = grid[int(np.argmax(vals))]
    res = optimize.minimize_scalar(lambda t: -jtheta(t), bounds=(g0 - 0.02, g0 + 0.02),
                                   method="bounded", options={"xatol": 1e-10})
    jmax, dmax = -res.fun, float(np.mod(res.x, 360))
    # peak: discrete and parabola through the peak and its neighbours (numpy.polyfit)
    order = np.argsort(freq)
    es, fs = e[order], freq[order]
    ip = int(np.argmax(es))
    p = np.polyfit(fs[ip - 1:ip + 2], es[ip - 1:ip + 2], 2)
    fv = -p[1] / (2 * p[0])
    m_2, m_1, m0, m1, m2 = m
    return {
        "description": "synthetic bimodal 2-D spectrum, permuted frequencies and directions, depth 30 m",
        "depth_m": depth, "freq_hz": freq.tolist(), "dir_deg": dirs.tolist(),
        "s_m2_per_hz_per_rad": s2.ravel().tolist(),
        "moments": m, "hm0": 4 * math.sqrt(m0), "te": m_1 / m0, "tm01": m0 / m1,
        "tm02": math.sqrt(m0 / m2), "eps0": math.sqrt(m0 * m_2 / m_1 ** 2 - 1),
        "tp_discrete": 1 / fs[ip], "tp_parabolic": 1 / fv,
        "j_w_per_m": j, "jtheta_max_w_per_m": jmax, "dir_max_deg": dmax,
        "directionality": jmax / j,
        "e_1d_m2_per_hz": e.tolist(),
        "j_1d_w_per_m": RHO * G * float(np.sum(cg * e * df)),
    }


def main():
    out = {
        "generator": "testdata/seastate/make_reference.py",
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "rho": RHO, "g": G,
    }
    disp = []
    for h in (0.5, 2.0, 10.0, 30.0, 100.0, 1000.0):
        for f in (0.02, 0.05, 0.1, 0.2, 0.5, 1.0):
            disp.append({"f_hz": f, "h_m": h, "k": wavenumber(f, h), "cg": group_velocity(f, h)})
    out["dispersion"] = disp
    js = []
    for gamma in (1.0, 2.0, 3.3, 5.0, 7.0):
        i = {n: shape_moment(n, gamma) for n in (-2, -1, 0, 1, 2)}
        js.append({"gamma": gamma, "te_over_tp": i[-1] / i[0], "tm01_over_tp": i[0] / i[1],
                   "tm02_over_tp": math.sqrt(i[0] / i[2]),
                   "eps0": math.sqrt(i[0] * i[-2] / i[-1] ** 2 - 1)})
    out["jonswap"] = js
    freq = [0.04, 0.07, 0.1, 0.13, 0.2, 0.3]
    out["jonswap_values"] = {"freq_hz": freq, "hm0": 3.0, "tp": 10.0, "gamma": 3.3,
                             "s_m2_per_hz": jonswap(freq, 3.0, 10.0, 3.3).tolist()}
    cs = []
    for s in (0.5, 1.0, 2.0, 5.0, 10.0, 20.0):
        nrm = cos2s_norm(s)
        f = lambda p: nrm * abs(math.cos(p / 2)) ** (2 * s)
        total, _ = integrate.quad(f, -math.pi, math.pi, epsabs=0, epsrel=1e-13)
        dc, _ = integrate.quad(lambda p: f(p) * math.cos(p), -math.pi / 2, math.pi / 2,
                               epsabs=0, epsrel=1e-13)
        cs.append({"s": s, "integral": total, "directionality": dc})
    out["cos2s"] = cs
    par = []
    rng = np.random.default_rng(7)
    for _ in range(5):
        x = np.sort(rng.uniform(0.05, 0.3, 3))
        y = np.array([0.5, 1.0, 0.5]) + rng.uniform(-0.3, 0.3, 3) * np.array([1, 0, 1])
        p = np.polyfit(x, y, 2)
        par.append({"x": x.tolist(), "y": y.tolist(), "vertex": -p[1] / (2 * p[0])})
    out["parabola"] = par
    bulk = []
    for hm0, te, h in ((1.0, 1.0, None), (2.0, 8.0, 20.0), (3.5, 11.0, 50.0), (1.5, 6.0, 10.0), (4.0, 13.0, 100.0)):
        cg = group_velocity(1 / te, h)
        bulk.append({"hm0": hm0, "te": te, "h_m": h if h is not None else "deep",
                     "j_w_per_m": RHO * G * hm0 * hm0 * cg / 16})
    out["bulk"] = bulk
    out["spectrum"] = spectrum_case()
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
