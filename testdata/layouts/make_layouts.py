#!/usr/bin/python3
"""Writes the input-layout fixtures of testdata/layouts with Debian's
python3-xarray and python3-netcdf4 (tools analysts use), independent of
swellgrid's own generator. All values are SYNTHETIC test data (random sea
states on an invented grid); they describe no real place.

Layouts (one directory each):
  split/       one variable per file, written by xarray with its default
               encoding (_FillValue = NaN): hs_YYYY-MM.nc, te_YYYY-MM.nc,
               dir_YYYY-MM.nc, and depth.nc (no time axis, netCDF4). The te
               file of February ends on the 20th: te is missing after it.
               Cell (0, 3) is land: every value missing, depth missing.
  combined/    the same values, all variables in one file per month (xarray
               defaults, _FillValue = NaN), te NaN
               where split/ has no te.
  tstation/    spectral point output (netCDF4): lon/lat over (time,
               station), constant in time; station names with
               cf_role = "timeseries_id"; 2-D spectra; static depth.
  moving.nc    like tstation but one station moves (to be refused).
  tidal_pts/   bulk point set (netCDF4) whose depth varies in time,
               depth(time, station); station names as NetCDF-4 strings.
  tidal_grid/  bulk regular grid (xarray) with bed elevation(time, lat, lon),
               positive = "up" (negative below the surface), no standard_name:
               the spec maps roles.depth = "bed_elev".
  shortnames/  bulk, short variable names and no standard_name (long_name
               only), int16 packing that differs per file, direction units
               "degree true" (3 monthly files, netCDF4).
Run from the module root: /usr/bin/python3 testdata/layouts/make_layouts.py
"""
import os

import netCDF4
import numpy as np
import xarray as xr

ROOT = "testdata/layouts"
rng = np.random.default_rng(20260301)
T0 = np.datetime64("2001-01-01T00:00")
SYN = "synthetic test data for swellgrid; no real place"


def hours(n, step):
    return T0 + np.arange(n) * np.timedelta64(step, "h")


def seastates(shape):
    hs = rng.gamma(4.0, 0.5, shape)            # m
    te = 5.0 + 1.6 * hs + rng.normal(0, 0.6, shape)  # s
    dr = rng.uniform(0, 360, shape)
    return hs, np.clip(te, 3, 20), dr


# ---------------------------------------------------------------- split / combined
lat = np.array([52.0, 51.5, 51.0])
lon = np.array([-4.0, -3.5, -3.0, -2.5])
months = [("2001-01", 31), ("2001-02", 28)]
depth = np.array([[12.0, 25.0, 60.0, np.nan], [8.0, 18.0, 40.0, 90.0], [15.0, 30.0, 70.0, 200.0]])
os.makedirs(f"{ROOT}/split", exist_ok=True)
os.makedirs(f"{ROOT}/combined", exist_ok=True)
start = 0
for ym, days in months:
    n = days * 8  # 3-hourly
    t = hours(start + n, 3)[start:]
    start += n
    hs, te, dr = seastates((n, 3, 4))
    for a in (hs, te, dr):
        a[:, 0, 3] = np.nan  # land
    te_split = te
    if ym == "2001-02":
        keep = t < np.datetime64("2001-02-21T00:00")
        te_split = te[keep]
        te_comb = te.copy()
        te_comb[~keep] = np.nan
    else:
        keep = np.ones(n, bool)
        te_comb = te
    coords = {"lat": ("lat", lat, {"standard_name": "latitude", "units": "degrees_north"}),
              "lon": ("lon", lon, {"standard_name": "longitude", "units": "degrees_east"})}
    attrs = {"comment": SYN}

    def da(a, tt, sn, units):
        return xr.DataArray(a.astype("float32"), dims=("time", "lat", "lon"),
                            coords={"time": tt, **coords}, attrs={"standard_name": sn, "units": units})
    hs_a = da(hs, t, "sea_surface_wave_significant_height", "m")
    te_a = da(te_split, t[keep], "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s")
    dr_a = da(dr, t, "sea_surface_wave_from_direction", "degree")
    xr.Dataset({"hs": hs_a}, attrs=attrs).to_netcdf(f"{ROOT}/split/hs_{ym}.nc")
    xr.Dataset({"te": te_a}, attrs=attrs).to_netcdf(f"{ROOT}/split/te_{ym}.nc")
    xr.Dataset({"dir": dr_a}, attrs=attrs).to_netcdf(f"{ROOT}/split/dir_{ym}.nc")
    comb = xr.Dataset({"hs": hs_a, "te": da(te_comb, t, te_a.attrs["standard_name"], "s"), "dir": dr_a,
                       "depth": xr.DataArray(depth, dims=("lat", "lon"), coords=coords,
                                             attrs={"standard_name": "sea_floor_depth_below_sea_surface", "units": "m"})},
                      attrs=attrs)
    comb.to_netcdf(f"{ROOT}/combined/waves_{ym}.nc")

with netCDF4.Dataset(f"{ROOT}/split/depth.nc", "w") as ds:
    ds.comment = SYN
    ds.createDimension("lat", 3)
    ds.createDimension("lon", 4)
    v = ds.createVariable("lat", "f8", ("lat",)); v.standard_name = "latitude"; v.units = "degrees_north"; v[:] = lat
    v = ds.createVariable("lon", "f8", ("lon",)); v.standard_name = "longitude"; v.units = "degrees_east"; v[:] = lon
    v = ds.createVariable("depth", "f4", ("lat", "lon"), fill_value=np.float32(-999))
    v.standard_name = "sea_floor_depth_below_sea_surface"; v.units = "m"
    v[:] = np.ma.masked_invalid(depth)


# ---------------------------------------------------------------- spectral points, lon/lat (time, station)
def spectra(nt, ns, f, d):
    """PM-shaped frequency spectrum with cos^2s spreading, random Hm0/Tp/direction."""
    hs = rng.gamma(4.0, 0.5, (nt, ns))
    tp = np.clip(6 + 1.8 * hs + rng.normal(0, 0.8, (nt, ns)), 4, 20)
    th0 = rng.uniform(0, 360, (nt, ns))
    fp = 1 / tp
    F = f[None, None, :]
    E = (5 / 16) * hs[..., None] ** 2 * fp[..., None] ** 4 / F ** 5 * np.exp(-1.25 * (fp[..., None] / F) ** 4)
    dd = np.radians(d[None, None, :] - th0[..., None])
    D = np.cos(dd / 2) ** 8
    D /= (D.sum(-1, keepdims=True) * np.radians(360 / len(d)))
    return (E[..., :, None] * D[..., None, :]).astype("float32")  # m2 s rad-1


def write_points(path, moving, nt):
    ns = 3
    f = 0.04 * 1.12 ** np.arange(12)
    d = np.arange(0, 360, 30.0)
    with netCDF4.Dataset(path, "w") as ds:
        ds.comment = SYN
        ds.featureType = "timeSeries"
        ds.createDimension("time", None)
        ds.createDimension("station", ns)
        ds.createDimension("frequency", len(f))
        ds.createDimension("direction", len(d))
        ds.createDimension("name_strlen", 12)
        v = ds.createVariable("time", "f8", ("time",)); v.units = "hours since 2001-01-01 00:00:00"; v.standard_name = "time"; v.calendar = "standard"
        v[:] = np.arange(nt) * 6.0
        v = ds.createVariable("frequency", "f4", ("frequency",)); v.units = "Hz"; v.standard_name = "sea_surface_wave_frequency"; v[:] = f
        v = ds.createVariable("direction", "f4", ("direction",)); v.units = "degree"; v.standard_name = "sea_surface_wave_from_direction"; v[:] = d
        base_lon, base_lat = np.array([-6.25, -6.0, -5.5]), np.array([49.5, 49.75, 50.0])
        lonv = np.tile(base_lon, (nt, 1))
        latv = np.tile(base_lat, (nt, 1))
        if moving:
            lonv[:, 2] += np.linspace(0, 0.5, nt)
        v = ds.createVariable("longitude", "f4", ("time", "station")); v.units = "degrees_east"; v.standard_name = "longitude"; v[:] = lonv
        v = ds.createVariable("latitude", "f4", ("time", "station")); v.units = "degrees_north"; v.standard_name = "latitude"; v[:] = latv
        v = ds.createVariable("station_name", "S1", ("station", "name_strlen")); v.cf_role = "timeseries_id"; v.long_name = "station name"
        v[:] = netCDF4.stringtochar(np.array(["SYN-NORTH", "SYN-MID", "SYN-SOUTH"], dtype="S12"))
        v = ds.createVariable("dpt", "f4", ("station",)); v.units = "m"; v.standard_name = "sea_floor_depth_below_sea_surface"
        v[:] = [14.0, 35.0, 120.0]
        v = ds.createVariable("efth", "f4", ("time", "station", "frequency", "direction"), fill_value=np.float32(9.96921e36))
        v.units = "m2 s rad-1"; v.standard_name = "sea_surface_wave_directional_variance_spectral_density"
        v[:] = spectra(nt, ns, f, d)


os.makedirs(f"{ROOT}/tstation", exist_ok=True)
write_points(f"{ROOT}/tstation/points_2001-01.nc", False, 4 * 31)
write_points(f"{ROOT}/moving.nc", True, 4)


# ---------------------------------------------------------------- depth varying in time
os.makedirs(f"{ROOT}/tidal_pts", exist_ok=True)
nt, ns = 8 * 59, 4
tt = np.arange(nt) * 3.0
h0 = np.array([4.0, 8.0, 15.0, 40.0])
tide = 1.8 * np.sin(2 * np.pi * tt / 12.42)  # M2-like, synthetic
hs, te, dr = seastates((nt, ns))
hs = np.minimum(hs, 0.5 * (h0 + tide[:, None]))
with netCDF4.Dataset(f"{ROOT}/tidal_pts/tidal_points.nc", "w") as ds:
    ds.comment = SYN
    ds.createDimension("time", None)
    ds.createDimension("node", ns)
    v = ds.createVariable("time", "f8", ("time",)); v.units = "hours since 2001-01-01"; v.standard_name = "time"; v[:] = tt
    v = ds.createVariable("lon", "f8", ("node",)); v.units = "degrees_east"; v.standard_name = "longitude"; v[:] = [-5.0, -4.9, -4.8, -4.7]
    v = ds.createVariable("lat", "f8", ("node",)); v.units = "degrees_north"; v.standard_name = "latitude"; v[:] = [50.1, 50.1, 50.2, 50.3]
    v = ds.createVariable("node_id", str, ("node",)); v.cf_role = "timeseries_id"  # NetCDF-4 strings
    v[:] = np.array(["SYN-T1", "SYN-T2", "SYN-T3", "SYN-T4"], dtype=object)
    v = ds.createVariable("depth", "f4", ("time", "node")); v.units = "m"; v.standard_name = "sea_floor_depth_below_sea_surface"
    v[:] = h0[None, :] + tide[:, None]
    for name, a, sn, u in (("hs", hs, "sea_surface_wave_significant_height", "m"),
                           ("te", te, "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s")):
        v = ds.createVariable(name, "f4", ("time", "node"), fill_value=np.float32(-999.0)); v.units = u; v.standard_name = sn; v[:] = a

os.makedirs(f"{ROOT}/tidal_grid", exist_ok=True)
glat, glon = np.array([50.0, 50.1]), np.array([-5.0, -4.9, -4.8])
nt = 8 * 31
tt = hours(nt, 3)
tide = 1.5 * np.sin(2 * np.pi * np.arange(nt) * 3 / 12.42)
bed = -np.array([[5.0, 9.0, 20.0], [6.0, 12.0, 30.0]])  # heights, negative below the surface
elev = bed[None] - tide[:, None, None]  # bed height relative to the moving surface
hs, te, _ = seastates((nt, 2, 3))
hs = np.minimum(hs, 0.5 * (-elev))
ds = xr.Dataset({
    "swh": (("time", "lat", "lon"), hs.astype("float32"), {"standard_name": "sea_surface_wave_significant_height", "units": "m"}),
    "te": (("time", "lat", "lon"), te.astype("float32"), {"standard_name": "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "units": "s"}),
    "bed_elev": (("time", "lat", "lon"), elev.astype("float32"), {"long_name": "sea floor height relative to the instantaneous sea surface", "units": "m", "positive": "up"}),
}, coords={"time": tt, "lat": ("lat", glat, {"standard_name": "latitude", "units": "degrees_north"}),
           "lon": ("lon", glon, {"standard_name": "longitude", "units": "degrees_east"})}, attrs={"comment": SYN})
ds.to_netcdf(f"{ROOT}/tidal_grid/tidal_grid_2001-01.nc")


# ---------------------------------------------------------------- short names, per-file packing, "degree true"
os.makedirs(f"{ROOT}/shortnames", exist_ok=True)
slat, slon = np.array([45.0, 45.5, 46.0]), np.array([-10.0, -9.5])
start = 0
for k, (ym, days) in enumerate([("2001-01", 31), ("2001-02", 28), ("2001-03", 31)]):
    n = days * 4
    hs, te, dr = seastates((n, 3, 2))
    with netCDF4.Dataset(f"{ROOT}/shortnames/export_{ym}.nc", "w") as ds:
        ds.comment = SYN
        ds.createDimension("valid_time", None)
        ds.createDimension("latitude", 3)
        ds.createDimension("longitude", 2)
        v = ds.createVariable("valid_time", "i8", ("valid_time",)); v.units = "seconds since 1970-01-01"; v.calendar = "proleptic_gregorian"
        v[:] = 978307200 + (start + np.arange(n)) * 21600
        v = ds.createVariable("latitude", "f8", ("latitude",)); v.units = "degrees_north"; v[:] = slat
        v = ds.createVariable("longitude", "f8", ("longitude",)); v.units = "degrees_east"; v[:] = slon
        for name, a, ln, u, sc in (("hsig", hs, "Significant height of combined wind waves and swell", "m", 3e-4 * (1 + 0.2 * k)),
                                   ("tm10", te, "Mean wave period based on inverse moment of frequency", "s", 7e-4 * (1 + 0.2 * k)),
                                   ("thm", dr, "Mean wave direction", "degree true", 0.0055 + 0.001 * k)):
            v = ds.createVariable(name, "i2", ("valid_time", "latitude", "longitude"), fill_value=np.int16(-32767))
            v.scale_factor = sc
            v.add_offset = 0.0 if name != "thm" else 180.0
            v.units = u
            v.long_name = ln
            v[:] = a
    start += n
print("wrote", ROOT)
