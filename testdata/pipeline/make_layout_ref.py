#!/usr/bin/python3
"""Independent reference for the point-set and curvilinear runs of
pipelines/engine/e2e_test.go (TestPointSetRun, TestCurvilinearRun).

Reads testdata/points_bulk.nc and testdata/curvilinear_bulk.nc with Debian's
python3-netcdf4 and computes for every cell (matched by its lon/lat, which the
files give as 1-D station or 2-D curvilinear coordinates) the mean, and the
largest, Hm0, the mean Te and the mean bulk wave power over the valid steps:
J = rho g Hm0^2 cg(1/Te, h) / 16 with cg from w^2 = g k tanh(k h) solved by
scipy.optimize.brentq (IEC TS 62600-101 bulk approximation; DNV-RP-C205 3.2),
rho = 1025 kg/m3, g = 9.81 m/s2. Steps are regular, so time means are plain
means. Longitudes normalised to [-180, 180).
Run from the module root: /usr/bin/python3 testdata/pipeline/make_layout_ref.py
"""
import json
import math

import netCDF4
import numpy as np
import scipy
from scipy.optimize import brentq

RHO, G = 1025.0, 9.81


def cg(te, h):
    w = 2 * math.pi / te
    if not (h > 0 and math.isfinite(h)):
        return G / (2 * w)
    k = brentq(lambda k: w * w - G * k * math.tanh(k * h), 1e-9, 1e4, xtol=1e-15, rtol=1e-15)
    n = 0.5 * (1 + 2 * k * h / math.sinh(2 * k * h)) if k * h < 350 else 0.5
    return n * w / k


def by_role(ds, std):
    return [v for v in ds.variables.values() if getattr(v, "standard_name", "") == std][0]


def cells(path):
    out = []
    with netCDF4.Dataset(path) as ds:
        hs = np.ma.filled(by_role(ds, "sea_surface_wave_significant_height")[:].astype(float), np.nan)
        te = np.ma.filled(by_role(ds, "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment")[:].astype(float), np.nan)
        depth = np.ma.filled(by_role(ds, "sea_floor_depth_below_sea_surface")[:].astype(float), np.nan)
        lon = np.asarray(by_role(ds, "longitude")[:], float)
        lat = np.asarray(by_role(ds, "latitude")[:], float)
        nt = hs.shape[0]
        hs, te = hs.reshape(nt, -1), te.reshape(nt, -1)
        depth, lon, lat = depth.ravel(), lon.ravel(), lat.ravel()
        for c in range(hs.shape[1]):
            h, e = hs[:, c], te[:, c]
            ok = np.isfinite(h) & np.isfinite(e)
            if not np.isfinite(h).any():  # land: no value at all, the cell's results are null
                out.append({"lon": (lon[c] + 180) % 360 - 180, "lat": lat[c], "power_mean_kw_m": None,
                            "hm0_mean_m": None, "hm0_max_m": None, "te_mean_s": None})
                continue
            J = np.array([RHO * G * a * a * cg(b, depth[c]) / 16 / 1000 for a, b in zip(h[ok], e[ok])])
            out.append({"lon": (lon[c] + 180) % 360 - 180, "lat": lat[c], "depth_m": depth[c],
                        "power_mean_kw_m": J.mean(), "hm0_mean_m": h[np.isfinite(h)].mean(),
                        "hm0_max_m": h[np.isfinite(h)].max(), "te_mean_s": e[np.isfinite(e)].mean()})
    return out


ref = {"source": "testdata/pipeline/make_layout_ref.py", "numpy": np.__version__, "scipy": scipy.__version__,
       "netCDF4": netCDF4.__version__,
       "points_bulk": cells("testdata/points_bulk.nc"), "curvilinear_bulk": cells("testdata/curvilinear_bulk.nc")}
with open("testdata/pipeline/layout_ref.json", "w") as f:
    json.dump(ref, f, indent=1, sort_keys=True, default=float)
    f.write("\n")
