#!/usr/bin/python3
"""Check every GeoJSON layer of RUN/contours with Debian's python3-shapely
(GEOS) and for RFC 7946 (the rules of testdata/dateline/check_layers.py's
rfc_problems: positions in range, no segment longer than 180 degrees of
longitude, closed rings, right-hand rule), and compare each feature with the
same feature of TWIN (a run of the same values on a plain lon/lat grid):
area of the symmetric difference (polygons) or Hausdorff distance (lines).

usage: check_contours.py RUN TWIN   (prints one JSON list)
"""
import json
import os
import sys

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "dateline"))
from check_layers import rfc_problems, compare  # noqa: E402
from shapely.geometry import shape  # noqa: E402
from shapely.validation import explain_validity  # noqa: E402

run, twin = sys.argv[1], sys.argv[2]
out = []
d = os.path.join(run, "contours")
for name in sorted(os.listdir(d)):
    fc = json.load(open(os.path.join(d, name)))
    ft_twin = json.load(open(os.path.join(twin, "contours", name)))["features"]
    for k, ft in enumerate(fc["features"]):
        g = shape(ft["geometry"])
        diff, scale = compare(g, shape(ft_twin[k]["geometry"])) if k < len(ft_twin) else (float("inf"), 0.0)
        out.append({"file": name, "feature": k, "valid": g.is_valid,
                    "why": "" if g.is_valid else explain_validity(g),
                    "rfc": rfc_problems(ft["geometry"]), "diff": diff, "scale": scale,
                    "twin_features": len(ft_twin), "features": len(fc["features"])})
print(json.dumps(out))
