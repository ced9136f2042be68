#!/usr/bin/python3
"""Reference of the export route across the date line
(pipelines/engine/dateline_connection_test.go, issue 32): a regular grid of
4 x 3 invented cells whose columns run 179, 179.5, 180 and 180.5 degrees
east (stored as cells.parquet does, in [-180, 180): 179, 179.5, -180,
-179.5), and a connection layer of two invented points, one across the
date line from the western cells (-179.2 E, 50.8 N) and one far west
(175 E, 49 N). Invented, synthetic data: no real place.

Per cell, with Debian's python3-pyproj alone (Geod(ellps="WGS84").inv,
Karney 2013 geodesics of GeographicLib; no swellgrid code):
- dist_km: the geodesic to the nearest connection point;
- for each scenario: route_km = dist_km x route factor, loss_frac = fixed +
  per_km x route_km (the AC and DC common-practice defaults of
  stats/delivery, stated here again as numbers), delivered_mwh = aep x
  array factor x availability x (1 - loss_frac), with the invented
  aep_wec_mwh = 1000 + 10 i and availability_wec = 0.95 - 0.001 i of cell i.

Run: /usr/bin/python3 testdata/dateline/connection_reference.py > testdata/dateline/connection_reference.json
"""
import json
from pyproj import Geod

g = Geod(ellps="WGS84")
lons = [179.0, 179.5, -180.0, -179.5]
lats = [50.0, 50.5, 51.0]
ports = [[-179.2, 50.8], [175.0, 49.0]]
scenarios = [
    {"name": "ac_near", "export": "ac", "route_factor": 1.1, "fixed": 0.005, "per_km": 0.0003, "array_factor": 1.0},
    {"name": "dc_far", "export": "dc", "route_factor": 1.3, "fixed": 0.025, "per_km": 0.00003, "array_factor": 0.95},
]
cells = []
for j, la in enumerate(lats):
    for i, lo in enumerate(lons):
        k = j * len(lons) + i
        d = min(g.inv(lo, la, p[0], p[1])[2] for p in ports) / 1000.0
        aep, avail = 1000.0 + 10 * k, 0.95 - 0.001 * k
        row = {"cell_id": k, "lon": lo, "lat": la, "aep_wec_mwh": aep, "availability_wec": avail, "dist_km": d, "scenarios": {}}
        for s in scenarios:
            route = d * s["route_factor"]
            loss = s["fixed"] + s["per_km"] * route
            row["scenarios"][s["name"]] = {"route_km": route, "loss_frac": loss,
                                            "delivered_mwh": aep * s["array_factor"] * avail * (1 - loss)}
        cells.append(row)
json.dump({"synthetic": "yes", "comment": "Invented, synthetic cells and connection points for software tests only; no real place.",
           "nx": len(lons), "ny": len(lats), "ports": ports, "scenarios": scenarios, "cells": cells}, __import__("sys").stdout, indent=1)
print()
