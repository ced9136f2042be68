#!/usr/bin/python3
"""Writes testdata/extremes_points/extremes_points.nc and annual_maxima.csv with
Debian's python3-netcdf4 and python3-numpy:

    /usr/bin/python3 testdata/extremes_points/make_extremes_points.py

(from the repository root). Synthetic, invented sea states at three stations of
a point set, 30 years (1991-2020), 6-hourly, standard calendar:
  0 "flat":     Hm0 = 2 m at every step (thirty identical annual maxima: a GEV fit
                cannot converge), depth 60 m
  1 "offshore": a background ln Hm0 an AR(1) process (lag-one correlation 0.9
                per 6 h, marginal mean ln 1.2 m, sd 0.3) plus storms (Poisson, 25 a
                year; amplitude 0.5 m + exponential of mean 1.2 m; Gaussian in time,
                18 h e-folding), Te = 4 Hm0^0.4 exp(0.08 e), depth 80 m
  2 "shallow":  0.55 x the offshore Hm0, same Te, depth 8 m (so that long return
                levels exceed 0.6 x depth)
annual_maxima.csv holds the calendar-year maxima of Hm0 of stations 1 and 2 as
stored (float32), the input of make_evd_refs.R.
"""
import numpy as np
import netCDF4

rng = np.random.default_rng(1991)
t0 = np.datetime64("1991-01-01T00")
t1 = np.datetime64("2021-01-01T00")
n = int((t1 - t0) / np.timedelta64(6, "h"))
phi, sd = 0.9, 0.3
x = np.empty(n)
x[0] = rng.standard_normal() * sd
e = rng.standard_normal(n) * sd * np.sqrt(1 - phi * phi)
for i in range(1, n):
    x[i] = phi * x[i - 1] + e[i]
off = np.exp(np.log(1.2) + x)
hours = np.arange(n) * 6.0
ns = rng.poisson(25 * 30)
peak = rng.uniform(0, hours[-1], ns)
amp = 0.5 + rng.exponential(1.2, ns)
for p, a in zip(peak, amp):
    i0, i1 = max(0, int((p - 72) / 6)), min(n, int((p + 72) / 6) + 1)
    off[i0:i1] += a * np.exp(-((hours[i0:i1] - p) / 18.0) ** 2)
te_off = 4.0 * off ** 0.4 * np.exp(0.08 * rng.standard_normal(n))
hm0 = np.stack([np.full(n, 2.0), off, 0.55 * off], axis=1).astype("f4")
te = np.stack([np.full(n, 7.0), te_off, te_off], axis=1).astype("f4")
tp = (te / np.float32(0.9)).astype("f4")

with netCDF4.Dataset("testdata/extremes_points/extremes_points.nc", "w", format="NETCDF4") as ds:
    ds.Conventions = "CF-1.8"
    ds.title = "swellgrid fixture: synthetic sea states at three stations, 30 years (invented, no real place)"
    ds.synthetic = "yes"
    ds.createDimension("time", n)
    ds.createDimension("station", 3)
    tv = ds.createVariable("time", "f8", ("time",))
    tv.standard_name, tv.units, tv.calendar, tv.axis = "time", "hours since 1991-01-01 00:00:00", "standard", "T"
    tv[:] = np.arange(n) * 6.0
    for name, std, unit, vals in (("lon", "longitude", "degrees_east", [-20.0, -20.5, -21.0]),
                                  ("lat", "latitude", "degrees_north", [40.0, 40.5, 41.0])):
        v = ds.createVariable(name, "f8", ("station",))
        v.standard_name, v.units = std, unit
        v[:] = vals
    for name, std, unit, vals in (
            ("hm0", "sea_surface_wave_significant_height", "m", hm0),
            ("te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
            ("tp", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s", tp)):
        v = ds.createVariable(name, "f4", ("time", "station"), zlib=True, complevel=4, fill_value=np.float32(9.96921e36))
        v.standard_name, v.units, v.coordinates = std, unit, "lon lat"
        v.comment = "synthetic: invented values, no real place"
        v[:] = vals
    d = ds.createVariable("depth", "f4", ("station",))
    d.standard_name, d.units, d.positive, d.coordinates = "sea_floor_depth_below_sea_surface", "m", "down", "lon lat"
    d[:] = [60.0, 80.0, 8.0]

years = (t0 + np.arange(n) * np.timedelta64(6, "h")).astype("datetime64[Y]").astype(int) + 1970
with open("testdata/extremes_points/annual_maxima.csv", "w") as f:
    f.write("# calendar-year maxima of Hm0 (m, float32 as stored) of extremes_points.nc, by make_extremes_points.py\n")
    f.write("year,offshore,shallow\n")
    for y in range(1991, 2021):
        m = years == y
        f.write("%d,%.9g,%.9g\n" % (y, float(hm0[m, 1].max()), float(hm0[m, 2].max())))
print(n, "steps; offshore max", off.max(), "shallow max", 0.55 * off.max())
