#!/usr/bin/python3
"""Fixture for the invalid-value count (pipelines/engine/qc_counts_test.go), written
with Debian's python3-netcdf4, not with swellgrid's own generator.

An invented, synthetic scenario (no real place): a 2 x 2 grid of deep water
(4000 m), 12 years (2001-2012) of 12-hourly Hm0, Te, Tp and mean direction in
one file, with values a hindcast should never hold injected at known steps:
negative heights and periods, +Inf and -Inf, heights and periods of 64 m or
s and more (beyond any sea state; a 70 m height in mid-2005, where it would
be that year's maximum), an infinite direction, besides values marked missing (_FillValue) and NaN, which are missing, not invalid.
Run: /usr/bin/python3 testdata/qc/make_fixture.py  (writes testdata/qc/qc_bulk.nc)
"""
import os

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
DT_H = 12
NT = (365 * 12 + 3) * 24 // DT_H  # 2001-2012 (3 leap days)
LON = np.array([20.0, 20.5])
LAT = np.array([-40.0, -39.5])

# (variable, step, y, x, value): the injected values
INJECT = [
    ("hs", 3, 0, 0, -0.5),
    ("hs", 4, 0, 0, -1e-3),
    ("hs", 10, 0, 1, np.inf),
    ("hs", 11, 0, 1, 64.0),
    ("hs", (4 * 365 + 1 + 180) * 24 // DT_H, 0, 1, 70.0),
    ("hs", 20, 1, 0, -np.inf),
    ("te", 5, 0, 0, -2.0),
    ("te", 30, 1, 1, np.inf),
    ("te", 31, 1, 1, 64.5),
    ("tp", 6, 0, 0, -3.0),
    ("tp", 40, 1, 0, 100.0),
    ("mwd", 50, 1, 1, np.inf),
    # missing, not invalid
    ("hs", 60, 0, 0, np.nan),
    ("te", 61, 1, 0, np.nan),
]
MASKED = [("hs", 70, 1, 1), ("tp", 71, 0, 1), ("te", 72, 0, 0)]


def main():
    rng = np.random.default_rng(20261207)  # a seed whose annual maxima scipy fits with a regular shape (|xi| < 0.35)
    hm0 = 0.3 + 2.0 * rng.weibull(1.6, (NT, 2, 2))
    te = 4.5 + 2.6 * np.sqrt(hm0) + 0.3 * rng.standard_normal((NT, 2, 2))
    data = {"hs": hm0, "te": te, "tp": te / 0.9, "mwd": np.mod(240 + 40 * rng.standard_normal((NT, 2, 2)), 360)}
    for name in data:  # values to 0.01, so that the file compresses
        data[name] = np.round(data[name], 2)
    for name, k, j, i, v in INJECT:
        data[name][k, j, i] = v
    path = os.path.join(HERE, "qc_bulk.nc")
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        ds.title = "swellgrid invalid-value test fixture"
        ds.comment = "Invented, synthetic data for software tests only; describes no real place. Invalid values injected on purpose."
        ds.Conventions = "CF-1.8"
        ds.createDimension("time", NT)
        ds.createDimension("lat", 2)
        ds.createDimension("lon", 2)
        v = ds.createVariable("time", "f8", ("time",))
        v.standard_name, v.units, v.calendar = "time", "hours since 2001-01-01 00:00:00", "standard"
        v[:] = DT_H * np.arange(NT)
        v = ds.createVariable("lat", "f8", ("lat",))
        v.standard_name, v.units = "latitude", "degrees_north"
        v[:] = LAT
        v = ds.createVariable("lon", "f8", ("lon",))
        v.standard_name, v.units = "longitude", "degrees_east"
        v[:] = LON
        v = ds.createVariable("depth", "f4", ("lat", "lon"))
        v.standard_name, v.units, v.positive = "sea_floor_depth_below_sea_surface", "m", "down"
        v[:] = np.full((2, 2), 4000.0)
        for name, std, unit in [
            ("hs", "sea_surface_wave_significant_height", "m"),
            ("te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s"),
            ("tp", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s"),
            ("mwd", "sea_surface_wave_from_direction", "degree"),
        ]:
            var = ds.createVariable(name, "f4", ("time", "lat", "lon"), fill_value=np.float32(-999.0), zlib=True, complevel=4, shuffle=True)
            var.standard_name, var.units = std, unit
            d = np.ma.masked_array(data[name].astype("f4"), mask=np.zeros((NT, 2, 2), bool))
            for n, k, j, i in MASKED:
                if n == name:
                    d.mask[k, j, i] = True
            var[:] = d


if __name__ == "__main__":
    main()
