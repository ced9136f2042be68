#!/usr/bin/python3
"""1-D spectral fixture for the spectral-only columns of cells.parquet,
written with Debian's python3-netcdf4, not with swellgrid's own generator.

An invented, synthetic scenario (no real place): 3 stations, 48 six-hourly
steps (2031-03-01 on) of a frequency spectrum E(f) in m2 s (m2/Hz) on 22
frequencies, log-spaced 0.035-0.5 Hz and stored in DESCENDING order, depths
10, 80 and 3000 m. Each spectrum is the sum of two Pierson-Moskowitz-like
peaks (a swell and a wind sea, heights and peaks varying in time), so the
spectral width changes from step to step. On purpose:
  - station 1, every 7th step: a spectrum falling from the lowest frequency
    (exp(-f / 0.06)), whose peak is the end bin (no parabolic refinement);
  - station 2: a fill value at the 4th stored bin every 5th step, a negative
    density at the 10th stored bin on step 9, and step 30 missing whole.
Run: /usr/bin/python3 testdata/spectral_cols/make_fixture.py
(writes testdata/spectral_cols/spectral_1d_cols.nc)
"""
import os

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
NT, NS = 48, 3
FREQ = np.geomspace(0.035, 0.5, 22)[::-1]  # descending
DEPTH = [10.0, 80.0, 3000.0]
FILL = np.float32(9.96921e36)


def peak(fp, hs):
    """Pierson-Moskowitz-like shape scaled to m0 = hs^2/16 (invented data)."""
    e = (FREQ / fp) ** -5 * np.exp(-1.25 * (FREQ / fp) ** -4)
    return e * (hs / 4) ** 2 / np.sum(e * np.abs(np.gradient(FREQ)))


def main():
    rng = np.random.default_rng(23)
    E = np.zeros((NT, NS, FREQ.size))
    for it in range(NT):
        for s in range(NS):
            swell = peak(0.06 + 0.03 * rng.random(), 0.8 + 1.5 * rng.random() + 0.3 * s)
            sea = peak(0.14 + 0.12 * rng.random(), 0.3 + 1.2 * rng.random())
            E[it, s] = swell + sea
            if s == 1 and it % 7 == 0:
                E[it, s] = 2.0 * np.exp(-FREQ / 0.06)
    mask = np.zeros(E.shape, dtype=bool)
    mask[0::5, 2, 3] = True
    mask[30, 2, :] = True
    E[9, 2, 9] = -0.05
    ds = netCDF4.Dataset(os.path.join(HERE, "spectral_1d_cols.nc"), "w", format="NETCDF4")
    ds.Conventions = "CF-1.8"
    ds.title = "swellgrid fixture: invented, synthetic frequency spectra at 3 points"
    ds.synthetic = "yes"
    ds.comment = ("Invented, synthetic data written with python3-netcdf4 by testdata/spectral_cols/make_fixture.py; "
                  "no real place, not model or measured data; for software tests only.")
    ds.createDimension("time", NT)
    ds.createDimension("station", NS)
    ds.createDimension("frequency", FREQ.size)
    t = ds.createVariable("time", "f8", ("time",))
    t.standard_name, t.units, t.calendar = "time", "hours since 2031-03-01 00:00:00", "standard"
    t[:] = 6.0 * np.arange(NT)
    f = ds.createVariable("frequency", "f8", ("frequency",))
    f.standard_name, f.units = "sea_surface_wave_frequency", "Hz"
    f[:] = FREQ
    lon = ds.createVariable("lon", "f8", ("station",))
    lon.standard_name, lon.units = "longitude", "degrees_east"
    lon[:] = [140.0, 140.5, 141.0]
    lat = ds.createVariable("lat", "f8", ("station",))
    lat.standard_name, lat.units = "latitude", "degrees_north"
    lat[:] = [10.0, 10.0, 10.5]
    dep = ds.createVariable("depth", "f4", ("station",))
    dep.standard_name, dep.units, dep.positive, dep.coordinates = "sea_floor_depth_below_sea_surface", "m", "down", "lon lat"
    dep[:] = DEPTH
    sp = ds.createVariable("ef", "f4", ("time", "station", "frequency"), fill_value=FILL, zlib=True)
    sp.standard_name = "sea_surface_wave_variance_spectral_density"
    sp.units, sp.coordinates = "m2 s", "lon lat"
    sp[:] = np.ma.masked_array(E.astype(np.float32), mask=mask)
    ds.close()


if __name__ == "__main__":
    main()
