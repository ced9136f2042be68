#!/usr/bin/python3
"""Fixtures of the CF grid-mapping checks (pipelines/engine/gridmapping_test.go,
issue 31: projected and rotated native grids), written with Debian's
python3-netcdf4 and python3-pyproj, not with swellgrid's own generator.

Invented, synthetic data (no real place): a 7 x 5 grid, January 2001,
6-hourly bulk Hm0, Te and a depth of 60 m; global attributes
synthetic = "yes" and a comment. The same values on four native grids:

  tm_latlon   transverse Mercator x/y in m (grid_mapping "crs", CF
              attributes, no crs_wkt) with 2-D lat/lon named in the data
              variables' coordinates attribute;
  tm_xy       the same grid with x/y only, in km;
  rotated     a rotated-pole rlon/rlat grid (rotated_latitude_longitude),
              no lat/lon;
  bad_mapping x/y with a grid mapping swellgrid does not read (sinusoidal,
              no crs_wkt), to be refused naming it;

and, as the references, the same values on plain curvilinear lon/lat grids
(lonlat_tm, lonlat_rot: the 2-D longitudes and latitudes pyproj gives for
the projected and the rotated grid, no grid mapping). reference.json holds
those longitudes and latitudes (pyproj Transformer, always_xy) per cell in
row-major (y, x) order.
Run: /usr/bin/python3 testdata/gridmapping/make_fixtures.py
"""
import json
import os
import shutil

import netCDF4
import numpy as np
from pyproj import CRS, Transformer

HERE = os.path.dirname(os.path.abspath(__file__))
NX, NY = 7, 5
DT_H = 6
TM = dict(grid_mapping_name="transverse_mercator", latitude_of_projection_origin=0.0,
          longitude_of_central_meridian=-33.0, scale_factor_at_central_meridian=0.9996,
          false_easting=500000.0, false_northing=0.0,
          semi_major_axis=6378137.0, inverse_flattening=298.257223563)
TM_PROJ = "+proj=tmerc +lat_0=0 +lon_0=-33 +k_0=0.9996 +x_0=500000 +y_0=0 +a=6378137 +rf=298.257223563 +no_defs +type=crs"
X = 430000.0 + 20000.0 * np.arange(NX)
Y = 4950000.0 + 20000.0 * np.arange(NY)
ROT = dict(grid_mapping_name="rotated_latitude_longitude", grid_north_pole_latitude=39.25,
           grid_north_pole_longitude=-162.0, north_pole_grid_longitude=0.0)
ROT_PROJ = "+proj=ob_tran +o_proj=longlat +o_lat_p=39.25 +o_lon_p=0 +lon_0=18 +ellps=WGS84 +no_defs +type=crs"
RLON = -8.0 + 0.25 * np.arange(NX)
RLAT = 4.0 + 0.25 * np.arange(NY)


def lonlat(proj, xs, ys):
    t = Transformer.from_crs(CRS.from_proj4(proj), CRS.from_user_input("OGC:CRS84"), always_xy=True)
    xx, yy = np.meshgrid(xs, ys)
    lon, lat = t.transform(xx, yy)
    return np.asarray(lon), np.asarray(lat)


def fields():
    rng = np.random.default_rng(20261205)
    nt = 31 * 24 // DT_H
    i = np.arange(NX)[None, :]
    j = np.arange(NY)[:, None]
    patch = 1.0 + 0.08 * i + 0.05 * j
    base = 1.3 * rng.weibull(1.8, nt) + 0.3
    hm0 = base[:, None, None] * patch[None] * np.exp(0.05 * rng.standard_normal((nt, NY, NX)))
    te = 5.0 + 2.2 * np.sqrt(hm0) + 0.3 * rng.standard_normal((nt, NY, NX))
    return nt, hm0, te


def write(name, nt, hm0, te, axes=None, mapping=None, lon=None, lat=None, xunits="m"):
    d = os.path.join(HERE, name)
    shutil.rmtree(d, ignore_errors=True)
    os.makedirs(d)
    with netCDF4.Dataset(os.path.join(d, "%s_2001-01.nc" % name), "w", format="NETCDF4") as ds:
        ds.title = "swellgrid grid-mapping test fixture (%s)" % name
        ds.synthetic = "yes"
        ds.comment = "Invented, synthetic data for software tests only; describes no real place."
        ds.Conventions = "CF-1.8"
        ds.createDimension("time", nt)
        ydim, xdim = (axes[0][0], axes[1][0]) if axes else ("j", "i")
        ds.createDimension(ydim, NY)
        ds.createDimension(xdim, NX)
        v = ds.createVariable("time", "f8", ("time",))
        v.standard_name, v.units, v.calendar = "time", "hours since 2001-01-01 00:00:00", "standard"
        v[:] = DT_H * np.arange(nt)
        if axes:
            for (aname, std, units, vals) in axes:
                v = ds.createVariable(aname, "f8", (aname,))
                v.standard_name, v.units = std, units
                v[:] = vals
        coords = ""
        if lon is not None:
            v = ds.createVariable("lat", "f8", (ydim, xdim))
            v.standard_name, v.units = "latitude", "degrees_north"
            v[:] = lat
            v = ds.createVariable("lon", "f8", (ydim, xdim))
            v.standard_name, v.units = "longitude", "degrees_east"
            v[:] = lon
            coords = "lat lon"
        if mapping:
            c = ds.createVariable("crs", "i4", ())
            for k, val in mapping.items():
                setattr(c, k, val)
        v = ds.createVariable("depth", "f4", (ydim, xdim))
        v.standard_name, v.units = "sea_floor_depth_below_sea_surface", "m"
        v[:] = np.full((NY, NX), 60.0)
        for vname, std, units, arr in (
            ("hs", "sea_surface_wave_significant_height", "m", hm0),
            ("tm10", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
        ):
            v = ds.createVariable(vname, "f4", ("time", ydim, xdim), fill_value=np.float32(-999.0))
            v.standard_name, v.units = std, units
            if mapping:
                v.grid_mapping = "crs"
            if coords:
                v.coordinates = coords
            v[:] = arr
    if mapping:
        for vname in ("depth",):
            pass


def main():
    nt, hm0, te = fields()
    tlon, tlat = lonlat(TM_PROJ, X, Y)
    rlon, rlat = lonlat(ROT_PROJ, RLON, RLAT)
    xy = [("y", "projection_y_coordinate", "m", Y), ("x", "projection_x_coordinate", "m", X)]
    xykm = [("y", "projection_y_coordinate", "km", Y / 1000), ("x", "projection_x_coordinate", "km", X / 1000)]
    rot = [("rlat", "grid_latitude", "degrees", RLAT), ("rlon", "grid_longitude", "degrees", RLON)]
    write("tm_latlon", nt, hm0, te, axes=xy, mapping=TM, lon=tlon, lat=tlat)
    write("tm_xy", nt, hm0, te, axes=xykm, mapping=TM)
    write("rotated", nt, hm0, te, axes=rot, mapping=ROT)
    write("bad_mapping", nt, hm0, te, axes=xy, mapping=dict(grid_mapping_name="sinusoidal", longitude_of_central_meridian=0.0))
    write("lonlat_tm", nt, hm0, te, lon=tlon, lat=tlat)
    write("lonlat_rot", nt, hm0, te, lon=rlon, lat=rlat)
    ref = {"tm": {"proj": TM_PROJ, "lon": tlon.ravel().tolist(), "lat": tlat.ravel().tolist(),
                  "x": X.tolist(), "y": Y.tolist()},
           "rotated": {"proj": ROT_PROJ, "lon": rlon.ravel().tolist(), "lat": rlat.ravel().tolist(),
                       "x": RLON.tolist(), "y": RLAT.tolist()}}
    with open(os.path.join(HERE, "reference.json"), "w") as f:
        json.dump(ref, f, indent=1)


if __name__ == "__main__":
    main()
