#!/usr/bin/python3
"""Spectral files in every convention swellgrid reads or refuses, written
with Debian's python3-netcdf4 (not with swellgrid's own generator), for
pipelines/engine/conventions_e2e_test.go and ingest/conventions_test.go.

An invented, synthetic scenario (no real place): 3 stations at depths 25,
150 and 4000 m, daily steps over three months (2031-01-01 .. 2031-03-31),
directional spectra on 14 log-spaced frequencies (0.04 - 0.4 Hz) and 12
directions. Each spectrum is the sum of a swell and a wind sea, each a
Pierson-Moskowitz-like frequency shape times a cos^2s spreading around a
mean direction, with heights, periods and directions drawn per step from a
seeded generator (invented data). The same sea, E(f, theta) in m2 Hz-1
rad-1 with theta the nautical direction the waves come from, is stored in
each file in another convention (VARIANTS below): directions as nautical
"to" or Cartesian (counterclockwise from east, going to: theta_c = 270 -
theta), densities as log10 or ln, frequencies in rad/s with densities per
rad/s (S(omega) = S(f) / (2 pi)), directions in radians with densities per
degree (S_deg = S_rad pi / 180), and frequency spectra E(f) = sum_theta S
dtheta; labelled rightly, or mislabelled (the attributes say nothing, say
something else, or disagree). reference.py computes what each file holds
as written here (the "truth" of each variant) independently of swellgrid.
Run: /usr/bin/python3 testdata/conventions/make_fixtures.py
(writes testdata/conventions/*.nc)
"""
import math
import os

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
NT, NS = 90, 3
FREQ = np.geomspace(0.04, 0.4, 14)
DIRS = np.arange(12) * 30.0  # nautical "from", degrees
DEPTH = [25.0, 150.0, 4000.0]
LON = [171.0, 171.5, 172.0]
LAT = [-48.0, -48.5, -49.0]

SN2 = "sea_surface_wave_directional_variance_spectral_density"
SN1 = "sea_surface_wave_variance_spectral_density"

# name: how the sea is stored and labelled. Keys:
#   dir: "from", "to", "cartesian" (how directions are stored)
#   dir_sn, dir_ln, dir_comment: the direction coordinate's attributes
#   enc: "linear", "log10", "ln" (how densities are stored)
#   units, ln, comment: the density's attributes
#   freq: "hz" or "rad_s" (frequency coordinate and, with basis, the density)
#   basis: "per_hz" or "per_rad_s" (what the stored density is per)
#   freq_sn: the frequency coordinate's standard_name
#   dir_units: "degree" or "rad"; per_degree: the density is per degree
#   oned: a frequency spectrum E(f)
VARIANTS = {
    # directions
    "dir_from": dict(dir="from", dir_sn="sea_surface_wave_from_direction", dir_ln="direction waves come from"),
    "dir_to": dict(dir="to", dir_sn="sea_surface_wave_to_direction", dir_ln="direction waves are going to"),
    "dir_cartesian_longname": dict(dir="cartesian", dir_ln="Cartesian direction, going to, counterclockwise from east"),
    "dir_cartesian_comment": dict(dir="cartesian", dir_ln="spectral direction bin",
                                  dir_comment="mathematical convention: angle counterclockwise from east of the direction waves propagate to"),
    "dir_to_sn_cartesian_ln": dict(dir="cartesian", dir_sn="sea_surface_wave_to_direction",
                                   dir_ln="Cartesian direction, going to, counterclockwise from east"),
    "dir_unlabelled": dict(dir="cartesian", dir_ln="spectral direction bin"),
    # density encodings
    "log10_longname": dict(enc="log10", ln="log10 of the directional variance spectral density",
                           comment="values are log10(E); E in m2 s rad-1"),
    "log10_units": dict(enc="log10", units="log10(m2 s rad-1)"),
    "ln_comment": dict(enc="ln", comment="stored as the natural logarithm of the density"),
    "log10_unlabelled": dict(enc="log10"),
    "linear_labelled_log10": dict(enc="linear", ln="log10 of the directional variance spectral density"),
    "log_baseless": dict(enc="log10", ln="logarithm of the directional variance spectral density"),
    # density units against the axes
    "rads_2d_per_hz": dict(freq="rad_s", basis="per_hz", units="m2 s rad-1"),
    "rads_2d_per_rads": dict(freq="rad_s", basis="per_rad_s", units="m2 s rad-1"),
    "rads_2d_explicit_hz": dict(freq="rad_s", basis="per_hz", units="m2 Hz-1 rad-1"),
    "rads_1d_per_rads": dict(oned=True, freq="rad_s", basis="per_rad_s", units="m2 s"),
    "hz_1d_rad_per_hz": dict(oned=True, basis="per_hz", units="m2 s rad-1"),
    "per_degree_rad_axis": dict(dir_units="rad", per_degree=True, units="m2 s degree-1"),
    "wave_frequency": dict(freq_sn="wave_frequency"),
}


def shape(fp, hs, theta_m, s):
    """E(f, theta) of one component, m0 = hs^2/16 on this grid (invented
    data): a Pierson-Moskowitz-like shape times cos^2s((theta - theta_m)/2)."""
    ef = (FREQ / fp) ** -5 * np.exp(-1.25 * (FREQ / fp) ** -4)
    d = np.radians(DIRS - theta_m)
    sp = np.cos(d / 2) ** (2 * s) + 1e-9  # never exactly 0: a logarithm exists
    e = ef[:, None] * sp[None, :]
    df = np.gradient(FREQ)
    dth = math.radians(30.0)
    return e * (hs / 4) ** 2 / np.sum(e * df[:, None] * dth)


def sea():
    """The true sea: S[t, station, f, theta] in m2 Hz-1 rad-1, theta from."""
    rng = np.random.default_rng(3407)
    S = np.zeros((NT, NS, FREQ.size, DIRS.size))
    for t in range(NT):
        for s in range(NS):
            swell = shape(0.07 + 0.02 * rng.random(), 2.5 + 2.0 * rng.random() + 0.3 * s, 240 + 40 * rng.random(), 8)
            wind = shape(0.13 + 0.08 * rng.random(), 1.0 + 2.0 * rng.random(), 300 + 90 * rng.random(), 2)
            S[t, s] = swell + wind
    return S


def write(name, v, S):
    oned = v.get("oned", False)
    freq_axis = FREQ * (2 * math.pi if v.get("freq") == "rad_s" else 1)
    data = S.copy()
    if oned:
        data = np.sum(data * math.radians(30.0), axis=3)  # E(f) = sum S dtheta
    if v.get("basis") == "per_rad_s":
        data = data / (2 * math.pi)  # S(omega) = S(f) / (2 pi)
    if v.get("per_degree"):
        data = data * math.pi / 180  # per degree
    enc = v.get("enc", "linear")
    if enc == "log10":
        data = np.log10(data)
    elif enc == "ln":
        data = np.log(data)
    dirs = DIRS.copy()
    if v.get("dir") == "to":
        dirs = (DIRS + 180) % 360
    elif v.get("dir") == "cartesian":
        dirs = (270 - DIRS) % 360  # theta_c = 270 - theta_from
    if v.get("dir_units") == "rad":
        dirs = np.radians(dirs)
    ds = netCDF4.Dataset(os.path.join(HERE, name + ".nc"), "w", format="NETCDF4")
    ds.Conventions = "CF-1.8"
    ds.title = "swellgrid fixture: invented, synthetic spectra at 3 points, stored as variant " + name
    ds.synthetic = "yes"
    ds.comment = ("Invented, synthetic data written with python3-netcdf4 by testdata/conventions/make_fixtures.py; "
                  "no real place, not model or measured data; for software tests only.")
    ds.createDimension("time", NT)
    ds.createDimension("station", NS)
    ds.createDimension("frequency", FREQ.size)
    t = ds.createVariable("time", "f8", ("time",))
    t.standard_name, t.units, t.calendar = "time", "days since 2031-01-01 00:00:00", "standard"
    t[:] = np.arange(NT, dtype=float)
    f = ds.createVariable("frequency", "f8", ("frequency",))
    f.standard_name = v.get("freq_sn", "sea_surface_wave_frequency")
    f.units = "rad s-1" if v.get("freq") == "rad_s" else "Hz"
    f[:] = freq_axis
    dims = ("time", "station", "frequency")
    if not oned:
        ds.createDimension("direction", DIRS.size)
        d = ds.createVariable("direction", "f8", ("direction",))
        sn = v.get("dir_sn", None if "dir" in v else "sea_surface_wave_from_direction")
        if sn:
            d.standard_name = sn
        if "dir_ln" in v:
            d.long_name = v["dir_ln"]
        if "dir_comment" in v:
            d.comment = v["dir_comment"]
        d.units = "rad" if v.get("dir_units") == "rad" else "degree"
        d[:] = dirs
        dims = dims + ("direction",)
    lon = ds.createVariable("lon", "f8", ("station",))
    lon.standard_name, lon.units = "longitude", "degrees_east"
    lon[:] = LON
    lat = ds.createVariable("lat", "f8", ("station",))
    lat.standard_name, lat.units = "latitude", "degrees_north"
    lat[:] = LAT
    dep = ds.createVariable("depth", "f4", ("station",))
    dep.standard_name, dep.units, dep.positive = "sea_floor_depth_below_sea_surface", "m", "down"
    dep[:] = DEPTH
    sp = ds.createVariable("efth", "f4", dims, zlib=True)
    sp.standard_name = SN1 if oned else SN2
    sp.units = v.get("units", "m2 s" if oned else "m2 s rad-1")
    if "ln" in v:
        sp.long_name = v["ln"]
    if "comment" in v:
        sp.comment = v["comment"]
    sp.coordinates = "lon lat"
    sp[:] = data.astype(np.float32)
    ds.close()


def main():
    S = sea()
    for name, v in VARIANTS.items():
        write(name, v, S)


if __name__ == "__main__":
    main()
