#!/usr/bin/env python3
"""Independent validity check of polygon layers with GDAL/OGR + GEOS.

Usage: check_valid.py FILE.geojson ...
Prints one line per feature: "<file> <index> <geometry type> <valid 0/1> <area>"
and exits 0. Uses Debian python3-gdal (OGR Geometry.IsValid, backed by GEOS);
prints "NO-OSGEO" and exits 3 when the bindings are missing.
"""
import sys

try:
    from osgeo import ogr, gdal
except ImportError:
    print("NO-OSGEO")
    sys.exit(3)

gdal.UseExceptions()
gdal.PushErrorHandler("CPLQuietErrorHandler")
for path in sys.argv[1:]:
    ds = ogr.Open(path)
    layer = ds.GetLayer(0)
    for i, feat in enumerate(layer):
        g = feat.GetGeometryRef()
        if g is None or g.IsEmpty():
            print(path, i, "EMPTY", 1, 0.0)
            continue
        print(path, i, g.GetGeometryName(), 1 if g.IsValid() else 0, repr(g.GetArea()))
