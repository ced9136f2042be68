#!/usr/bin/python3
"""Spectral fixture for the directional distribution (directions.parquet),
written with Debian's python3-netcdf4, not with swellgrid's own generator.

An invented, synthetic scenario (no real place): 4 stations, 60 hourly steps
of a 2-D spectrum on 18 frequencies (log-spaced, 0.04-0.4 Hz) and 24
directions listed in DESCENDING order and offset by 7.5 deg (352.5, 337.5,
..., 7.5: every bin straddles a 16-sector edge somewhere), depths 15, 60 and
400 and 4000 m. The spectra are a
Pierson-Moskowitz-like shape times cos^2s spreading around a mean direction
that turns with time; station 3 puts all its energy in the single direction
bin centred on 97.5 deg (the analytic case: all power from one bin).
Run: /usr/bin/python3 testdata/directions/make_fixture.py
(writes testdata/directions/spectral_dirs.nc)
"""
import math
import os

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
NT, NS = 60, 4
FREQ = np.geomspace(0.04, 0.4, 18)
DIRS = (352.5 - 15.0 * np.arange(24)) % 360  # descending, 7.5 deg offset
DEPTH = [15.0, 60.0, 400.0, 4000.0]


def main():
    ds = netCDF4.Dataset(os.path.join(HERE, "spectral_dirs.nc"), "w", format="NETCDF4")
    ds.Conventions = "CF-1.8"
    ds.title = "swellgrid fixture: invented, synthetic directional spectra at 4 points"
    ds.synthetic = "yes"
    ds.comment = "Invented, synthetic data for tests only; no real place, not model or measured data."
    ds.createDimension("time", NT)
    ds.createDimension("station", NS)
    ds.createDimension("frequency", len(FREQ))
    ds.createDimension("direction", len(DIRS))
    t = ds.createVariable("time", "f8", ("time",))
    t.standard_name, t.units, t.calendar = "time", "hours since 2031-01-01 00:00:00", "standard"
    t[:] = np.arange(NT, dtype=float)
    f = ds.createVariable("frequency", "f8", ("frequency",))
    f.standard_name, f.units = "sea_surface_wave_frequency", "Hz"
    f[:] = FREQ
    d = ds.createVariable("direction", "f8", ("direction",))
    d.standard_name, d.units = "sea_surface_wave_from_direction", "degree"
    d[:] = DIRS
    lon = ds.createVariable("lon", "f8", ("station",))
    lon.standard_name, lon.units = "longitude", "degrees_east"
    lon[:] = [20.0, 20.5, 21.0, 21.5]
    lat = ds.createVariable("lat", "f8", ("station",))
    lat.standard_name, lat.units = "latitude", "degrees_north"
    lat[:] = [-30.0, -30.0, -30.5, -30.5]
    dep = ds.createVariable("depth", "f4", ("station",), fill_value=np.float32(9.96921e36))
    dep.standard_name, dep.units, dep.positive, dep.coordinates = "sea_floor_depth_below_sea_surface", "m", "down", "lon lat"
    dep[:] = np.ma.masked_invalid([np.nan if x is None else x for x in DEPTH])
    sp = ds.createVariable("efth", "f4", ("time", "station", "frequency", "direction"), fill_value=np.float32(9.96921e36), zlib=True)
    sp.standard_name = "sea_surface_wave_directional_variance_spectral_density"
    sp.units, sp.coordinates = "m2 s rad-1", "lon lat"
    S = np.zeros((NT, NS, len(FREQ), len(DIRS)))
    rng = np.random.default_rng(17)
    for it in range(NT):
        for s in range(NS):
            hs = 1.0 + 2.0 * rng.random() + s * 0.5
            fp = 0.07 + 0.05 * rng.random()
            E = (FREQ / fp) ** -5 * np.exp(-1.25 * (FREQ / fp) ** -4)
            E *= (hs / 4) ** 2 / np.trapz(E, FREQ)
            if s == 3:
                D = np.zeros(len(DIRS))
                D[list(DIRS).index(97.5)] = 1 / math.radians(15)
            else:
                mean = (40.0 * s + 6.0 * it + 30 * rng.random()) % 360
                sprd = [4, 10, 2][s]
                D = np.cos(np.radians(DIRS - mean) / 2) ** (2 * sprd)
                D /= D.sum() * math.radians(15)
            S[it, s] = np.outer(E, D)
    sp[:] = S.astype(np.float32)
    ds.close()


if __name__ == "__main__":
    main()
