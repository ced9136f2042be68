#!/usr/bin/python3
"""Reads a swellgrid atlas.nc written on a UGRID mesh with Debian's
python3-xarray (and the input mesh with python3-netcdf4) and checks, on its
own, that it is the input's mesh: node coordinates equal to the input's, and
the face-node connectivity equal to the input's (after its start_index,
transposition and fill values). Prints JSON: the location of the data and
every per-cell variable's values in the file's order, for the Go test to
compare with cells.parquet.

Usage: check_atlas.py ATLAS.nc INPUT.nc
"""
import json
import sys

import netCDF4
import numpy as np
import xarray as xr

atlas, inp = sys.argv[1], sys.argv[2]
ds = xr.open_dataset(atlas)
topo = [v for v in ds.variables if ds[v].attrs.get("cf_role") == "mesh_topology"]
assert len(topo) == 1, topo
t = ds[topo[0]].attrs
assert int(t["topology_dimension"]) == 2
conn_name = t["face_node_connectivity"]
xn, yn = t["node_coordinates"].split()

with netCDF4.Dataset(inp) as src:
    src.set_auto_mask(False)
    mt = [v for v in src.variables.values() if getattr(v, "cf_role", "") == "mesh_topology"][0]
    sx, sy = mt.node_coordinates.split()
    assert np.array_equal(ds[xn].values, src[sx][:]), "node longitudes differ"
    assert np.array_equal(ds[yn].values, src[sy][:]), "node latitudes differ"
    sc = src[mt.face_node_connectivity]
    c = sc[:]
    if getattr(mt, "face_dimension", sc.dimensions[0]) != sc.dimensions[0]:
        c = c.T
    fill = getattr(sc, "_FillValue", None)
    want = np.where(c == fill, -1, c - getattr(sc, "start_index", 0))

got = ds[conn_name]
# xarray decodes _FillValue to NaN; the start index is the attribute's.
g = got.values
g = np.where(np.isnan(g), -1, g - got.attrs.get("start_index", 0)) if g.dtype.kind == "f" else g
assert np.array_equal(g.astype(int), want.astype(int)), "face-node connectivity differs"

out = {"location": None, "values": {}, "node_lon": ds[xn].values.tolist(), "node_lat": ds[yn].values.tolist()}
if "face_coordinates" in t:
    fx, fy = t["face_coordinates"].split()
    out["face_lon"], out["face_lat"] = ds[fx].values.tolist(), ds[fy].values.tolist()
for name, v in ds.data_vars.items():
    if v.attrs.get("mesh") != topo[0] or v.ndim != 1:
        continue
    out["location"] = v.attrs["location"]
    out["values"][name] = [None if np.isnan(x) else float(x) for x in v.values.astype(float)]
print(json.dumps(out))
