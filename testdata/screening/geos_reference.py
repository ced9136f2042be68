#!/usr/bin/python3
"""Reference values for grid/geos_test.go, from Debian's python3-shapely
(explain_validity, covers) and python3-pyproj (Geod.inv: Karney 2013
geodesics of GeographicLib on WGS 84), on geos_fixture.json (synthetic).
Run: cd testdata/screening && /usr/bin/python3 geos_reference.py > geos_reference.json

- validity: shapely.validation.explain_validity of each polygon, "Reason[x y]".
- across 180 degrees: covers is answered by shapely for the polygon given in
  0..360 ("shifted"), each point taken in 0..360 (lon % 360): an independent
  statement of what the cut layer means. Distances to the coast (cut at 180):
  the minimum of Geod.inv from the point to 20001 points densified along every
  lon/lat straight segment, refined by scipy's bounded scalar minimiser (as
  reference.py does); Geod.inv takes longitudes in any 360-degree frame.
"""
import json, sys
import numpy as np
from pyproj import Geod
from scipy.optimize import minimize_scalar
from shapely.geometry import Polygon, Point
from shapely.validation import explain_validity

fx = json.load(open("geos_fixture.json"))
g = Geod(ellps="WGS84")
out = {"source": "geos_reference.py: shapely %s explain_validity/covers, pyproj Geod.inv" % __import__("shapely").__version__,
       "validity": {}, "valid": {}}
for name, rings in fx["invalid"].items():
    out["validity"][name] = explain_validity(Polygon(rings[0], rings[1:]))
for name, rings in fx["valid"].items():
    out["valid"][name] = explain_validity(Polygon(rings[0], rings[1:]))

a = fx["across180"]
shifted = Polygon(a["shifted"][0])
out["covers180"] = [bool(shifted.covers(Point(lon % 360, lat))) for lon, lat in a["points"]]

def seg_dist(p, a_, b_):
    t = np.linspace(0, 1, 20001)
    lon = a_[0] + t * (b_[0] - a_[0]); lat = a_[1] + t * (b_[1] - a_[1])
    _, _, d = g.inv(np.full_like(t, p[0]), np.full_like(t, p[1]), lon, lat)
    k = int(np.argmin(d))
    lo, hi = t[max(k - 1, 0)], t[min(k + 1, len(t) - 1)]
    f = lambda s: g.inv(p[0], p[1], a_[0] + s * (b_[0] - a_[0]), a_[1] + s * (b_[1] - a_[1]))[2]
    r = minimize_scalar(f, bounds=(lo, hi), method="bounded", options={"xatol": 1e-12})
    return float(min(d[k], r.fun))

dist = []
for p in a["points"]:
    best = np.inf
    for line in a["coast"]:
        for i in range(len(line) - 1):
            best = min(best, seg_dist(p, line[i], line[i + 1]))
    dist.append(best)
out["coast_distance_m"] = dist
json.dump(out, sys.stdout, indent=1)
print()
