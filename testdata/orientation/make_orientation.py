#!/usr/bin/python3
"""Two records of the same invented sea states, written by Debian's
python3-xarray (NetCDF-4 through python3-netcdf4), for swellgrid's test that
every file is read in its own orientation.

  canonical/  three monthly files, latitude and longitude ascending,
              dimensions (time, lat, lon)
  mixed/      the same values; January with latitude DESCENDING, February
              canonical, March with longitude DESCENDING and dimensions
              (time, lon, lat) (transposed)

The values are synthetic (a smooth function of cell position and time, with no
link to any real place or model) and differ from cell to cell, so a mirrored
row or a transposed field changes the statistics. One value per month is
missing (NaN in xarray, stored as the _FillValue -9999).

Run from the module root: /usr/bin/python3 testdata/orientation/make_orientation.py
"""
import os

import numpy as np
import xarray as xr

LON = np.array([-20.0, -19.5, -19.0, -18.5, -18.0])
LAT = np.array([44.0, 44.5, 45.0, 45.5])
MONTHS = [(1, 31), (2, 28), (3, 31)]
ATTRS = {
    "Conventions": "CF-1.8",
    "title": "swellgrid orientation test record (synthetic)",
    "synthetic": "yes",
    "comment": "Invented values for software tests; not model or measured data.",
}


def month(m, days, start_h):
    h = start_h + 3.0 * np.arange(days * 8)
    iy, ix = np.meshgrid(np.arange(len(LAT)), np.arange(len(LON)), indexing="ij")
    w = 2 * np.pi * h[:, None, None] / (24 * 6)
    hm0 = 1.0 + 0.35 * ix + 0.6 * iy + 0.5 * np.sin(w + 0.3 * ix) + 0.2 * np.cos(0.37 * h[:, None, None] + iy)
    te = 5.5 + 0.4 * iy + 0.25 * ix + 1.1 * np.sin(w + 0.5)
    wdir = np.mod(230 + 12 * ix - 7 * iy + 35 * np.sin(w / 2), 360)
    depth = 30.0 + 11.0 * ix + 23.0 * iy
    hm0[5, 1, 2] = np.nan  # one missing value, stored as the _FillValue
    ds = xr.Dataset(
        {
            "hm0": (("time", "lat", "lon"), hm0.astype(np.float32),
                    {"standard_name": "sea_surface_wave_significant_height", "units": "m"}),
            "te": (("time", "lat", "lon"), te.astype(np.float32),
                   {"standard_name": "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "units": "s"}),
            "wdir": (("time", "lat", "lon"), wdir.astype(np.float32),
                     {"standard_name": "sea_surface_wave_from_direction", "units": "degree"}),
            "depth": (("lat", "lon"), depth,
                      {"standard_name": "sea_floor_depth_below_sea_surface", "units": "m"}),
        },
        coords={
            "time": ("time", h, {"standard_name": "time", "units": "hours since 2001-01-01 00:00:00", "calendar": "standard"}),
            "lat": ("lat", LAT, {"standard_name": "latitude", "units": "degrees_north"}),
            "lon": ("lon", LON, {"standard_name": "longitude", "units": "degrees_east"}),
        },
        attrs=ATTRS,
    )
    return ds


def write(ds, path):
    enc = {v: {"_FillValue": np.float32(-9999) if ds[v].dtype == np.float32 else None} for v in ds.data_vars}
    enc["time"] = {"dtype": "float64", "_FillValue": None}
    enc["lat"] = {"_FillValue": None}
    enc["lon"] = {"_FillValue": None}
    ds.to_netcdf(path, format="NETCDF4", encoding=enc)


def main():
    for d in ("canonical", "mixed"):
        os.makedirs(os.path.join("testdata/orientation", d), exist_ok=True)
    start = 0.0
    for m, days in MONTHS:
        ds = month(m, days, start)
        start += days * 24
        name = "ori_2001-%02d.nc" % m
        write(ds, os.path.join("testdata/orientation/canonical", name))
        if m == 1:
            ds = ds.isel(lat=slice(None, None, -1))
        elif m == 3:
            ds = ds.isel(lon=slice(None, None, -1)).transpose("time", "lon", "lat")
        write(ds, os.path.join("testdata/orientation/mixed", name))


if __name__ == "__main__":
    main()
