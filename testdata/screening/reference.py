#!/usr/bin/python3
"""Reference values for grid's geodesy and point-in-polygon tests
(grid/screening_ref_test.go), from Debian's python3-pyproj (Geod, Karney 2013
geodesics of GeographicLib on WGS 84) and python3-shapely (GEOS), on
fixture.json. Run: /usr/bin/python3 reference.py > reference.json

Conventions (those of grid): edges are straight in lon/lat (RFC 7946 3.1.1).
- covers: shapely Polygon.covers (boundary counts as inside).
- distance to a layer: 0 when a polygon covers the point; else the minimum of
  Geod.inv from the point to points densified along every lon/lat straight
  segment (4001 per segment), refined by scipy's bounded scalar minimiser.
- ring area: Geod.polygon_area_perimeter of the ring with each edge
  densified into 4000 lon/lat straight pieces (geodesic pieces converge to
  the lon/lat straight edge as O(1/n^2)).
"""
import json, sys
import numpy as np
from pyproj import Geod
from scipy.optimize import minimize_scalar
from shapely.geometry import Polygon, MultiPolygon, Point

g = Geod(ellps="WGS84")
fx = json.load(open(sys.argv[1] if len(sys.argv) > 1 else "fixture.json"))

def poly(rings):
    return Polygon(rings[0], rings[1:])

shapes = {"holey": poly(fx["polygons"]["holey"]),
          "multi": MultiPolygon([poly(p) for p in fx["polygons"]["multi"]]),
          "concave": poly(fx["polygons"]["concave"])}

out = {"source": "pyproj %s (Geod ellps=WGS84), shapely %s (GEOS %s)" % (
    __import__("pyproj").__version__, __import__("shapely").__version__,
    ".".join(map(str, __import__("shapely").geos_version_tuple if hasattr(__import__("shapely"), "geos_version_tuple") else __import__("shapely.geos", fromlist=["x"]).geos_version)))}

inv = []
for lon1, lat1, lon2, lat2 in fx["pairs"]:
    _, _, d = g.inv(lon1, lat1, lon2, lat2)
    inv.append(d)
out["inverse_m"] = inv

out["covers"] = {k: [bool(s.covers(Point(p))) for p in fx["points"]] for k, s in shapes.items()}

def seg_dist(p, a, b):
    t = np.linspace(0, 1, 4001)
    lon = a[0] + t * (b[0] - a[0]); lat = a[1] + t * (b[1] - a[1])
    _, _, d = g.inv(np.full_like(t, p[0]), np.full_like(t, p[1]), lon, lat)
    k = int(np.argmin(d))
    lo, hi = t[max(k - 1, 0)], t[min(k + 1, len(t) - 1)]
    f = lambda s: g.inv(p[0], p[1], a[0] + s * (b[0] - a[0]), a[1] + s * (b[1] - a[1]))[2]
    r = minimize_scalar(f, bounds=(lo, hi), method="bounded", options={"xatol": 1e-12})
    return float(min(d[k], r.fun))

def lines_of(shape):
    if isinstance(shape, Polygon):
        return [list(shape.exterior.coords)] + [list(i.coords) for i in shape.interiors]
    return [l for p in shape.geoms for l in lines_of(p)]

def layer_dist(p, lines, pts=(), polys=None):
    if polys is not None and polys.covers(Point(p)):
        return 0.0
    best = float("inf")
    for q in pts:
        best = min(best, g.inv(p[0], p[1], q[0], q[1])[2])
    for l in lines:
        for a, b in zip(l[:-1], l[1:]):
            best = min(best, seg_dist(p, a, b))
    return best

dist = {}
for k, s in shapes.items():
    dist[k] = [layer_dist(p, lines_of(s), polys=s) for p in fx["points"]]
dist["coast"] = [layer_dist(p, fx["lines"]["coast"]) for p in fx["points"]]
dist["ports"] = [layer_dist(p, [], pts=fx["ports"]) for p in fx["points"]]
out["distance_m"] = dist

areas = []
for r in fx["rings"]:
    lon, lat = [], []
    for a, b in zip(r[:-1], r[1:]):
        t = np.linspace(0, 1, 4001)[:-1]
        lon.extend(a[0] + t * (b[0] - a[0])); lat.extend(a[1] + t * (b[1] - a[1]))
    area, _ = g.polygon_area_perimeter(lon, lat)
    areas.append(abs(area))
out["ring_area_m2"] = areas

# cells of a regular grid: edges at the midpoints between axis values, the
# outer edges half a spacing beyond the end values (common practice); each
# cell a lon/lat box, its area as the rings above; cell-id order is rows of
# ascending latitude, each of ascending longitude
def edges(x):
    x = sorted(x)
    e = [x[0] - (x[1] - x[0]) / 2] + [(a + b) / 2 for a, b in zip(x[:-1], x[1:])] + [x[-1] + (x[-1] - x[-2]) / 2]
    return e
xe, ye = edges(fx["grid"]["lon"]), edges(fx["grid"]["lat"])
cells = []
for j in range(len(ye) - 1):
    for i in range(len(xe) - 1):
        lon, lat = [], []
        box = [(xe[i], ye[j]), (xe[i + 1], ye[j]), (xe[i + 1], ye[j + 1]), (xe[i], ye[j + 1]), (xe[i], ye[j])]
        for a, b in zip(box[:-1], box[1:]):
            t = np.linspace(0, 1, 4001)[:-1]
            lon.extend(a[0] + t * (b[0] - a[0])); lat.extend(a[1] + t * (b[1] - a[1]))
        cells.append(abs(g.polygon_area_perimeter(lon, lat)[0]))
out["cell_area_m2"] = cells
json.dump(out, sys.stdout, indent=1)
print()
