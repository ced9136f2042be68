#!/usr/bin/python3
"""Group velocities between the nodes of swellgrid's dimensionless cg table.

The table (stats/seastate/cgtable.go) interpolates G(y) = cg / sqrt(g h) over
y = omega^2 h / g in [0, 19) on 1024 equal intervals. This script picks
(f, h) pairs whose y falls a quarter, a half and three quarters into sampled
intervals (and at random y), and computes cg there with Debian's
python3-scipy (scipy.optimize.brentq on omega^2 = g k tanh(k h), linear wave
theory cg = n omega / k, n = (1 + 2kh / sinh 2kh) / 2). Run from the
repository root:

    /usr/bin/python3 testdata/seastate/make_cgtable_reference.py > testdata/seastate/cgtable_reference.json
"""
import json
import math
import random

import numpy as np
import scipy
from scipy import optimize

G = 9.81
YMAX, N = 19.0, 1024


def wavenumber(f, h):
    w = 2 * math.pi * f
    hi = 10 * max(w * w / G, w / math.sqrt(G * h))
    return optimize.brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-14, hi,
                           xtol=1e-300, rtol=4 * np.finfo(float).eps, maxiter=500)


def group_velocity(f, h):
    w = 2 * math.pi * f
    k = wavenumber(f, h)
    kh = k * h
    n = 0.5 * (1 + 2 * kh / math.sinh(2 * kh))
    return n * w / k


def main():
    rng = random.Random(16)
    pts = []
    depths = [0.7, 4.0, 15.0, 42.0, 120.0, 900.0]
    for i in range(0, N, 3):
        for frac in (0.25, 0.5, 0.75):
            y = (i + frac) * YMAX / N
            h = depths[(i // 3) % len(depths)]
            w = math.sqrt(y * G / h)
            pts.append((w / (2 * math.pi), h))
    for _ in range(1000):
        y = rng.uniform(1e-6, YMAX * (1 - 1e-9))
        h = math.exp(rng.uniform(math.log(0.3), math.log(3000)))
        pts.append((math.sqrt(y * G / h) / (2 * math.pi), h))
    out = {
        "generator": "testdata/seastate/make_cgtable_reference.py",
        "numpy": np.__version__, "scipy": scipy.__version__, "g": G,
        "points": [{"f_hz": f, "h_m": h, "cg": group_velocity(f, h)} for f, h in pts],
    }
    json.dump(out, __import__("sys").stdout, indent=0)


if __name__ == "__main__":
    main()
