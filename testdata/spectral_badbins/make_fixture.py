#!/usr/bin/python3
"""Fixture and independent reference for swellgrid's missing-bin and
mean-direction checks (pipelines/engine/columns_test.go).

Writes, with Debian's python3-netcdf4, testdata/spectral_badbins/spectral_badbins.nc:
invented, synthetic two-peaked directional spectra (a wind sea from 270 deg and
a swell from 0 deg, 90 deg apart, both with time-varying heights) at 3
stations, January 2001, 3-hourly, with missing bins placed on purpose:
  - station 0: the FIRST stored bin (frequency 0, direction 0) is a fill value
    every 4th step, and steps 20..23 are missing whole (every bin a fill value);
  - station 1: a MIDDLE bin (frequency 12, direction 12) is a fill value every
    3rd step, and step 7 holds a raw NaN at (5, 3);
  - station 2: the LAST stored bin (frequency 24, direction 23) is a fill value
    every 5th step, step 10 is missing whole, step 11 holds +Inf at (8, 8) and
    step 12 a negative density at (9, 9).
Directions are stored 90, 105, ..., 345, 0, ..., 75 (not monotonic).

Then reads the file back with python3-netcdf4 (its own CF masking) and
computes with numpy, independently of swellgrid, per station:
  - bad_bins: missing, non-finite or negative bins of the spectra that are not
    missing whole (they count as 0);
  - steps_valid: spectra not missing whole with m0 > 0; coverage = steps_valid / steps;
  - power_mean_kw_m: time mean of J = rho g sum cg(f,h) S df dtheta, cg from
    w^2 = g k tanh(k h) solved with scipy.optimize.brentq;
  - hm0_mean_m: time mean of 4 sqrt(m0);
  - dir_mean_deg: each step's mean direction from the first-order moments,
    atan2(sum sin(theta) S df dtheta, sum cos(theta) S df dtheta), nautical
    "from" (Kuik et al. 1988; common practice), then the time-weighted circular
    mean of those directions (mean of unit vectors; Mardia and Jupp 2000);
  - dir_peak_power_deg (for the record only): the power-weighted mean of the
    direction of maximum directional power, to show how far it is from the
    mean direction on a two-peaked sea.
df: numpy.gradient of the sorted frequencies; dtheta = 15 deg.
rho = 1025 kg/m3, g = 9.81 m/s2 (swellgrid's defaults).
Run from the module root: /usr/bin/python3 testdata/spectral_badbins/make_fixture.py
"""
import json
import math

import netCDF4
import numpy as np
import scipy
from scipy.optimize import brentq

RHO, G = 1025.0, 9.81
NT, NS = 248, 3
f = 0.04 * 1.1 ** np.arange(25)
d = np.array([(90 + 15 * j) % 360 for j in range(24)], dtype=float)
depth = np.array([15.0, 60.0, 300.0])
t = np.arange(NT) * 3.0


def pm(freq, hm0, tp):
    """Pierson-Moskowitz shape scaled to m0 = hm0^2/16 on this grid (invented data)."""
    fp = 1 / tp
    e = freq ** -5 * np.exp(-1.25 * (freq / fp) ** -4)
    return e / np.sum(e * np.gradient(freq)) * hm0 ** 2 / 16


def spread(dirs, mean, s):
    x = np.cos(np.radians(dirs - mean) / 2) ** (2 * s)
    return x / np.sum(x * np.radians(15.0))


S = np.zeros((NT, NS, f.size, d.size))
for k in range(NT):
    for st in range(NS):
        hs_sea = 0.8 + 0.6 * st + 1.2 * math.sin(2 * math.pi * k / 56) ** 2
        hs_swell = 1.0 + 0.4 * st + 0.8 * math.cos(2 * math.pi * k / 90) ** 2
        S[k, st] = (np.outer(pm(f, hs_sea, 6.0 + st), spread(d, 270.0, 8))
                    + np.outer(pm(f, hs_swell, 13.0 + st), spread(d, 0.0, 20)))
S = S.astype(np.float32)
mask = np.zeros(S.shape, dtype=bool)
mask[0::4, 0, 0, 0] = True
mask[20:24, 0] = True
mask[0::3, 1, 12, 12] = True
mask[0::5, 2, 24, 23] = True
mask[10, 2] = True
S[7, 1, 5, 3] = np.nan
S[11, 2, 8, 8] = np.inf
S[12, 2, 9, 9] = -1e-3

nc = netCDF4.Dataset("testdata/spectral_badbins/spectral_badbins.nc", "w", format="NETCDF4")
nc.Conventions = "CF-1.8"
nc.title = "swellgrid fixture: synthetic two-peaked directional spectra with missing bins, 3 points"
nc.synthetic = "yes"
nc.comment = ("Invented, synthetic data written with python3-netcdf4 by testdata/spectral_badbins/make_fixture.py; "
              "the sea states describe no real place and are for software tests only.")
nc.caution = "Invented data for software tests only. Not for design, siting, consenting or any decision."
nc.createDimension("time", NT)
nc.createDimension("station", NS)
nc.createDimension("frequency", f.size)
nc.createDimension("direction", d.size)
v = nc.createVariable("time", "f8", ("time",))
v.standard_name, v.units, v.calendar, v.axis = "time", "hours since 2001-01-01 00:00:00", "standard", "T"
v[:] = t
v = nc.createVariable("frequency", "f8", ("frequency",))
v.standard_name, v.units = "sea_surface_wave_frequency", "Hz"
v[:] = f
v = nc.createVariable("direction", "f8", ("direction",))
v.standard_name, v.units = "sea_surface_wave_from_direction", "degree"
v[:] = d
v = nc.createVariable("lon", "f8", ("station",))
v.standard_name, v.units = "longitude", "degrees_east"
v[:] = [-30.0, -29.5, -29.0]
v = nc.createVariable("lat", "f8", ("station",))
v.standard_name, v.units = "latitude", "degrees_north"
v[:] = [40.0, 40.0, 40.0]
v = nc.createVariable("depth", "f4", ("station",))
v.standard_name, v.units, v.positive = "sea_floor_depth_below_sea_surface", "m", "down"
v[:] = depth
v = nc.createVariable("efth", "f4", ("time", "station", "frequency", "direction"), fill_value=np.float32(-999.0), zlib=True)
v.standard_name = "sea_surface_wave_directional_variance_spectral_density"
v.units = "m2 s rad-1"
v.coordinates = "lon lat"
v[:] = np.ma.masked_array(S, mask=mask)
nc.close()

# --- independent reference, from the file as written ---
ds = netCDF4.Dataset("testdata/spectral_badbins/spectral_badbins.nc")
fr = np.asarray(ds["frequency"][:], dtype=float)
dr = np.asarray(ds["direction"][:], dtype=float)
h = np.asarray(ds["depth"][:], dtype=float)
raw = np.ma.filled(ds["efth"][:].astype(float), np.nan)  # time, station, f, d
order = np.argsort(fr)
df = np.empty_like(fr)
df[order] = np.gradient(fr[order])
dth = np.full(dr.size, math.radians(15.0))
th = np.radians(dr)


def cg(freq, depth):
    w = 2 * math.pi * freq
    k = brentq(lambda k: w * w - G * k * math.tanh(k * depth), 1e-9, 1e4, xtol=1e-15, rtol=1e-15)
    n = 0.5 * (1 + 2 * k * depth / math.sinh(2 * k * depth)) if k * depth < 350 else 0.5
    return n * w / k


def circ_mean_deg(a):
    a = np.radians(np.asarray(a))
    return float(np.degrees(np.arctan2(np.sin(a).mean(), np.cos(a).mean())) % 360)


out = []
for st in range(NS):
    cgs = np.array([cg(x, h[st]) for x in fr])
    s = raw[:, st]
    whole = np.all(np.isnan(s), axis=(1, 2))
    good = np.isfinite(s) & (s >= 0)
    bad = int(np.sum(~good[~whole]))
    sc = np.where(good, s, 0.0)
    m0 = np.einsum("tfd,f,d->t", sc, df, dth)
    ok = ~whole & (m0 > 0)
    J = RHO * G * np.einsum("tfd,f,d->t", sc, cgs * df, dth)[ok]
    a1 = np.einsum("tfd,f,d->t", sc, df, dth * np.cos(th))[ok]
    b1 = np.einsum("tfd,f,d->t", sc, df, dth * np.sin(th))[ok]
    mdir = np.degrees(np.arctan2(b1, a1)) % 360
    # direction of maximum directional power per step, on a 0.01 deg grid
    A = np.einsum("tfd,f,d->td", sc, cgs * df, dth)[ok] * RHO * G
    grid = np.radians(np.arange(0, 360, 0.01))
    cosd = np.cos(grid[:, None] - th[None, :])
    Jt = A @ np.where(cosd > 0, cosd, 0).T
    pk = np.degrees(grid[np.argmax(Jt, axis=1)])
    pkm = float(np.degrees(np.arctan2((J * np.sin(np.radians(pk))).sum(), (J * np.cos(np.radians(pk))).sum())) % 360)
    out.append({"station": st, "depth_m": float(h[st]), "steps": NT, "steps_valid": int(ok.sum()),
                "coverage": float(ok.sum() / NT), "bad_bins": bad,
                "power_mean_kw_m": float(J.mean() / 1000), "hm0_mean_m": float((4 * np.sqrt(m0[ok])).mean()),
                "dir_mean_deg": circ_mean_deg(mdir), "dir_peak_power_deg": pkm})
json.dump({"made_with": {"numpy": np.__version__, "scipy": scipy.__version__, "netCDF4": netCDF4.__version__,
                         "script": "testdata/spectral_badbins/make_fixture.py"},
           "stations": out}, open("testdata/spectral_badbins/reference.json", "w"), indent=1)
print(json.dumps(out, indent=1))
