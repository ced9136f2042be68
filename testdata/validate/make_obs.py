#!/usr/bin/python3
"""Observation files for ingest's station reader, written by Debian's
python3-netcdf4 and python3-xarray (not by swellgrid), and the values those
libraries read back (masked, unpacked, times decoded) in obs_expected.json.
The stations and values are invented (seeded pseudo-random numbers; no real
place, buoy or organisation).

Run from this directory:  /usr/bin/python3 make_obs.py
"""
import json
import datetime as dt
import numpy as np
import netCDF4
import xarray as xr

rng = np.random.RandomState(7)
INVENTED = "invented synthetic station record for swellgrid tests; not a measurement"

# 1. netCDF4: two stations over (station, time), Hm0 packed as int16 with a
# fill value, Te float32 in seconds, Tp spelt "sec", direction stored "to".
nt = 48
with netCDF4.Dataset("obs_netcdf4.nc", "w", format="NETCDF4") as ds:
    ds.featureType = "timeSeries"
    ds.Conventions = "CF-1.8"
    ds.comment = INVENTED
    ds.createDimension("station", 2)
    ds.createDimension("time", nt)
    ds.createDimension("name_strlen", 12)
    t = ds.createVariable("time", "f8", ("time",))
    t.standard_name = "time"
    t.units = "hours since 2031-01-01 00:00:00"
    t.calendar = "proleptic_gregorian"
    t[:] = np.arange(nt) * 1.5
    lon = ds.createVariable("lon", "f4", ("station",))
    lon.standard_name, lon.units = "longitude", "degrees_east"
    lon[:] = [-20.25, 350.5]  # the second written 0..360
    lat = ds.createVariable("lat", "f4", ("station",))
    lat.standard_name, lat.units = "latitude", "degrees_north"
    lat[:] = [45.5, 46.0]
    nm = ds.createVariable("station_name", "S1", ("station", "name_strlen"))
    nm.cf_role = "timeseries_id"
    nm[:] = netCDF4.stringtochar(np.array(["ALPHA-1", "BRAVO-2"], dtype="S12"))
    h = ds.createVariable("swh", "i2", ("station", "time"), fill_value=-32767)
    h.standard_name, h.units = "sea_surface_wave_significant_height", "m"
    h.scale_factor, h.add_offset = 0.001, 0.0
    hv = 1.0 + 2.5 * rng.rand(2, nt)
    hv = np.ma.masked_array(hv, mask=rng.rand(2, nt) < 0.1)
    h[:] = hv
    te = ds.createVariable("te", "f4", ("station", "time"), fill_value=np.float32(-999))
    te.standard_name = "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"
    te.units = "s"
    te[:] = 5 + 4 * rng.rand(2, nt)
    tp = ds.createVariable("tp", "f4", ("station", "time"))
    tp.standard_name = "sea_surface_wave_period_at_variance_spectral_density_maximum"
    tp.units = "sec"
    tp[:] = 7 + 5 * rng.rand(2, nt)
    d = ds.createVariable("dirto", "f4", ("station", "time"))
    d.standard_name, d.units = "sea_surface_wave_to_direction", "degree"
    d[:] = 360 * rng.rand(2, nt)

# 2. xarray: one station with scalar coordinates, variables over (time),
# Hm0 in cm, NaN as the fill, times decoded from datetime64 to seconds since a date.
times = np.array([np.datetime64("2031-01-01T00:00:00") + np.timedelta64(3600 * k, "s") for k in range(30)])
hx = 0.5 + 3 * rng.rand(30)
hx[[3, 17]] = np.nan
xds = xr.Dataset(
    {"hs": ("time", 100 * hx, {"standard_name": "sea_surface_wave_significant_height", "units": "cm"}),
     "mwd": ("time", 360 * rng.rand(30), {"standard_name": "sea_surface_wave_from_direction", "units": "degrees"}),
     "station_id": ((), "CHARLIE-3", {"cf_role": "timeseries_id"})},
    coords={"time": times,
            "longitude": ((), 2.75, {"standard_name": "longitude", "units": "degrees_east"}),
            "latitude": ((), 50.125, {"standard_name": "latitude", "units": "degrees_north"})},
    attrs={"featureType": "timeSeries", "Conventions": "CF-1.8", "comment": INVENTED})
xds.time.encoding.update({"units": "seconds since 2030-12-31 12:00:00", "calendar": "standard", "dtype": "float64"})
xds.to_netcdf("obs_xarray.nc")

# Bad files (each refused with the file and what to do).
def small(path, feature="timeSeries", time=True, hunits="m"):
    with netCDF4.Dataset(path, "w") as ds:
        if feature:
            ds.featureType = feature
        ds.comment = INVENTED
        ds.createDimension("time", 4)
        if time:
            t = ds.createVariable("time", "f8", ("time",))
            t.standard_name, t.units = "time", "hours since 2031-01-01"
            t[:] = [0, 1, 2, 3]
        for n, sn, u, v in (("lon", "longitude", "degrees_east", 1.0), ("lat", "latitude", "degrees_north", 50.0)):
            c = ds.createVariable(n, "f8", ())
            c.standard_name, c.units = sn, u
            c.assignValue(v)
        h = ds.createVariable("hs", "f4", ("time",))
        h.standard_name, h.units = "sea_surface_wave_significant_height", hunits
        h[:] = [1, 2, 3, 4]

small("bad_no_time.nc", time=False)
small("bad_units.nc", hunits="degree")
small("bad_feature.nc", feature="trajectory")
small("bad_no_feature.nc", feature=None)

# What the libraries read back: netCDF4 with automatic masking and scaling,
# xarray with CF decoding (the reference for ingest.ReadObservationNC).
exp = {"netcdf4": netCDF4.__version__, "xarray": xr.__version__, "files": {}}
with netCDF4.Dataset("obs_netcdf4.nc") as ds:
    tt = netCDF4.num2date(ds["time"][:], ds["time"].units, ds["time"].calendar, only_use_cftime_datetimes=False)
    names = netCDF4.chartostring(ds["station_name"][:])
    st = []
    for i in range(2):
        dto = ds["dirto"][i, :].filled(np.nan).astype(float)
        st.append({"name": str(names[i]), "lon": float(ds["lon"][i]), "lat": float(ds["lat"][i]),
                   "times": [x.strftime("%Y-%m-%d %H:%M:%S") for x in tt],
                   "hm0": ds["swh"][i, :].filled(np.nan).astype(float).tolist(),
                   "te": ds["te"][i, :].filled(np.nan).astype(float).tolist(),
                   "tp": ds["tp"][i, :].filled(np.nan).astype(float).tolist(),
                   "dir": np.mod(dto + 180, 360).tolist()})
    exp["files"]["obs_netcdf4.nc"] = st
with xr.open_dataset("obs_xarray.nc") as x:
    exp["files"]["obs_xarray.nc"] = [{
        "name": str(x["station_id"].values), "lon": float(x.longitude), "lat": float(x.latitude),
        "times": [str(np.datetime_as_string(v, unit="s")).replace("T", " ") for v in x.time.values],
        "hm0": (x["hs"].values.astype(float) / 100).tolist(),  # stored in cm
        "dir": x["mwd"].values.astype(float).tolist()}]
with open("obs_expected.json", "w") as f:
    json.dump(exp, f, indent=1, allow_nan=True)
