#!/usr/bin/python3
"""Reads atlas.nc with Debian's python3-xarray (an independent NetCDF/CF
reader) and prints, as JSON, what the Go test compares with cells.parquet and
monthly.parquet: the coordinates, every variable's values (NaN as null) and
attributes, and the CF grid mapping. Usage: read_atlas_nc.py ATLAS.nc
"""
import json
import math
import sys

import numpy as np
import xarray as xr

ds = xr.open_dataset(sys.argv[1], mask_and_scale=True, decode_times=False)
out = {"dims": {k: int(v) for k, v in ds.sizes.items()}, "vars": {}, "coords": {}, "attrs": {k: str(v) for k, v in ds.attrs.items()}}


def vals(a):
    a = np.asarray(a, dtype="float64").ravel()
    return [None if not math.isfinite(x) else float(x) for x in a]


for name in ds.coords:
    out["coords"][name] = vals(ds[name].values)
for name, v in ds.data_vars.items():
    attrs = {k: str(x) for k, x in v.attrs.items()}
    # xarray moves _FillValue into encoding when it masks
    if "_FillValue" in v.encoding:
        attrs["_FillValue"] = str(v.encoding["_FillValue"])
    out["vars"][name] = {"dims": list(v.dims), "attrs": attrs, "values": vals(v.values) if v.ndim > 0 else []}
json.dump(out, sys.stdout)
