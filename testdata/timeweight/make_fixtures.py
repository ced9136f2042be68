#!/usr/bin/python3
"""Fixtures of the time-weighting checks (pipelines/engine/timeweight_test.go, issue
27: every step weighted by its duration), written with Debian's
python3-netcdf4, not with swellgrid's own generator.

Invented, synthetic data (no real place): a grid of 1 x 2 cells (depths 25 m
and 140 m), bulk Hm0, Te, Tp and mean direction, one CF file per month. The
sea state is a continuous-time process sampled at each fixture's own times
(an Ornstein-Uhlenbeck latent variable, exact for any step, mapped to a
Weibull Hm0 with a seasonal cycle), so steps of any length describe the same
kind of sea and calm spells last hours to days.

  a_step_change   2001-2002 every 3 h (times in hours since 2001-01-01), then
                  2003 every 1 h (a newer run: seconds since 2003-01-01), its
                  seas 25 % higher (a stormier year: the mean over steps and the
                  mean over time differ by about 12 % in power);
  b_coarse_months 2001 every 1 h, but April, May and September every 3 h;
                  three gaps: 31 March (just before the change of step), one
                  3-hourly step on 15 September, two hourly steps on 10 July;
  c_mixed_steps   January 2001 every 3 h, then February to April steps of
                  1.5 h and 3 h alternating (minutes since 2001-01-01): steps
                  straddle the month ends;
  d_dup_equal     January to April 2001 every 1 h; each month's file also holds
                  the next month's first step, with identical values (Hm0 of
                  the first cell missing at 2001-02-01 00:00 in both files);
  e_dup_differ    as d, but the February file's copy of 2001-03-01 00:00
                  holds other values (a storm) than the March file's.

Also writes the specs (spec_<variant>.toml) the test runs; the variants e,
e_first and e_last are the fixture e without and with
input.duplicate_steps = "first" / "last".
Run: /usr/bin/python3 testdata/timeweight/make_fixtures.py
"""
import math
import os
import shutil

import netCDF4
import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
LON = np.array([20.0, 20.5])
LAT = np.array([41.0])
DEPTH = np.array([[25.0, 140.0]])
CELL_SCALE = np.array([0.9, 1.15])
EPOCH = np.datetime64("2001-01-01T00:00:00", "s")
TAU_H = 20.0  # correlation time of the sea-state process, hours
TAU_DIR_H = 40.0

FIXTURES = {
    "a_step_change": "two years 3-hourly, then one year hourly (a newer run, 25 % higher seas)",
    "b_coarse_months": "a year hourly with three 3-hourly months inside (April, May, September) and three gaps (31 March, 15 September 12:00, 10 July 05:00-06:00)",
    "c_mixed_steps": "a month 3-hourly, then three months of 1.5 h and 3 h steps alternating",
    "d_dup_equal": "four months hourly; each file repeats the next month's first step with identical values",
    "e_dup_differ": "as d_dup_equal, but the February file's copy of 2001-03-01 00:00 differs from the March file's",
}

# variant -> (fixture directory, input.duplicate_steps or None)
VARIANTS = {
    "a": ("a_step_change", None),
    "b": ("b_coarse_months", None),
    "c": ("c_mixed_steps", None),
    "d": ("d_dup_equal", None),
    "e": ("e_dup_differ", None),
    "e_first": ("e_dup_differ", "first"),
    "e_last": ("e_dup_differ", "last"),
}


def month_start(y, m):
    return np.datetime64("%04d-%02d-01T00:00:00" % (y + (m - 1) // 12, (m - 1) % 12 + 1), "s")


def hours(d):
    return (d - EPOCH).astype("timedelta64[s]").astype(np.int64) / 3600.0


def regular(y0, m0, y1, m1, dt_h):
    """Times (hours since EPOCH) every dt_h from month (y0, m0) to the end of month (y1, m1)."""
    a, b = hours(month_start(y0, m0)), hours(month_start(y1, m1 + 1))
    return a + dt_h * np.arange(int(round((b - a) / dt_h)))


def sea(rng, t, level):
    """Hm0, Te, Tp, direction (time, 1, 2) at times t (hours): an
    Ornstein-Uhlenbeck variable x (exact transition for any step,
    rho = exp(-dt / tau)) mapped through the normal and Weibull (k 1.6)
    distributions, times a seasonal factor and level(t)."""
    n = len(t)

    def ou(tau):
        x = np.empty(n)
        x[0] = rng.standard_normal()
        rho = np.exp(-np.diff(t) / tau)
        e = rng.standard_normal(n)
        for i in range(1, n):
            x[i] = rho[i - 1] * x[i - 1] + math.sqrt(1 - rho[i - 1] ** 2) * e[i]
        return x

    x, y = ou(TAU_H), ou(TAU_DIR_H)
    u = 0.5 * np.array([math.erfc(-v / math.sqrt(2)) for v in x])
    u = np.clip(u, 1e-12, 1 - 1e-12)
    doy = np.mod(t / 24.0, 365.25)
    season = 1.0 + 0.3 * np.cos(2 * np.pi * (doy - 20.0) / 365.25)
    base = 0.25 + 1.3 * season * level(t) * (-np.log1p(-u)) ** (1 / 1.6)
    hm0 = base[:, None, None] * CELL_SCALE[None, None, :] * np.exp(0.03 * rng.standard_normal((n, 1, 2)))
    te = np.maximum(3.5 + 2.4 * np.sqrt(hm0) + 0.35 * rng.standard_normal((n, 1, 2)), 2.0)
    tp = te / 0.88
    wdir = np.mod(250.0 + 35.0 * y[:, None, None] + 8.0 * rng.standard_normal((n, 1, 2)), 360.0)
    return hm0, te, tp, wdir


def write(path, what, t, units, hm0, te, tp, wdir, missing=()):
    """One CF file; t in hours since EPOCH, written in units (hours, minutes
    or seconds since a date); missing: (step, cell) pairs of Hm0 left out."""
    unit, _, ref = units.partition(" since ")
    scale = {"hours": 1.0, "minutes": 60.0, "seconds": 3600.0}[unit]
    off = hours(np.datetime64(ref.replace(" ", "T"), "s"))
    with netCDF4.Dataset(path, "w", format="NETCDF3_CLASSIC") as ds:
        ds.title = "swellgrid time-weighting test fixture"
        ds.synthetic = "yes"
        ds.comment = "Invented, synthetic data for software tests only; describes no real place. " + what
        ds.Conventions = "CF-1.8"
        ds.createDimension("time", len(t))
        ds.createDimension("lat", 1)
        ds.createDimension("lon", 2)
        v = ds.createVariable("time", "f8", ("time",))
        v.standard_name, v.units, v.calendar = "time", units, "standard"
        v[:] = (t - off) * scale
        v = ds.createVariable("lat", "f8", ("lat",))
        v.standard_name, v.units = "latitude", "degrees_north"
        v[:] = LAT
        v = ds.createVariable("lon", "f8", ("lon",))
        v.standard_name, v.units = "longitude", "degrees_east"
        v[:] = LON
        v = ds.createVariable("depth", "f4", ("lat", "lon"))
        v.standard_name, v.units, v.positive = "sea_floor_depth_below_sea_surface", "m", "down"
        v[:] = DEPTH
        for name, std, unit_, data in [
            ("hs", "sea_surface_wave_significant_height", "m", hm0),
            ("te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
            ("tp", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s", tp),
            ("mwd", "sea_surface_wave_from_direction", "degree", wdir),
        ]:
            v = ds.createVariable(name, "f4", ("time", "lat", "lon"), fill_value=np.float32(-999.0))
            v.standard_name, v.units = std, unit_
            d = np.ma.masked_array(data.astype("f4"), mask=np.zeros(data.shape, bool))
            if name == "hs":
                for k, c in missing:
                    d.mask[k, 0, c] = True
            v[:] = d


def monthly_files(out, prefix, what, t, units_of, fields, extra_next=False, override=None, missing=()):
    """Writes one file per calendar month of t. extra_next: each file also
    holds the first step of the next month (a shared boundary step);
    override(path, k, fields_copy) may change a file's own copy of a step;
    missing: times (hours) whose Hm0 of cell 0 is missing in every file."""
    mon = (EPOCH + (t * 3600).astype("timedelta64[s]")).astype("datetime64[M]")
    for mk in np.unique(mon):
        idx = np.nonzero(mon == mk)[0]
        if extra_next and idx[-1] + 1 < len(t):
            idx = np.append(idx, idx[-1] + 1)
        y, m = int(str(mk)[:4]), int(str(mk)[5:7])
        path = os.path.join(out, "%s_%04d-%02d.nc" % (prefix, y, m))
        f = [x[idx].copy() for x in fields]
        if override:
            override(y, m, t[idx], f)
        miss = [(k, 0) for k, tk in enumerate(t[idx]) if tk in missing]
        write(path, what, t[idx], units_of(y, m), *f, missing=miss)


def main():
    for name in FIXTURES:
        d = os.path.join(HERE, name)
        shutil.rmtree(d, ignore_errors=True)
        os.makedirs(d)

    # a: 3-hourly 2001-2002, hourly 2003 (a newer run with higher seas)
    rng = np.random.default_rng(27001)
    t = np.concatenate([regular(2001, 1, 2002, 12, 3.0), regular(2003, 1, 2003, 12, 1.0)])
    f = sea(rng, t, lambda x: np.where(x >= hours(month_start(2003, 1)), 1.25, 1.0))
    monthly_files(os.path.join(HERE, "a_step_change"), "tw_a", FIXTURES["a_step_change"], t,
                  lambda y, m: "hours since 2001-01-01 00:00:00" if y < 2003 else "seconds since 2003-01-01 00:00:00", f)

    # b: hourly 2001 with April, May and September 3-hourly, and three gaps:
    # 31 March (24 h, just before the change to 3-hourly), 15 September 12:00
    # (one 3-hourly step) and 10 July 05:00-06:00 (two hourly steps)
    rng = np.random.default_rng(27002)
    t = np.concatenate([regular(2001, m, 2001, m, 3.0 if m in (4, 5, 9) else 1.0) for m in range(1, 13)])
    drop = ((t >= hours(month_start(2001, 3)) + 30 * 24) & (t < hours(month_start(2001, 4)))) | \
        (t == hours(month_start(2001, 9)) + 14 * 24 + 12) | \
        ((t >= hours(month_start(2001, 7)) + 9 * 24 + 5) & (t <= hours(month_start(2001, 7)) + 9 * 24 + 6))
    t = t[~drop]
    f = sea(rng, t, lambda x: np.ones_like(x))
    monthly_files(os.path.join(HERE, "b_coarse_months"), "tw_b", FIXTURES["b_coarse_months"], t,
                  lambda y, m: "hours since 2001-01-01 00:00:00", f)

    # c: January 3-hourly, then 1.5 h and 3 h alternating to the end of April
    rng = np.random.default_rng(27003)
    t = list(regular(2001, 1, 2001, 1, 3.0))
    x, end, k = hours(month_start(2001, 2)), hours(month_start(2001, 5)), 0
    while x < end:
        t.append(x)
        x += 1.5 if k % 2 == 0 else 3.0
        k += 1
    t = np.array(t)
    f = sea(rng, t, lambda x: np.ones_like(x))
    monthly_files(os.path.join(HERE, "c_mixed_steps"), "tw_c", FIXTURES["c_mixed_steps"], t,
                  lambda y, m: "minutes since 2001-01-01 00:00:00", f)

    # d and e: January-April hourly, each file repeating the next month's first step
    rng = np.random.default_rng(27004)
    t = regular(2001, 1, 2001, 4, 1.0)
    f = sea(rng, t, lambda x: np.ones_like(x))
    feb1 = hours(month_start(2001, 2))
    monthly_files(os.path.join(HERE, "d_dup_equal"), "tw_d", FIXTURES["d_dup_equal"], t,
                  lambda y, m: "hours since 2001-01-01 00:00:00", f, extra_next=True, missing={feb1})
    mar1 = hours(month_start(2001, 3))

    def storm(y, m, tt, fl):
        # the February file's copy of 2001-03-01 00:00: a storm sea state
        if (y, m) == (2001, 2):
            k = int(np.nonzero(tt == mar1)[0][0])
            fl[0][k] = [[8.5, 10.5]]
            fl[1][k] += 3.0
            fl[2][k] = fl[1][k] / 0.88
            fl[3][k] = np.mod(fl[3][k] + 90.0, 360.0)
    monthly_files(os.path.join(HERE, "e_dup_differ"), "tw_e", FIXTURES["e_dup_differ"], t,
                  lambda y, m: "hours since 2001-01-01 00:00:00", f, extra_next=True, override=storm, missing={feb1})

    for v, (d, policy) in VARIANTS.items():
        with open(os.path.join(HERE, "spec_%s.toml" % v), "w") as fh:
            fh.write(SPEC % {"v": v, "what": FIXTURES[d], "dir": d,
                             "dup": "" if policy is None else 'duplicate_steps = "%s"\n' % policy})


SPEC = """# Time-weighting check %(v)s (pipelines/engine/timeweight_test.go), written by
# make_fixtures.py: %(what)s.
# Invented, synthetic data.
[input]
paths = ["%(dir)s"]
%(dup)s
[depth]
source = "file"

[statistics]
percentiles = [10.0, 50.0, 90.0, 99.0]

[extremes]
return_periods_y = [2.0, 5.0, 10.0]

[design]
enabled = false

[[device]]
name = "wec_a"
power_matrix = "../e2e/device_a.csv"
lookup = "bin"

[[device]]
name = "wec_b"
power_matrix = "../e2e/device_b.csv"
lookup = "bin"

[contours]
columns = []

[output]
dir = "out"
report = false
netcdf = false
geopackage = false
"""

if __name__ == "__main__":
    main()
