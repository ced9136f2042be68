#!/usr/bin/python3
"""Synthetic hindcast, invented station and power matrix for the model
uncertainty of the AEP bands (issue 30), written with Debian's
python3-netcdf4 and numpy.

  hindcast_YYYY.nc  3 x 3 regular lon/lat grid, 3-hourly, 2001..2003 (one
                    file a year), Hm0 and Te (CF standard names), depth
                    1000 m everywhere (deep water: the bulk power is
                    rho g^2 Hm0^2 Te / (64 pi) to machine precision);
                    invented values, no real place.
  station.csv       an invented station at the centre cell (lon -19.5,
                    lat 50.5) over 2002..2003, at every hindcast step:
                    measured Hm0 = hindcast Hm0 / (1 + B_H) * (1 + e_t),
                    e an AR(1) series e_t = PHI e_{t-1} + sqrt(1 - PHI^2)
                    SIGMA z_t (stationary standard deviation SIGMA), and
                    measured Te = hindcast Te. So the injected relative
                    bias of the mean power (hindcast over measured, minus
                    one) is (1 + B_H)^2 / (1 + SIGMA^2) - 1 in expectation.
  device.csv        an invented power matrix (Te columns, kW).

Run from this directory:  /usr/bin/python3 make_fixture.py
Then make_ref.py for the references.
"""
import datetime as dt
import numpy as np
import netCDF4

B_H, SIGMA, PHI = 0.10, 0.10, 0.90
SEED = 30
LON = np.array([-20.0, -19.5, -19.0])
LAT = np.array([50.0, 50.5, 51.0])
STATION = ("SYN-UNC (invented)", -19.5, 50.5)

rng = np.random.RandomState(SEED)
t0 = dt.datetime(2001, 1, 1)
nt = int((dt.datetime(2004, 1, 1) - t0).total_seconds() // 10800)
hours = np.arange(nt) * 3.0
doy = hours / 24.0 / 365.25
# Hm0: a seasonal log-mean, a year-to-year level and an AR(1) storm
# signal, shared by the cells with a per-cell scale.
year = np.array([(t0 + dt.timedelta(hours=h)).year for h in hours])
level = {2001: 0.0, 2002: 0.12, 2003: -0.08}
a = np.zeros(nt)
z = rng.standard_normal(nt)
for i in range(1, nt):
    a[i] = 0.97 * a[i - 1] + np.sqrt(1 - 0.97 ** 2) * 0.45 * z[i]
base = np.exp(np.log(2.0) + 0.35 * np.cos(2 * np.pi * doy) + np.array([level[y] for y in year]) + a)
scale = np.array([[0.85, 0.9, 0.95], [0.95, 1.0, 1.05], [1.05, 1.1, 1.15]])  # [lat, lon]
hm0 = np.clip(base[:, None, None] * scale[None], 0.3, 9.0)
noise = rng.standard_normal(hm0.shape)
te = np.clip(4.0 + 2.2 * np.sqrt(hm0) + 0.3 * noise, 4.0, 14.0)
hm0, te = hm0.astype(np.float32), te.astype(np.float32)

for y in (2001, 2002, 2003):
    sel = year == y
    with netCDF4.Dataset(f"hindcast_{y}.nc", "w", format="NETCDF4") as ds:
        ds.title = "swellgrid test fixture: invented hindcast for the AEP bands' model uncertainty"
        ds.synthetic = "yes"
        ds.comment = "synthetic: invented values, no real place; made by testdata/uncertainty/make_fixture.py"
        ds.Conventions = "CF-1.8"
        ds.createDimension("time", int(sel.sum()))
        ds.createDimension("lat", 3)
        ds.createDimension("lon", 3)
        tv = ds.createVariable("time", "f8", ("time",))
        tv.standard_name, tv.units, tv.calendar, tv.axis = "time", "hours since 2001-01-01 00:00:00", "standard", "T"
        tv[:] = hours[sel]
        for name, vals, sn, units, ax in (("lat", LAT, "latitude", "degrees_north", "Y"), ("lon", LON, "longitude", "degrees_east", "X")):
            v = ds.createVariable(name, "f8", (name,))
            v.standard_name, v.units, v.axis = sn, units, ax
            v[:] = vals
        for name, vals, sn in (("hm0", hm0, "sea_surface_wave_significant_height"),
                               ("te", te, "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment")):
            v = ds.createVariable(name, "f4", ("time", "lat", "lon"), fill_value=np.float32(9.96921e36))
            v.standard_name, v.units = sn, ("m" if name == "hm0" else "s")
            v.comment = "synthetic: invented values, no real place"
            v[:] = vals[sel]
        d = ds.createVariable("depth", "f4", ("lat", "lon"), fill_value=np.float32(9.96921e36))
        d.standard_name, d.units, d.positive = "sea_floor_depth_below_sea_surface", "m", "down"
        d.comment = "synthetic: invented values, no real place"
        d[:] = np.full((3, 3), 1000.0, dtype=np.float32)

# the station: the centre cell over 2002..2003
iy, ix = 1, 1
sel = np.where(year >= 2002)[0]
n = len(sel)
e = np.zeros(n)
zz = rng.standard_normal(n)
e[0] = SIGMA * zz[0]
for i in range(1, n):
    e[i] = PHI * e[i - 1] + np.sqrt(1 - PHI ** 2) * SIGMA * zz[i]
h_obs = hm0[sel, iy, ix].astype(float) / (1 + B_H) * (1 + e)
te_obs = te[sel, iy, ix].astype(float)
with open("station.csv", "w") as f:
    f.write("# comment: invented synthetic station record, not a measurement (testdata/uncertainty/make_fixture.py): "
            f"measured Hm0 = hindcast Hm0 / (1 + {B_H}) * (1 + e), e AR(1) phi {PHI}, sd {SIGMA}, seed {SEED}; Te = hindcast Te\n")
    f.write("# source: swellgrid test fixture; synthetic, no real place, buoy or organisation\n")
    f.write("time,station,lon,lat,hm0_m,te_s\n")
    for k, i in enumerate(sel):
        t = t0 + dt.timedelta(hours=float(hours[i]))
        f.write(f"{t:%Y-%m-%dT%H:%M:%SZ},{STATION[0]},{STATION[1]},{STATION[2]},{repr(float(h_obs[k]))},{repr(float(te_obs[k]))}\n")

with open("device.csv", "w") as f:
    f.write("# invented power matrix for the swellgrid test fixture (kW); synthetic, no real device\n")
    tc = np.arange(4.5, 14.0, 1.0)
    hc = np.arange(0.25, 8.0, 0.5)
    f.write("hm0_m\\te_s," + ",".join(f"{x:g}" for x in tc) + "\n")
    for h in hc:
        row = [min(400.0, round(12.0 * h * h * t / 9.0 * np.exp(-((t - 8.0) / 5.0) ** 2), 1)) if h > 0.5 else 0.0 for t in tc]
        f.write(f"{h:g}," + ",".join(f"{x:g}" for x in row) + "\n")
