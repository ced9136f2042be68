#!/usr/bin/python3
"""Independent reference for swellgrid's end-to-end spectral test.

Reads testdata/spectral_points.nc with Debian's python3-netcdf4 (its own CF
unpacking), and computes for every station the time-mean omnidirectional wave
power J = rho g sum_f sum_theta cg(f, h) S(f, theta) df dtheta (W/m), with:
  - cg from linear dispersion w^2 = g k tanh(k h), solved with scipy.optimize.brentq;
  - df: each frequency covers the band between the midpoints to its
    neighbours, the end bins extending as far outwards as inwards;
  - dtheta: half the circular gap to each neighbouring direction.
rho = 1025 kg/m3, g = 9.81 m/s2 (swellgrid's defaults).
Run from the module root: /usr/bin/python3 testdata/pipeline/make_power_ref.py
"""
import json
import math

import netCDF4
import numpy as np
import scipy
from scipy.optimize import brentq

RHO, G = 1025.0, 9.81
ds = netCDF4.Dataset("testdata/spectral_points.nc")
ds.set_auto_maskandscale(True)
f = np.asarray(ds.variables["frequency"][:], dtype=float)
d = np.asarray(ds.variables["direction"][:], dtype=float)
spec = [v for v in ds.variables.values() if getattr(v, "standard_name", "") == "sea_surface_wave_directional_variance_spectral_density"][0]
S = spec[:]  # time, station, frequency, direction
depth = np.asarray(ds.variables["depth"][:], dtype=float)
lon = np.asarray(ds.variables["lon"][:], dtype=float)
lat = np.asarray(ds.variables["lat"][:], dtype=float)
assert spec.units == "m2 s rad-1", spec.units

order = np.argsort(f)
fs = f[order]
mid = (fs[1:] + fs[:-1]) / 2
lo = np.concatenate([[fs[0] - (mid[0] - fs[0])], mid])
hi = np.concatenate([mid, [fs[-1] + (fs[-1] - mid[-1])]])
df = np.empty_like(f)
df[order] = hi - lo

dorder = np.argsort(d % 360)
ds_ = (d % 360)[dorder]
gaps = np.diff(np.concatenate([ds_, [ds_[0] + 360]]))  # gap to the next direction
prev = np.roll(gaps, 1)
dth = np.empty_like(d)
dth[dorder] = np.radians((gaps + prev) / 2)


def cg(freq, h):
    w = 2 * math.pi * freq
    k = brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-9, 1e4, xtol=1e-15, rtol=1e-15)
    c = w / k
    n = 0.5 * (1 + 2 * k * h / math.sinh(2 * k * h)) if k * h < 350 else 0.5
    return n * c


out = []
for st in range(S.shape[1]):
    h = float(depth[st])
    cgs = np.array([cg(fi, h) for fi in f])
    w = cgs[:, None] * df[:, None] * dth[None, :]
    s = np.ma.filled(S[:, st, :, :].astype(float), np.nan)
    J = RHO * G * np.einsum("tfd,fd->t", s, w)
    J = J[np.isfinite(J)]
    out.append({"station": st, "lon": float(lon[st]), "lat": float(lat[st]), "depth_m": h,
                "power_mean_kw_m": float(J.mean() / 1000), "steps": int(J.size)})
json.dump({"made_with": {"numpy": np.__version__, "scipy": scipy.__version__, "netCDF4": netCDF4.__version__,
                         "script": "testdata/pipeline/make_power_ref.py"},
           "stations": out}, open("testdata/pipeline/power_ref.json", "w"), indent=1)
print(out)
