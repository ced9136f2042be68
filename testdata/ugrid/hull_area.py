#!/usr/bin/python3
"""Area on WGS 84 (km^2) of the region a node-centred mesh covers, for
pipelines/engine's TestMeshScreenedByArea: the mesh of make_ugrid.py --pair
triangulates a regular lon/lat grid, so the union of its faces is the
rectangle of its nodes' extent, with edges along meridians and parallels.
The area is pyproj's geodesic polygon area (Debian's python3-pyproj,
Geod(ellps="WGS84").polygon_area_perimeter, Karney 2013) of that rectangle
with each edge densified to 20 000 points, so that its geodesic sides follow
the parallels to well below 1e-9 of the area.

usage: hull_area.py MESH.nc   (prints the area in km^2)
"""
import sys
import numpy as np
import netCDF4
from pyproj import Geod

with netCDF4.Dataset(sys.argv[1]) as ds:
    lon, lat = ds["node_lon"][:], ds["node_lat"][:]
w, e, s, n = float(lon.min()), float(lon.max()), float(lat.min()), float(lat.max())
k = 20000
xs = np.concatenate([np.linspace(w, e, k), np.full(k, e), np.linspace(e, w, k), np.full(k, w)])
ys = np.concatenate([np.full(k, s), np.linspace(s, n, k), np.full(k, n), np.linspace(n, s, k)])
area, _ = Geod(ellps="WGS84").polygon_area_perimeter(xs, ys)
print(repr(abs(area) / 1e6))
