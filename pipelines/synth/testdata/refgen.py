#!/usr/bin/python3
"""Reference values for pipelines/synth tests, made with Debian's python3-numpy,
python3-scipy and python3-cftime (versions recorded in the output).

Run from the module root:  /usr/bin/python3 pipelines/synth/testdata/refgen.py

- jonswap: S(f) of the JONSWAP spectrum (Hasselmann et al. 1973 shape,
  sigma 0.07/0.09) scaled so that its integral over (0, inf) is Hm0^2/16; the
  integral is done with scipy.integrate.quad, independently of the Go code.
- spreading: the cos-2s function of Longuet-Higgins et al. (1963),
  G(s) cos^2s(dtheta/2), G from scipy.special.gamma, and its integral over the
  circle by scipy.integrate.quad (must be 1).
- calendars: the time values cftime.date2num gives for the calendar fixtures.
"""
import json
import math
import sys

import cftime
import numpy as np
import scipy
from scipy import integrate, special

F = [0.035 * 1.1 ** n for n in range(29)]


def shape(x, gamma):
    sigma = 0.07 if x <= 1 else 0.09
    r = math.exp(-(x - 1) ** 2 / (2 * sigma ** 2))
    return x ** -5 * math.exp(-1.25 * x ** -4) * gamma ** r


def shape_integral(gamma):
    # split at the peak where sigma changes; quad over (0, 1] and [1, inf)
    lo, _ = integrate.quad(lambda x: shape(x, gamma), 1e-3, 1, epsabs=0, epsrel=1e-13, limit=200)
    hi, _ = integrate.quad(lambda x: shape(x, gamma), 1, np.inf, epsabs=0, epsrel=1e-13, limit=200)
    return lo + hi


def jonswap(f, hm0, tp, gamma, norm):
    fp = 1 / tp
    return hm0 ** 2 / 16 / fp * shape(f / fp, gamma) / norm


stations = [  # must match synth.ReferenceStations()
    dict(hm0=6.0, tp=1 / F[8], gamma=3.3, s=10, dir=270.0),
    dict(hm0=2.5, tp=1 / F[12], gamma=1.0, s=4, dir=5.0),
    dict(hm0=1.2, tp=1 / F[15], gamma=7.0, s=25, dir=137.5),
]

out = {
    "made_with": {
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "cftime": cftime.__version__,
        "script": "pipelines/synth/testdata/refgen.py",
    },
    "jonswap": [],
    "shape_integral": {},
    "spreading": [],
    "calendars": {},
}
for g in (1.0, 2.0, 3.3, 7.0):
    out["shape_integral"][str(g)] = shape_integral(g)
for st in stations:
    norm = shape_integral(st["gamma"])
    out["jonswap"].append(dict(hm0=st["hm0"], tp=st["tp"], gamma=st["gamma"], freq=F,
                               s=[jonswap(f, st["hm0"], st["tp"], st["gamma"], norm) for f in F]))

dirs = [(90 + 15 * k) % 360 for k in range(24)]
for s in (1.0, 4.0, 10.0, 25.0):
    G = special.gamma(s + 1) / (2 * math.sqrt(math.pi) * special.gamma(s + 0.5))
    total, _ = integrate.quad(lambda t: G * abs(math.cos(t / 2)) ** (2 * s), -math.pi, math.pi, epsrel=1e-12)
    for mean in (270.0, 5.0, 137.5):
        out["spreading"].append(dict(s=s, mean=mean, theta=dirs, circle_integral=total,
                                     d=[G * abs(math.cos(math.radians(t - mean) / 2)) ** (2 * s) for t in dirs]))

# calendar fixtures: February and March 2004, 12-hourly (synth.Fixtures)
cal_units = {
    "noleap": "hours since 2001-01-01 00:00:00",
    "360_day": "days since 2000-01-01",
    "all_leap": "hours since 2001-01-01 00:00:00",
    "julian": "hours since 2001-01-01 00:00:00",
    "proleptic_gregorian": "minutes since 1999-12-31 06:00:00",
}
for cal, units in cal_units.items():
    vals = []
    for month in (2, 3):
        ndays = cftime.datetime(2004, month, 1, calendar=cal)
        d = ndays
        while d.month == month:
            vals.append(float(cftime.date2num(d, units, calendar=cal)))
            d = d + __import__("datetime").timedelta(hours=12)
    out["calendars"][cal] = dict(units=units, values=vals)

# the standard calendar over the 2 years of the monthly fixture: month starts
units = "hours since 2001-01-01 00:00:00"
out["calendars"]["standard_month_starts"] = dict(
    units=units,
    values=[float(cftime.date2num(cftime.datetime(2001 + m // 12, m % 12 + 1, 1, calendar="standard"), units,
                                  calendar="standard")) for m in range(24)])

json.dump(out, sys.stdout, indent=1)
print()
