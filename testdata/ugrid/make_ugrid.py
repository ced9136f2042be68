#!/usr/bin/python3
"""Writes the UGRID 1.0 fixtures of testdata/ugrid with Debian's
python3-netcdf4 (a tool analysts use), independent of swellgrid's own
generator. All values are SYNTHETIC test data on an invented mesh; they
describe no real place.

Files:
  With --pair DIR it writes only these two (about 10 MB each; the Go test
  writes them to a temporary directory, they are not committed):
  DIR/grid.nc    bulk fields (hs, te, depth) on a regular 12 x 9 lon/lat grid,
                 3-hourly for 1 year.
  DIR/mesh.nc    the same nodes and the same values as a UGRID mesh: nodes
                 in a shuffled file order, each grid quad cut into two
                 triangles (alternating diagonals), start_index = 1, data on
                 nodes. Per-node statistics must equal the grid run's.
  mixed0.nc      a mesh of quads and triangles (4 columns, fill value -1 for
                 the triangles' missing node), start_index 0, data and depth
                 on nodes: hs = 1 + 0.01 node + 0.001 step, te = 6 + 0.002 node.
  faces1.nc      the same mesh with the connectivity stored transposed
                 (nodes per face, faces) and face_dimension set, start_index 1,
                 fill 999999, data and depth on faces with face coordinates:
                 hs = 2 + 0.01 face + 0.001 step.
  bad_*.nc       copies of mixed0.nc with one defect each (see BAD below).
Run from the module root: /usr/bin/python3 testdata/ugrid/make_ugrid.py
"""
import os
import sys

import netCDF4
import numpy as np

ROOT = "testdata/ugrid"
SYN = "synthetic test data for swellgrid; invented mesh, no real place"
rng = np.random.default_rng(20261202)


def topology(ds, conn_name, face_dim=None, face_coords=False):
    m = ds.createVariable("mesh", "i4")
    m.cf_role = "mesh_topology"
    m.long_name = "topology of a 2-D unstructured mesh"
    m.topology_dimension = 2
    m.node_coordinates = "node_lon node_lat"
    m.face_node_connectivity = conn_name
    if face_dim:
        m.face_dimension = face_dim
    if face_coords:
        m.face_coordinates = "face_lon face_lat"
    return m


def coord(ds, name, dim, vals, std):
    v = ds.createVariable(name, "f8", (dim,))
    v.standard_name = std
    v.units = "degrees_east" if std == "longitude" else "degrees_north"
    v[:] = vals


def time_var(ds, n, step_h):
    ds.createDimension("time", None)
    t = ds.createVariable("time", "f8", ("time",))
    t.standard_name = "time"
    t.units = "hours since 2001-01-01 00:00:00"
    t.calendar = "standard"
    t[:] = np.arange(n) * step_h


def wave(ds, name, std, units, dims, vals, loc=None):
    v = ds.createVariable(name, "f8", dims)
    v.standard_name = std
    v.units = units
    if loc:
        v.mesh = "mesh"
        v.location = loc
        v.coordinates = "node_lon node_lat" if loc == "node" else "face_lon face_lat"
    v[:] = vals


HS = "sea_surface_wave_significant_height"
TE = "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"
DEP = "sea_floor_depth_below_sea_surface"

# ---------------------------------------------------------------- pair
PAIR = sys.argv[2] if len(sys.argv) == 3 and sys.argv[1] == "--pair" else None
lon = -8.0 + 0.25 * np.arange(12)
lat = 50.0 + 0.25 * np.arange(9)
nt = 365 * 8
LON, LAT = np.meshgrid(lon, lat)            # (lat, lon)
base = 1.0 + 1.5 * np.exp(-((LON + 6.6) ** 2 + (LAT - 51.0) ** 2) / 0.8)
season = 1 + 0.4 * np.cos(2 * np.pi * np.arange(nt) / (365 * 8))
hs = base[None] * season[:, None, None] * rng.gamma(6.0, 1 / 6.0, (nt, 9, 12))
te = 4.0 + 1.8 * hs + rng.normal(0, 0.3, hs.shape)
depth = 20 + 15 * (LON + 8.0)

def write_pair(out):
    with netCDF4.Dataset(f"{out}/grid.nc", "w", format="NETCDF4") as ds:
        ds.title = SYN
        ds.Conventions = "CF-1.8"
        ds.createDimension("lon", 12)
        ds.createDimension("lat", 9)
        time_var(ds, nt, 3)
        coord(ds, "lon", "lon", lon, "longitude")
        coord(ds, "lat", "lat", lat, "latitude")
        wave(ds, "hs", HS, "m", ("time", "lat", "lon"), hs)
        wave(ds, "te", TE, "s", ("time", "lat", "lon"), te)
        wave(ds, "depth", DEP, "m", ("lat", "lon"), depth)

    # Node k of the grid (row-major lat, lon) is stored at file position pos[k].
    nn = 12 * 9
    perm = rng.permutation(nn)                   # file position -> grid node
    pos = np.empty(nn, int)
    pos[perm] = np.arange(nn)
    tris = []
    for j in range(8):
        for i in range(11):
            a, b, c, d = j * 12 + i, j * 12 + i + 1, (j + 1) * 12 + i + 1, (j + 1) * 12 + i
            if (i + j) % 2 == 0:
                tris += [(a, b, c), (a, c, d)]
            else:
                tris += [(a, b, d), (b, c, d)]
    conn = pos[np.array(tris)] + 1               # start_index 1
    with netCDF4.Dataset(f"{out}/mesh.nc", "w", format="NETCDF4") as ds:
        ds.title = SYN
        ds.Conventions = "CF-1.8 UGRID-1.0"
        ds.createDimension("node", nn)
        ds.createDimension("face", len(tris))
        ds.createDimension("max_face_nodes", 3)
        time_var(ds, nt, 3)
        topology(ds, "face_nodes")
        c = ds.createVariable("face_nodes", "i4", ("face", "max_face_nodes"), fill_value=-999)
        c.cf_role = "face_node_connectivity"
        c.start_index = 1
        c[:] = conn
        coord(ds, "node_lon", "node", LON.ravel()[perm], "longitude")
        coord(ds, "node_lat", "node", LAT.ravel()[perm], "latitude")
        wave(ds, "hs", HS, "m", ("time", "node"), hs.reshape(nt, nn)[:, perm], "node")
        wave(ds, "te", TE, "s", ("time", "node"), te.reshape(nt, nn)[:, perm], "node")
        wave(ds, "depth", DEP, "m", ("node",), depth.ravel()[perm], "node")

# ---------------------------------------------------------------- mixed meshes
# 8 nodes: a strip of two quads and two triangles.
#   3---4---5
#   | q | q |\
#   0---1---2-6     faces: q(0,1,4,3), q(1,2,5,4), t(2,6,5), t(2,7,6)
#        \  |/
#         --7
nlon = np.array([0.0, 1.0, 2.0, 0.0, 1.0, 2.0, 3.0, 2.5]) - 20.0
nlat = np.array([40.0, 40.0, 40.0, 41.0, 41.0, 41.0, 40.5, 39.2])
faces = [[0, 1, 4, 3], [1, 2, 5, 4], [2, 6, 5], [2, 7, 6]]
NT = 48


def mixed(path, start=0, fill=-1, transposed=False, loc="node", defect=None):
    conn = np.full((len(faces), 4), fill, dtype=np.int64)
    for f, nodes in enumerate(faces):
        conn[f, :len(nodes)] = np.array(nodes) + start
    lonv = nlon.copy()
    if defect == "range":
        conn[1, 2] = len(nlon) + start          # a node that does not exist
    if defect == "start0":
        conn[conn != fill] += 1                 # counts from 1, says 0
    if defect == "two":
        conn[3, 2] = fill                       # a face of 2 nodes
    if defect == "fillmid":
        conn[0, 1], conn[0, 3] = fill, 3 + start
    if defect == "nan":
        lonv[4] = np.nan
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        ds.title = SYN
        ds.Conventions = "CF-1.8 UGRID-1.0"
        ds.createDimension("node", len(nlon))
        ds.createDimension("face", len(faces))
        ds.createDimension("nmax", 4)
        time_var(ds, NT, 1)
        topology(ds, "conn", face_dim="face" if transposed else None, face_coords=(loc == "face"))
        dims = ("nmax", "face") if transposed else ("face", "nmax")
        c = ds.createVariable("conn", "i4", dims, fill_value=fill)
        c.cf_role = "face_node_connectivity"
        c.start_index = {"start2": 2}.get(defect, start)
        c[:] = conn.T if transposed else conn
        coord(ds, "node_lon", "node", lonv, "longitude")
        coord(ds, "node_lat", "node", nlat, "latitude")
        steps = np.arange(NT)[:, None]
        if loc == "node":
            n = np.arange(len(nlon))[None]
            wave(ds, "hs", HS, "m", ("time", "node"), 1 + 0.01 * n + 0.001 * steps, "node")
            wave(ds, "te", TE, "s", ("time", "node"), 6 + 0.002 * n + 0 * steps, "node")
            wave(ds, "depth", DEP, "m", ("node",), 30 + np.arange(len(nlon)), "node")
        else:
            flon = [nlon[f].mean() for f in faces]
            flat = [nlat[f].mean() + 0.01 for f in faces]   # not the centroid: read, not computed
            coord(ds, "face_lon", "face", flon, "longitude")
            coord(ds, "face_lat", "face", flat, "latitude")
            n = np.arange(len(faces))[None]
            wave(ds, "hs", HS, "m", ("time", "face"), 2 + 0.01 * n + 0.001 * steps, "face")
            wave(ds, "te", TE, "s", ("time", "face"), 7 + 0.002 * n + 0 * steps, "face")
            if defect == "depthnodes":
                wave(ds, "depth", DEP, "m", ("node",), 30 + np.arange(len(nlon)), "node")
            else:
                wave(ds, "depth", DEP, "m", ("face",), 40 + np.arange(len(faces)), "face")


if PAIR:
    write_pair(PAIR)
    sys.exit(0)
mixed(f"{ROOT}/mixed0.nc")
mixed(f"{ROOT}/faces1.nc", start=1, fill=999999, transposed=True, loc="face")
BAD = ["range", "start0", "start2", "two", "fillmid", "nan"]
for d in BAD:
    mixed(f"{ROOT}/bad_{d}.nc", defect=d)
mixed(f"{ROOT}/bad_depthnodes.nc", start=1, loc="face", defect="depthnodes")
