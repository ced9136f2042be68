#!/usr/bin/python3
"""Reference values for stats/validate's BilinearWeights and WeightedMean
(weights_ref.json), made with Debian's python3-scipy and python3-numpy.

Bilinear weights: scipy.interpolate.RegularGridInterpolator (method
"linear") on a 2 x 2 grid, each corner's unit impulse in turn, evaluated at
the fractional position (a, b); the corner order is (x0, y0), (x1, y0),
(x0, y1), (x1, y1).
Weighted means: numpy.average for values; for directions in degrees the
angle of the weighted resultant, numpy.angle(sum w exp(i x)), in [0, 360).
The inputs are invented numbers, for the check only.
"""
import json

import numpy as np
from scipy.interpolate import RegularGridInterpolator

out = {"bilinear": [], "mean": [], "circular": []}
for a, b in [(0.0, 0.0), (0.25, 0.5), (0.9, 0.1), (1.0, 1.0), (0.333, 0.777)]:
    w = []
    for j, i in [(0, 0), (0, 1), (1, 0), (1, 1)]:  # (y, x) of (x0,y0), (x1,y0), (x0,y1), (x1,y1)
        v = np.zeros((2, 2))
        v[j, i] = 1.0
        f = RegularGridInterpolator(([0.0, 1.0], [0.0, 1.0]), v, method="linear")
        w.append(float(f([[b, a]])[0]))
    out["bilinear"].append({"a": a, "b": b, "w": w})
cases = [([1.0, 2.0, 4.0], [0.5, 0.25, 0.25]), ([3.5, 7.25], [0.1, 0.9]), ([10.0], [2.0])]
for x, w in cases:
    out["mean"].append({"x": x, "w": w, "mean": float(np.average(x, weights=w))})
for x, w in [([350.0, 10.0], [0.5, 0.5]), ([350.0, 20.0, 30.0], [0.2, 0.3, 0.5]), ([90.0, 180.0], [0.75, 0.25])]:
    r = np.sum(np.array(w) * np.exp(1j * np.radians(x)))
    out["circular"].append({"x": x, "w": w, "mean": float(np.degrees(np.angle(r)) % 360.0)})
print(json.dumps(out, indent=1))
