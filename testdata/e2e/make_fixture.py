#!/usr/bin/python3
"""Bulk fixture for the end-to-end column checks (pipelines/engine/e2e_columns_test.go),
written with Debian's python3-netcdf4, not with swellgrid's own generator.

An invented, synthetic scenario (no real place): a 3 x 2 grid, 12 years
(2001-2012) of 6-hourly Hm0, Te, Tp and mean direction, one CF file per month,
finite depths from 12 m to 3000 m, the file of 2004-03 left out (a one-month
gap), and 2 % of the Hm0 values of the first cell missing (_FillValue).
Run: /usr/bin/python3 testdata/e2e/make_fixture.py  (writes testdata/e2e/bulk/)
"""
import calendar
import os

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "bulk")
LON = np.array([10.0, 10.5, 11.0])
LAT = np.array([50.0, 50.5])
DEPTH = np.array([[12.0, 25.0, 40.0], [80.0, 150.0, 3000.0]])
GAP = (2004, 3)
DT_H = 6


def main():
    os.makedirs(OUT, exist_ok=True)
    rng = np.random.default_rng(20261202)
    ny, nx = DEPTH.shape
    # A Weibull sea-state signal shared by the cells, scaled per cell.
    scale = np.array([[0.8, 0.9, 1.0], [1.1, 1.2, 1.3]])
    for year in range(2001, 2013):
        for month in range(1, 13):
            nd = calendar.monthrange(year, month)[1]
            nt = nd * 24 // DT_H
            t0 = (np.datetime64("%04d-%02d-01" % (year, month)) - np.datetime64("2001-01-01")).astype("timedelta64[h]").astype(float)
            hours = t0 + DT_H * np.arange(nt)
            season = 1.0 + 0.45 * np.cos(2 * np.pi * (month - 1.5) / 12.0)
            base = season * 1.7 * rng.weibull(1.7, nt) + 0.2
            hm0 = base[:, None, None] * scale[None] * np.exp(0.05 * rng.standard_normal((nt, ny, nx)))
            te = 4.0 + 1.3 * np.sqrt(hm0) * 2.2 + 0.4 * rng.standard_normal((nt, ny, nx))
            tp = te / 0.88
            wdir = np.mod(250.0 + 30.0 * np.sin(2 * np.pi * month / 12.0) + 25.0 * rng.standard_normal((nt, ny, nx)), 360.0)
            miss = rng.random(nt) < 0.02
            if (year, month) == GAP:
                continue
            path = os.path.join(OUT, "e2e_bulk_%04d-%02d.nc" % (year, month))
            with netCDF4.Dataset(path, "w", format="NETCDF3_CLASSIC") as ds:
                ds.title = "swellgrid end-to-end test fixture"
                ds.synthetic = "yes"
                ds.comment = "Invented, synthetic data for software tests only; describes no real place."
                ds.Conventions = "CF-1.8"
                ds.createDimension("time", nt)
                ds.createDimension("lat", ny)
                ds.createDimension("lon", nx)
                v = ds.createVariable("time", "f8", ("time",))
                v.standard_name, v.units, v.calendar = "time", "hours since 2001-01-01 00:00:00", "standard"
                v[:] = hours
                v = ds.createVariable("lat", "f8", ("lat",))
                v.standard_name, v.units = "latitude", "degrees_north"
                v[:] = LAT
                v = ds.createVariable("lon", "f8", ("lon",))
                v.standard_name, v.units = "longitude", "degrees_east"
                v[:] = LON
                v = ds.createVariable("depth", "f4", ("lat", "lon"))
                v.standard_name, v.units, v.positive = "sea_floor_depth_below_sea_surface", "m", "down"
                v[:] = DEPTH
                for name, std, unit, data in [
                    ("hs", "sea_surface_wave_significant_height", "m", hm0),
                    ("te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
                    ("tp", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s", tp),
                    ("mwd", "sea_surface_wave_from_direction", "degree", wdir),
                ]:
                    v = ds.createVariable(name, "f4", ("time", "lat", "lon"), fill_value=np.float32(-999.0))
                    v.standard_name, v.units = std, unit
                    d = np.ma.masked_array(data.astype("f4"), mask=np.zeros(data.shape, bool))
                    if name == "hs":
                        d.mask[miss, 0, 0] = True
                    v[:] = d


if __name__ == "__main__":
    main()
