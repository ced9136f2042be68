#!/usr/bin/python3
"""A spectral hindcast whose spectral axes change between files (a model
upgrade, then a re-gridded archive), written with Debian's python3-netcdf4
(not with swellgrid's own generator), for
pipelines/engine/spectral_axes_e2e_test.go and ingest's tests.

An invented, synthetic scenario (no real place): 3 stations at depths 20,
120 and 3000 m, daily steps over three months, one file a month:
  - axes_2031-01.nc: 25 log-spaced frequencies 0.035 .. 0.5 Hz x 24
    directions 0, 15, .., 345 degrees (nautical from);
  - axes_2031-02.nc: 32 log-spaced frequencies 0.035 .. 0.5 Hz x 36
    directions 0, 10, .., 350 degrees (the "upgraded model");
  - axes_2031-03.nc: 25 log-spaced frequencies 0.03 .. 0.45 Hz x 24
    directions 352.5, 337.5, .., 7.5 degrees (descending, offset by 7.5:
    the same counts as January on other bins, a "re-gridded archive").
The sea is one continuous spectrum E(f, theta) (m2 Hz-1 rad-1, theta the
nautical direction the waves come from) sampled on each file's bins: the
sum of a swell and a wind sea, each hs^2/16 (5/fp) (f/fp)^-5
exp(-1.25 (f/fp)^-4) times cos^2s((theta - theta_m)/2) / N(s) with N(s) its
integral over the circle (scipy.integrate.quad), so each component's m0 is
hs^2/16 over all frequencies and directions (the Pierson-Moskowitz-like
shape integrates to fp/5; invented data). Stations 0 and 1 draw heights,
periods and directions per step from a seeded generator; station 2 has the
same sea at every step, so its monthly means differ only by the bins they
are sampled on (the continuity check across the change).
reference.py computes what the files hold independently of swellgrid.
Run: /usr/bin/python3 testdata/spectral_axes/make_fixtures.py
(writes testdata/spectral_axes/axes_2031-0[123].nc)
"""
import math
import os

import netCDF4
import numpy as np
from scipy import integrate

HERE = os.path.dirname(os.path.abspath(__file__))
NS = 3
DEPTH = [20.0, 120.0, 3000.0]
LON = [-31.0, -30.5, -30.0]
LAT = [52.0, 52.5, 53.0]
SN2 = "sea_surface_wave_directional_variance_spectral_density"

# name: (first day of the month as days since 2031-01-01, days, frequencies, directions)
FILES = [
    ("axes_2031-01", 0, 31, np.geomspace(0.035, 0.5, 25), np.arange(24) * 15.0),
    ("axes_2031-02", 31, 28, np.geomspace(0.035, 0.5, 32), np.arange(36) * 10.0),
    ("axes_2031-03", 59, 31, np.geomspace(0.03, 0.45, 25), (352.5 - np.arange(24) * 15.0)),
]


def spreading_norm(s):
    """N(s) = integral over the circle of cos^2s(x/2) (scipy quad)."""
    return integrate.quad(lambda x: math.cos(x / 2) ** (2 * s), -math.pi, math.pi, epsabs=1e-13, epsrel=1e-13)[0]


def component(f, d, hs, fp, theta_m, s):
    """E(f, theta) of one component on the bins f (Hz), d (degrees)."""
    ef = hs ** 2 / 16 * (5 / fp) * (f / fp) ** -5 * np.exp(-1.25 * (f / fp) ** -4)
    x = np.radians(d - theta_m)
    sp = np.abs(np.cos(x / 2)) ** (2 * s) / spreading_norm(s)
    return ef[:, None] * sp[None, :]


def parameters(nt):
    """Per step and station: (swell, wind) tuples (hs, fp, theta_m, s)."""
    rng = np.random.default_rng(20310)
    out = []
    for t in range(nt):
        row = []
        for s in range(NS):
            if s == 2:  # the same sea at every step
                row.append(((3.0, 0.08, 255.0, 8), (1.5, 0.16, 320.0, 2)))
                continue
            swell = (2.0 + 2.5 * rng.random() + 0.4 * s, 0.065 + 0.025 * rng.random(), 230 + 50 * rng.random(), 8)
            wind = (0.8 + 2.2 * rng.random(), 0.12 + 0.09 * rng.random(), 280 + 120 * rng.random(), 2)
            row.append((swell, wind))
        out.append(row)
    return out


def write(name, t0, nt, f, d, pars):
    S = np.zeros((nt, NS, f.size, d.size))
    for t in range(nt):
        for s in range(NS):
            for c in pars[t0 + t][s]:
                S[t, s] += component(f, d, *c)
    ds = netCDF4.Dataset(os.path.join(HERE, name + ".nc"), "w", format="NETCDF4")
    ds.Conventions = "CF-1.8"
    ds.title = "swellgrid fixture: invented, synthetic spectra at 3 points, spectral axes %d x %d" % (f.size, d.size)
    ds.synthetic = "yes"
    ds.comment = ("Invented, synthetic data written with python3-netcdf4 by testdata/spectral_axes/make_fixtures.py; "
                  "no real place, not model or measured data; for software tests only.")
    ds.createDimension("time", nt)
    ds.createDimension("station", NS)
    ds.createDimension("frequency", f.size)
    ds.createDimension("direction", d.size)
    tv = ds.createVariable("time", "f8", ("time",))
    tv.standard_name, tv.units, tv.calendar = "time", "days since 2031-01-01 00:00:00", "standard"
    tv[:] = t0 + np.arange(nt, dtype=float)
    fv = ds.createVariable("frequency", "f8", ("frequency",))
    fv.standard_name, fv.units = "sea_surface_wave_frequency", "Hz"
    fv[:] = f
    dv = ds.createVariable("direction", "f8", ("direction",))
    dv.standard_name, dv.units = "sea_surface_wave_from_direction", "degree"
    dv[:] = d
    lon = ds.createVariable("lon", "f8", ("station",))
    lon.standard_name, lon.units = "longitude", "degrees_east"
    lon[:] = LON
    lat = ds.createVariable("lat", "f8", ("station",))
    lat.standard_name, lat.units = "latitude", "degrees_north"
    lat[:] = LAT
    dep = ds.createVariable("depth", "f4", ("station",))
    dep.standard_name, dep.units, dep.positive = "sea_floor_depth_below_sea_surface", "m", "down"
    dep[:] = DEPTH
    sp = ds.createVariable("efth", "f4", ("time", "station", "frequency", "direction"), zlib=True)
    sp.standard_name, sp.units, sp.coordinates = SN2, "m2 s rad-1", "lon lat"
    sp[:] = S.astype(np.float32)
    ds.close()


def main():
    nt = sum(n for _, _, n, _, _ in FILES)
    pars = parameters(nt)
    for name, t0, n, f, d in FILES:
        write(name, t0, n, f, d, pars)


if __name__ == "__main__":
    main()
