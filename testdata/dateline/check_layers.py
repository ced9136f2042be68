#!/usr/bin/python3
"""Checks of the layers of a date-line run (pipelines/engine/dateline_test.go) with
Debian's python3-shapely (GEOS) alone: every GeoJSON layer of RUN/contours
and every layer of RUN/atlas.gpkg, compared with the same layer of the run
AWAY on the same values 170 degrees west (away from the date line).

Usage: check_layers.py RUN AWAY   (prints one JSON list)

For each GeoJSON feature of RUN:
- valid: shapely is_valid (GEOS; explain_validity when not);
- rfc: RFC 7946 -- every position's longitude in [-180, 180] and latitude
  in [-90, 90] (3.1.1), no segment longer than 180 degrees of longitude
  (3.1.9), polygon rings closed with exterior rings anticlockwise and holes
  clockwise (3.1.6, right-hand rule);
- east: how many positions lie east of 180 degrees (negative longitude),
  so that the check sees the date line crossed;
- diff, scale: the feature, its parts east of 180 shifted by +360, against
  the AWAY feature shifted by +170: area of the symmetric difference
  (polygons) or Hausdorff distance (lines), and the area or length.
For each feature of each atlas.gpkg layer (GeoPackage binary header
stripped, ISO WKB read by shapely): valid, the smallest longitude (the
layer is in the 0..360 frame: none below 0), the number of polygons or
lines, the AWAY count, and diff/scale as above without any shift but +170.
"""
import json
import os
import sqlite3
import struct
import sys

from shapely import wkb
from shapely.affinity import translate
from shapely.geometry import shape, LineString, MultiLineString, MultiPolygon, Polygon, mapping
from shapely.ops import unary_union
from shapely.validation import explain_validity


def positions(geom):
    def walk(c):
        if isinstance(c[0], (int, float)):
            yield c
        else:
            for x in c:
                yield from walk(x)
    return list(walk(geom["coordinates"])) if geom["coordinates"] else []


def rfc_problems(geom):
    out = []
    for p in positions(geom):
        if not (-180 <= p[0] <= 180 and -90 <= p[1] <= 90):
            out.append("position %r out of range" % (p,))
    lines = []
    t = geom["type"]
    if t == "MultiLineString":
        lines = geom["coordinates"]
    elif t == "MultiPolygon":
        for poly in geom["coordinates"]:
            for k, ring in enumerate(poly):
                lines.append(ring)
                if ring[0] != ring[-1] or len(ring) < 4:
                    out.append("ring not closed")
                ccw = Polygon(ring).exterior.is_ccw
                if (k == 0) != ccw:
                    out.append("ring %d of a polygon is %s" % (k, "anticlockwise" if ccw else "clockwise"))
    for l in lines:
        for a, b in zip(l[:-1], l[1:]):
            if abs(a[0] - b[0]) > 180:
                out.append("segment %r-%r longer than 180 degrees of longitude" % (a, b))
    return out


def to_frame(g):
    """Parts of g with negative longitudes (east of 180) shifted by +360."""
    if isinstance(g, (MultiPolygon, MultiLineString)):
        parts = [translate(p, 360.0) if p.bounds[2] <= 0 else p for p in g.geoms]
        return unary_union(parts) if parts else g
    return g


def compare(a, b):
    if a.is_empty and b.is_empty:
        return 0.0, 0.0
    if a.geom_type in ("Polygon", "MultiPolygon"):
        return a.symmetric_difference(b).area, b.area
    return a.hausdorff_distance(b), b.length


def geojson_checks(run, away, out):
    d = os.path.join(run, "contours")
    for name in sorted(os.listdir(d)):
        fc = json.load(open(os.path.join(d, name)))
        fa = json.load(open(os.path.join(away, "contours", name)))
        for k, ft in enumerate(fc["features"]):
            g = shape(ft["geometry"])
            ga = translate(shape(fa["features"][k]["geometry"]), 170.0)
            diff, scale = compare(to_frame(g), ga)
            out.append({"file": "contours/" + name, "feature": k, "valid": g.is_valid,
                        "why": "" if g.is_valid else explain_validity(g),
                        "rfc": rfc_problems(ft["geometry"]),
                        "east": sum(1 for p in positions(ft["geometry"]) if p[0] < 0),
                        "diff": diff, "scale": scale})


def gpkg_geoms(path):
    con = sqlite3.connect(path)
    layers = [r[0] for r in con.execute("SELECT table_name FROM gpkg_geometry_columns ORDER BY table_name")]
    out = {}
    for l in layers:
        gs = []
        for (blob,) in con.execute('SELECT geom FROM "%s" ORDER BY fid' % l):
            flags = blob[3]
            env = {0: 0, 1: 32, 2: 48, 3: 48, 4: 64}[(flags >> 1) & 7]
            gs.append(wkb.loads(bytes(blob[8 + env:])))
        out[l] = gs
    con.close()
    return out


def gpkg_checks(run, away, out):
    a, b = gpkg_geoms(os.path.join(run, "atlas.gpkg")), gpkg_geoms(os.path.join(away, "atlas.gpkg"))
    for l in sorted(a):
        for k, g in enumerate(a[l]):
            ga = translate(b[l][k], 170.0)
            parts = len(g.geoms) if hasattr(g, "geoms") else 1
            parts_away = len(ga.geoms) if hasattr(ga, "geoms") else 1
            if g.geom_type == "Point":
                diff, scale = g.distance(ga), 1.0
            else:
                diff, scale = compare(g, ga)
            out.append({"file": "atlas.gpkg:" + l, "feature": k, "valid": g.is_valid,
                        "why": "" if g.is_valid else explain_validity(g),
                        "min_lon": g.bounds[0] if not g.is_empty else None,
                        "parts": parts, "parts_away": parts_away, "diff": diff, "scale": scale})


def main():
    run, away = sys.argv[1], sys.argv[2]
    out = []
    geojson_checks(run, away, out)
    gpkg_checks(run, away, out)
    json.dump(out, sys.stdout)


if __name__ == "__main__":
    main()
