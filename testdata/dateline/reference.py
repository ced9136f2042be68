#!/usr/bin/python3
"""Reference of the date-line checks (pipelines/engine/dateline_test.go, issue 31),
computed from the fixtures' NetCDF files with numpy, python3-netcdf4,
python3-pyproj and python3-shapely alone (no swellgrid code), into
reference_<fixture>.json.

Per cell, in the canonical order stated in the README (rows of ascending
latitude, each of ascending longitude in the grid's continuous frame:
0..360 for the Pacific fixtures, -180..180 for the one away from the date
line; found here with numpy's argsort of the longitudes modulo 360 or as
stored):

- lon in [-180, 180) (cells.parquet's convention) and lat;
- hm0_mean_m, te_mean_s: means over the steps (a constant 6-hour step, so
  every step weighs the same);
- power_mean_kw_m: mean of J = rho g Hm0^2 cg(1/Te, h) / 16 / 1000 over
  the steps, cg from the linear dispersion relation at the file's depth
  (group_velocity of ../e2e/reference.py, scipy brentq), rho = 1025 kg/m3,
  g = 9.81 m/s2;
- area_km2: the cell's area on WGS 84 (pyproj Geod.polygon_area_perimeter,
  Karney 2013) of its lon/lat box, edges at the midpoints between the
  centres (outer edges half a spacing beyond), each edge densified (straight
  in lon/lat, RFC 7946 3.1.1), in the continuous frame;
- dist_port_km: pyproj Geod.inv from the centre to the port point;
- in_reserve: shapely covers(reserve, centre), the centre taken at its
  longitude and 360 degrees east and west of it (the layer's convention may
  differ from the grid's);
- pass: hm0_mean_m >= 2.0, not in the reserve, dist_port_km <= 700 (the
  scenario of spec_<fixture>.toml).

Also the extent: the RFC 7946 bbox (section 5.2: west > east across 180
degrees) and the atlas.nc geotransform GDAL should find (origin at the
outer corner of the north-west cell, pixel size the spacing).
Run: /usr/bin/python3 testdata/dateline/reference.py [OUTDIR]  (default: beside it)
"""
import glob
import importlib.util
import json
import math
import os
import sys

import netCDF4
import numpy as np
from pyproj import Geod
from shapely.geometry import Point, shape

HERE = os.path.dirname(os.path.abspath(__file__))
spec = importlib.util.spec_from_file_location("e2e_reference", os.path.join(HERE, "..", "e2e", "reference.py"))
e2e = importlib.util.module_from_spec(spec)
spec.loader.exec_module(e2e)
RHO, G = 1025.0, 9.81
GEOD = Geod(ellps="WGS84")
FIXTURES = {"pacific_0360": True, "pacific_pm180": True, "away": False}


def read(name):
    files = sorted(glob.glob(os.path.join(HERE, name, "*.nc")))
    hs, te = [], []
    for f in files:
        with netCDF4.Dataset(f) as ds:
            lon = np.array(ds["lon"][:], dtype=float)
            lat = np.array(ds["lat"][:], dtype=float)
            depth = np.array(ds["depth"][:], dtype=float)
            hs.append(np.ma.filled(ds["hs"][:].astype(float), np.nan))
            te.append(np.ma.filled(ds["tm10"][:].astype(float), np.nan))
    return lon, lat, depth, np.concatenate(hs), np.concatenate(te)


def box_area_m2(x0, x1, y0, y1):
    lon, lat = [], []
    box = [(x0, y0), (x1, y0), (x1, y1), (x0, y1), (x0, y0)]
    for a, b in zip(box[:-1], box[1:]):
        t = np.linspace(0, 1, 4001)[:-1]
        lon.extend(a[0] + t * (b[0] - a[0]))
        lat.extend(a[1] + t * (b[1] - a[1]))
    return abs(GEOD.polygon_area_perimeter(lon, lat)[0])


def edges(x):
    return [x[0] - (x[1] - x[0]) / 2] + [(a + b) / 2 for a, b in zip(x[:-1], x[1:])] + [x[-1] + (x[-1] - x[-2]) / 2]


def main():
    outdir = sys.argv[1] if len(sys.argv) > 1 else HERE
    for name, pacific in FIXTURES.items():
        lon, lat, depth, hs, te = read(name)
        frame = np.mod(lon, 360.0) if pacific else lon
        ix = np.argsort(frame, kind="stable")
        iy = np.argsort(lat, kind="stable")
        xs = list(frame[ix])
        ys = list(lat[iy])
        xe, ye = edges(xs), edges(ys)
        with open(os.path.join(HERE, "reserve_%s.geojson" % name)) as f:
            reserve = shape(json.load(f)["features"][0]["geometry"])
        with open(os.path.join(HERE, "port_%s.geojson" % name)) as f:
            port = json.load(f)["features"][0]["geometry"]["coordinates"]
        cells = []
        for j, fy in enumerate(iy):
            for i, fx in enumerate(ix):
                h, t = hs[:, fy, fx], te[:, fy, fx]
                cg = np.array([e2e.group_velocity(1.0 / tt, depth[fy, fx]) for tt in t])
                J = RHO * G * h * h * cg / 16.0 / 1000.0
                x = float(((lon[fx] + 180.0) % 360.0) - 180.0)
                y = float(lat[fy])
                d = GEOD.inv(x, y, port[0], port[1])[2] / 1000.0
                inside = any(reserve.covers(Point(x + dx, y)) for dx in (0.0, 360.0, -360.0))
                hm = float(np.mean(h))
                cells.append({
                    "cell_id": len(cells), "lon": x, "lat": y,
                    "hm0_mean_m": hm, "te_mean_s": float(np.mean(t)), "power_mean_kw_m": float(np.mean(J)),
                    "area_km2": box_area_m2(xe[i], xe[i + 1], ye[j], ye[j + 1]) / 1e6,
                    "dist_port_km": d, "in_reserve": bool(inside),
                    "pass": bool(hm >= 2.0 and not inside and d <= 700.0),
                })
        west, east = xs[0], xs[-1]
        bbox = [west if west < 180 else west - 360, ys[0], east if east <= 180 else east - 360, ys[-1]]
        dx, dy = xs[1] - xs[0], ys[1] - ys[0]
        out = {
            "source": "numpy %s, netCDF4 %s, pyproj %s (Geod ellps=WGS84)" % (np.__version__, netCDF4.__version__, __import__("pyproj").__version__),
            "bbox": bbox, "lon_frame": "0..360" if pacific else "-180..180",
            "geotransform": {"origin_x": xs[0] - dx / 2, "origin_y": ys[-1] + dy / 2, "pixel_x": dx, "pixel_y": -dy, "nx": len(xs), "ny": len(ys)},
            "cells": cells,
        }
        with open(os.path.join(outdir, "reference_%s.json" % name), "w") as f:
            json.dump(out, f, indent=1)
            f.write("\n")


if __name__ == "__main__":
    main()
