#!/usr/bin/python3
"""Independent computation, with Debian's python3-netcdf4, python3-numpy
and python3-scipy (no swellgrid code), of what each file of
make_fixtures.py holds, read as it was written (its variant's "truth", not
its attributes, which may be wrong on purpose). Writes reference.json,
which pipelines/engine/conventions_e2e_test.go compares with runs on the files
that swellgrid reads (or is told how to read).

Each file's stored values are decoded as written:
  - densities stored as log10 or ln: S = 10^x or e^x;
  - densities per rad/s on a frequency axis in rad/s: f = omega / (2 pi),
    S(f) = 2 pi S(omega) (omega = 2 pi f; common practice, e.g.
    DNV-RP-C205 sec. 3.5, quoted from memory);
  - densities per degree on a direction axis in radians: theta_deg =
    theta_rad 180/pi, S per radian = S per degree x 180/pi;
  - directions stored as nautical "to": from = (to + 180) mod 360;
    Cartesian (counterclockwise from east, going to): from = (270 -
    theta_c) mod 360 (common practice);
then the record columns per station are computed by
testdata/spectral_cols/reference.py's station() (its docstring gives the
definitions: moments with numpy.gradient bin widths, J with group velocity
by scipy.optimize.brentq, the directional maximum by grid search refined by
scipy's bounded Brent, circular means), and dir_mean_deg_q01, the mean
direction with each step's rounded to 0.1 degree (dir_mean_rounded).
Run: /usr/bin/python3 testdata/conventions/reference.py [OUT.json]
"""
import importlib.util
import json
import math
import os
import sys

import netCDF4
import numpy as np
import scipy

HERE = os.path.dirname(os.path.abspath(__file__))

spec = importlib.util.spec_from_file_location("mk", os.path.join(HERE, "make_fixtures.py"))
mk = importlib.util.module_from_spec(spec)
spec.loader.exec_module(mk)
spec = importlib.util.spec_from_file_location("colsref", os.path.join(HERE, "..", "spectral_cols", "reference.py"))
colsref = importlib.util.module_from_spec(spec)
spec.loader.exec_module(colsref)


def decode(name, v):
    """The file's f (Hz), directions (nautical from, degrees or None), depth
    and S[t, station, f, theta] (m2 Hz-1 rad-1; 1-D: [..., 1]) as written."""
    with netCDF4.Dataset(os.path.join(HERE, name + ".nc")) as ds:
        x = ds["efth"][:].astype(float)
        f = ds["frequency"][:].astype(float)
        d = ds["direction"][:].astype(float) if "direction" in ds.variables else None
        depth = ds["depth"][:].astype(float)
    enc = v.get("enc", "linear")
    S = {"linear": x, "log10": 10.0 ** x, "ln": np.exp(x)}[enc]
    if v.get("freq") == "rad_s":
        f = f / (2 * math.pi)
    if v.get("basis") == "per_rad_s":
        S = S * 2 * math.pi
    if d is not None:
        if v.get("dir_units") == "rad":
            d = np.degrees(d)
        if v.get("per_degree"):
            S = S * 180 / math.pi
        conv = v.get("dir", "from")
        if conv == "to":
            d = (d + 180) % 360
        elif conv == "cartesian":
            d = (270 - d) % 360
        d = d % 360
    else:
        S = S[..., None]
    return f, d, depth, S


def dir_mean_rounded(f, d, S, df, dth):
    """The record's mean direction with each step's mean direction (first-
    order moments, as in station()) rounded to 0.1 degree first, the
    resolution at which swellgrid's per-cell state keeps directions
    (README "Methods"; round half up), so that a test can hold dir_mean_deg
    to 0.01 degree; None for 1-D spectra."""
    if d is None:
        return None
    whole = np.all(np.isnan(S), axis=(1, 2))
    good = np.isfinite(S) & (S >= 0)
    sc = np.where(good, S, 0.0)
    m0 = np.einsum("tij,i,j->t", sc, df, dth)
    ok = ~whole & (m0 > 0)
    th = np.radians(d)
    V = np.einsum("tij,i,j->tj", sc[ok], df, dth)
    mdir = np.degrees(np.arctan2(V @ np.sin(th), V @ np.cos(th))) % 360
    q = (np.floor(mdir * 10 + 0.5) / 10) % 360
    return colsref.circ_deg(np.ones_like(q), q)


def main():
    ref = {"source": "testdata/conventions/reference.py", "numpy": np.__version__, "scipy": scipy.__version__,
           "netCDF4": netCDF4.__version__, "variants": []}
    for name, v in mk.VARIANTS.items():
        f, d, depth, S = decode(name, v)
        df, dth = colsref.widths(f, d)
        cells = []
        for s in range(S.shape[1]):
            row = {"cell_id": s}
            row.update(colsref.station(f, d, float(depth[s]), S[:, s], df, dth))
            row["dir_mean_deg_q01"] = dir_mean_rounded(f, d, S[:, s], df, dth)
            cells.append(row)
        ref["variants"].append({"name": name, "path": "testdata/conventions/" + name + ".nc",
                                "truth": {k: v[k] for k in sorted(v) if k not in ("dir_ln", "dir_comment", "ln", "comment")},
                                "cells": cells})
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "reference.json")
    with open(out, "w") as fh:
        json.dump(ref, fh, indent=1, sort_keys=True)
        fh.write("\n")


if __name__ == "__main__":
    main()
