#!/usr/bin/python3
"""Fixtures of the date-line checks (pipelines/engine/dateline_test.go, issue 31:
longitude wrap), written with Debian's python3-netcdf4, not with swellgrid's
own generator.

Invented, synthetic data (no real place): a regular grid of 9 x 4 cells,
2 degrees apart, three months (January to March 2001) of 6-hourly bulk Hm0,
Te, Tp and a depth of 4000 m, one CF file per month, global attributes
synthetic = "yes" and a comment. An energetic patch is centred on the
column at 180 degrees, so that contours, bands and screening outlines cross
the date line. The same values are written on three longitude axes:

  pacific_0360   172, 174, ..., 188 (stored 0..360, ascending), latitude
                 ascending;
  pacific_pm180  172, ..., 178, -180, -178, ..., -172 (stored -180..180, the
                 jump inside the axis), latitude descending;
  away           2, 4, ..., 18 (the same grid 170 degrees west, away from
                 the date line), latitude ascending.

Cell (i, j) holds the same values in the three fixtures, i counted eastwards
from the western column (172 or 2 degrees), j northwards from -21 degrees;
the patch is a Gaussian of the distance in degrees from the 180 (or 10)
degree column. Also writes the constraint layers of the screening check:
a polygon to exclude and a point to measure distances to, in the same
relative place (pacific: 0..360 and -180..180 longitudes; away: 170 degrees
west), and the run specs spec_<fixture>.toml.
Run: /usr/bin/python3 testdata/dateline/make_fixtures.py
"""
import calendar
import json
import os
import shutil

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
NX, NY = 9, 4
DLON = 2.0
LAT = -21.0 + 2.0 * np.arange(NY)
WEST = {"pacific_0360": 172.0, "pacific_pm180": 172.0, "away": 2.0}
SHIFT = {"pacific_0360": 0.0, "pacific_pm180": 0.0, "away": -170.0}
DT_H = 6


def lon_axis(name):
    x = WEST[name] + DLON * np.arange(NX)
    if name == "pacific_pm180":
        x = np.where(x >= 180.0, x - 360.0, x)  # 172..178, -180, -178..-172
    return x


def fields():
    """(months, hm0, te, tp): per month arrays of (time, NY, NX), cell (j, i)
    counted from the south-west corner."""
    rng = np.random.default_rng(20260531)
    i = np.arange(NX)[None, :]
    j = np.arange(NY)[:, None]
    # distance in degrees from the patch centre (column i = 4, between rows 1 and 2)
    d2 = (DLON * (i - 4)) ** 2 + (2.0 * (j - 1.5)) ** 2
    patch = 1.0 + 1.6 * np.exp(-d2 / (2 * 4.0 ** 2)) + 0.05 * i - 0.03 * j
    out = []
    for month in (1, 2, 3):
        nt = calendar.monthrange(2001, month)[1] * 24 // DT_H
        base = 1.2 * rng.weibull(1.8, nt) + 0.3
        hm0 = base[:, None, None] * patch[None] * np.exp(0.04 * rng.standard_normal((nt, NY, NX)))
        te = 5.0 + 1.1 * np.sqrt(hm0) * 2.0 + 0.3 * rng.standard_normal((nt, NY, NX))
        tp = te / 0.9
        out.append((month, hm0, te, tp))
    return out


def write(name, data):
    d = os.path.join(HERE, name)
    shutil.rmtree(d, ignore_errors=True)
    os.makedirs(d)
    lon = lon_axis(name)
    lat = LAT.copy()
    flip = name == "pacific_pm180"  # latitude stored descending
    if flip:
        lat = lat[::-1]
    for month, hm0, te, tp in data:
        nt = hm0.shape[0]
        t0 = (np.datetime64("2001-%02d-01" % month) - np.datetime64("2001-01-01")).astype("timedelta64[h]").astype(float)
        path = os.path.join(d, "dateline_%s_2001-%02d.nc" % (name, month))
        with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
            ds.title = "swellgrid date-line test fixture (%s)" % name
            ds.synthetic = "yes"
            ds.comment = "Invented, synthetic data for software tests only; describes no real place."
            ds.Conventions = "CF-1.8"
            ds.createDimension("time", nt)
            ds.createDimension("lat", NY)
            ds.createDimension("lon", NX)
            v = ds.createVariable("time", "f8", ("time",))
            v.standard_name, v.units, v.calendar = "time", "hours since 2001-01-01 00:00:00", "standard"
            v[:] = t0 + DT_H * np.arange(nt)
            v = ds.createVariable("lat", "f8", ("lat",))
            v.standard_name, v.units = "latitude", "degrees_north"
            v[:] = lat
            v = ds.createVariable("lon", "f8", ("lon",))
            v.standard_name, v.units = "longitude", "degrees_east"
            v[:] = lon
            v = ds.createVariable("depth", "f4", ("lat", "lon"))
            v.standard_name, v.units = "sea_floor_depth_below_sea_surface", "m"
            v[:] = np.full((NY, NX), 4000.0)
            for vname, std, units, arr in (
                ("hs", "sea_surface_wave_significant_height", "m", hm0),
                ("tm10", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
                ("tpk", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s", tp),
            ):
                v = ds.createVariable(vname, "f4", ("time", "lat", "lon"), fill_value=np.float32(-999.0))
                v.standard_name, v.units = std, units
                v[:] = arr[:, ::-1, :] if flip else arr


def layers(name):
    """The screening layers: a polygon 3 columns wide around the 180 (10)
    degree column and a point 1 degree east of it, given in the fixture's
    own longitude convention."""
    s = SHIFT[name]
    if name == "pacific_pm180":
        poly = [[177.0, -20.0], [179.0, -20.0], [180.0, -20.0], [180.0, -14.0], [179.0, -14.0], [177.0, -14.0], [177.0, -20.0]]
        poly2 = [[-180.0, -20.0], [-177.0, -20.0], [-177.0, -14.0], [-180.0, -14.0], [-180.0, -20.0]]
        reserve = {"type": "MultiPolygon", "coordinates": [[poly], [poly2]]}
        port = [-179.0 + 0.0, -16.5]
    else:
        ring = [[177.0 + s, -20.0], [183.0 + s, -20.0], [183.0 + s, -14.0], [177.0 + s, -14.0], [177.0 + s, -20.0]]
        reserve = {"type": "Polygon", "coordinates": [ring]}
        port = [181.0 + s, -16.5]
    fc = lambda g: {"type": "FeatureCollection", "synthetic": "yes",
                    "comment": "Invented, synthetic layer for software tests only; describes no real place.",
                    "features": [{"type": "Feature", "properties": {}, "geometry": g}]}
    with open(os.path.join(HERE, "reserve_%s.geojson" % name), "w") as f:
        json.dump(fc(reserve), f, indent=1)
    with open(os.path.join(HERE, "port_%s.geojson" % name), "w") as f:
        json.dump(fc({"type": "Point", "coordinates": port}), f, indent=1)


SPEC = """# Date-line check (pipelines/engine/dateline_test.go), written by make_fixtures.py:
# %(what)s. Invented, synthetic data.
[input]
paths = ["%(name)s"]

[depth]
source = "file"

[statistics]
percentiles = [50.0, 90.0]

[extremes]
return_periods_y = [2.0]

[design]
enabled = false

[contours]
columns = ["power_mean_kw_m", "hm0_mean_m"]

[[screening.layer]]
name = "reserve"
file = "reserve_%(name)s.geojson"

[[screening.layer]]
name = "port"
file = "port_%(name)s.geojson"

[[screening.scenario]]
name = "core"
criteria = ["hm0_mean_m >= 2.0"]
exclude = ["reserve"]
distance = [{ layer = "port", max_km = 700.0 }]

[output]
dir = "out"
report = true
netcdf = true
geopackage = true
"""

WHAT = {
    "pacific_0360": "the Pacific grid across 180 degrees, longitudes stored 0..360",
    "pacific_pm180": "the Pacific grid across 180 degrees, longitudes stored -180..180 with the jump inside the axis, latitude descending",
    "away": "the same values on the same grid 170 degrees west, away from the date line",
}


def main():
    data = fields()
    for name in WEST:
        write(name, data)
        layers(name)
        with open(os.path.join(HERE, "spec_%s.toml" % name), "w") as f:
            f.write(SPEC % {"name": name, "what": WHAT[name]})


if __name__ == "__main__":
    main()
