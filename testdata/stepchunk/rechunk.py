#!/usr/bin/python3
"""Copy a NetCDF-4 file, chunking every variable that has a time dimension
one time step per chunk (the rest of each chunk: the whole of the other
dimensions), with zlib level 1 and shuffle; everything else as it is.

Used by ingest's TestStepChunkedReadOnce and the engine's spill test to make
step-chunked copies of the synthetic bulk fixture (its own metadata says it
is synthetic). Debian python3-netcdf4.

With --rows N first, the chunks instead hold every step of the file and N
rows of the grid (tiles along the rows).

usage: rechunk.py [--rows N] SRC... DSTDIR (each SRC copied to DSTDIR under its own name)
"""
import os
import sys

import netCDF4


def rechunk(src, dst, rows):
    with netCDF4.Dataset(src) as a, netCDF4.Dataset(dst, "w", format="NETCDF4") as b:
        b.setncatts({k: a.getncattr(k) for k in a.ncattrs()})
        for name, d in a.dimensions.items():
            b.createDimension(name, None if d.isunlimited() else len(d))
        for name, v in a.variables.items():
            v.set_auto_maskandscale(False)
            fill = v.getncattr("_FillValue") if "_FillValue" in v.ncattrs() else None
            chunks = None
            if "time" in v.dimensions and len(v.dimensions) > 1:
                chunks = [1 if dn == "time" else len(a.dimensions[dn]) for dn in v.dimensions]
                if rows:
                    chunks = [len(a.dimensions[dn]) if dn != "lat" else rows for dn in v.dimensions]
            w = b.createVariable(name, v.dtype, v.dimensions, zlib=True, complevel=1, shuffle=True,
                                 chunksizes=chunks, fill_value=fill)
            w.set_auto_maskandscale(False)
            w.setncatts({k: v.getncattr(k) for k in v.ncattrs() if k != "_FillValue"})
            w[...] = v[...]


args, rows = sys.argv[1:], 0
if args[0] == "--rows":
    rows, args = int(args[1]), args[2:]
for src in args[:-1]:
    rechunk(src, os.path.join(args[-1], os.path.basename(src)), rows)
