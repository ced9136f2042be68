#!/usr/bin/python3
"""Open every layer of a run's atlas.gpkg in QGIS (Debian's python3-qgis,
headless: QT_QPA_PLATFORM=offscreen) with its default style as QGIS loads it
from the layer_styles table, and report as JSON, per layer: whether it is
valid, the renderer QGIS built, whether labels are on and their expression,
and per feature the rules whose filter QGIS evaluates true and their colour.
The colour a feature should have is computed here independently: matplotlib's
viridis (Debian's python3-matplotlib, 256 entries, bytes=True) over the
column's range on the cells with a value, at the middle of the feature's band
[lower, upper) (an open band at its finite bound); for a footprint, the band
of contours/<column>.bands.geojson holding the cell's value. The same is done
for the OGC SLD in styleSLD, loaded by QGIS's own SLD reader. The bands and
isolines of the main column are rendered to a PNG kept at argv[3].

usage: qgis_styles.py RUN_DIR MAIN_COLUMN PNG
"""
import json, os, sqlite3, sys, tempfile
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
import matplotlib
from qgis.core import (QgsApplication, QgsVectorLayer, QgsExpression, QgsExpressionContext,
                       QgsExpressionContextUtils, QgsMapSettings, QgsMapRendererSequentialJob, QgsRenderContext)
from qgis.PyQt.QtCore import QSize
from qgis.PyQt.QtGui import QColor

run, main, png = sys.argv[1], sys.argv[2], sys.argv[3]
gp = os.path.join(run, "atlas.gpkg")
app = QgsApplication([], False)
app.initQgis()
viridis = matplotlib.colormaps["viridis"]

def colour(v, lo, hi):
    # matplotlib's ListedColormap on [lo, hi]: entry floor((v-lo)/(hi-lo)*256) clamped
    x = 0.5 if hi == lo else (min(max(v, lo), hi) - lo) / (hi - lo)
    r, g, b, _ = viridis(min(int(x * 256), 255), bytes=True)
    return "#%02x%02x%02x" % (r, g, b)

cells = QgsVectorLayer(gp + "|layername=cells", "cells", "ogr")
def col_range(col):
    if col.startswith("lcoe_per_mwh_"):
        # a screening scenario's levelised cost is not a column of cells:
        # its range from atlas.nc's variable of it (python3-netcdf4)
        import netCDF4, numpy
        with netCDF4.Dataset(os.path.join(run, "atlas.nc")) as ds:
            v = numpy.ma.filled(ds.variables[col][:].astype(float), numpy.nan)
        v = v[numpy.isfinite(v)]
        return (float(v.min()), float(v.max())) if v.size else (None, None)
    vals = [f[col] for f in cells.getFeatures() if f[col] is not None and f[col] == f[col]]
    vals = [float(v) for v in vals if not hasattr(v, "isNull") or not v.isNull()]
    return (min(vals), max(vals)) if vals else (None, None)

def mid(lo_b, hi_b):
    if lo_b is None: return hi_b
    if hi_b is None: return lo_b
    return (lo_b + hi_b) / 2

def num(v):
    if v is None or (hasattr(v, "isNull") and v.isNull()): return None
    return float(v)

def rules_of(layer):
    r = layer.renderer()
    if r.type() != "RuleRenderer":
        return None
    return [(c.label(), c.filterExpression(), c.symbol().color().name()) for c in r.rootRule().children()]

def matches(layer, rules):
    ctx = QgsExpressionContext(QgsExpressionContextUtils.globalProjectLayerScopes(layer))
    exprs = [QgsExpression(f) for (_, f, _) in rules]
    out = []
    for f in layer.getFeatures():
        ctx.setFeature(f)
        out.append([i for i, e in enumerate(exprs) if e.evaluate(ctx)])
    return out

con = sqlite3.connect(gp)
sld = dict(con.execute("select f_table_name, styleSLD from layer_styles").fetchall())
report = {"layers": {}}
names = [r[0] for r in con.execute("select table_name from gpkg_contents where data_type='features' order by table_name")]
bands = {}
for name in names:
    lyr = QgsVectorLayer(gp + "|layername=" + name, name, "ogr")
    rec = {"valid": lyr.isValid(), "features": lyr.featureCount(), "renderer": lyr.renderer().type(),
           "labels": bool(lyr.labelsEnabled()), "label_expr": lyr.labeling().settings().fieldName if lyr.labeling() else ""}
    rules = rules_of(lyr)
    if rules is not None:
        rec["rules"] = [{"label": l, "filter": f, "colour": c} for (l, f, c) in rules]
        rec["matched"] = matches(lyr, rules)
        if name in sld:
            s = QgsVectorLayer(gp + "|layername=" + name, name + "_sld", "ogr")
            with tempfile.NamedTemporaryFile("w", suffix=".sld", delete=False) as fh:
                fh.write(sld[name]); path = fh.name
            msg, ok = s.loadSldStyle(path)
            os.unlink(path)
            srules = rules_of(s) or []
            rec["sld_ok"] = bool(ok)
            rec["sld_rules"] = [{"label": l, "colour": c} for (l, _, c) in srules]
            rec["sld_matched"] = matches(s, srules) if srules else []
    if name.startswith("bands_"):
        col = name[len("bands_"):]
        lo, hi = col_range(col)
        feats = [(num(f["lower"]), num(f["upper"])) for f in lyr.getFeatures()]
        bands[col] = feats
        rec["expected"] = [colour(mid(a, b), lo, hi) for (a, b) in feats]
    report["layers"][name] = rec

# footprints: the band of the main column holding each cell's value
fp = report["layers"].get("cell_footprints")
if fp is not None and main in bands:
    lo, hi = col_range(main)
    exp = []
    lyr = QgsVectorLayer(gp + "|layername=cell_footprints", "fp", "ogr")
    for f in lyr.getFeatures():
        v = num(f[main])
        if v is None:
            exp.append(None); continue
        c = None
        for (a, b) in bands[main]:
            if (a is None or v >= a) and (b is None or v < b):
                c = colour(mid(a, b), lo, hi)
        exp.append(c)
    fp["expected"] = exp

# render the main column's bands with their isolines
ls = [QgsVectorLayer(gp + "|layername=" + n, n, "ogr") for n in ("isolines_" + main, "bands_" + main)]
ms = QgsMapSettings()
ms.setLayers(ls)
ms.setDestinationCrs(ls[1].crs())
ms.setExtent(ls[1].extent())
ms.setOutputSize(QSize(640, 480))
ms.setBackgroundColor(QColor(255, 255, 255))
job = QgsMapRendererSequentialJob(ms)
job.start(); job.waitForFinished()
img = job.renderedImage()
img.save(png)
seen = {}
for x in range(0, 640, 4):
    for y in range(0, 480, 4):
        n = img.pixelColor(x, y).name()
        seen[n] = seen.get(n, 0) + 1
report["render"] = {"png": png, "colours": seen}
print(json.dumps(report))
