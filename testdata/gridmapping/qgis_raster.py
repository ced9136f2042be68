#!/usr/bin/python3
"""Open a variable of atlas.nc in QGIS (Debian's python3-qgis, headless:
QT_QPA_PLATFORM=offscreen) as a raster layer, as a desktop user would, and
report as JSON whether it is valid, its CRS (WKT and description), its
extent and size; render it to the PNG given and report how many distinct
colours the picture has (a blank layer has one).

usage: qgis_raster.py ATLAS.nc VARIABLE PNG
"""
import json, os, sys
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
from qgis.core import QgsApplication, QgsCoordinateReferenceSystem, QgsRasterLayer, QgsMapSettings, QgsMapRendererSequentialJob
from qgis.PyQt.QtCore import QSize
from qgis.PyQt.QtGui import QColor

path, var, png = sys.argv[1], sys.argv[2], sys.argv[3]
app = QgsApplication([], False)
app.initQgis()
lyr = QgsRasterLayer('NETCDF:"%s":%s' % (path, var), var, "gdal")
out = {"valid": lyr.isValid()}
if lyr.isValid():
    e = lyr.extent()
    crs = lyr.crs()
    out.update({"crs_wkt": crs.toWkt(QgsCoordinateReferenceSystem.WKT2_2019), "crs_description": crs.description(), "crs_valid": crs.isValid(),
                "extent": [e.xMinimum(), e.yMinimum(), e.xMaximum(), e.yMaximum()],
                "width": lyr.width(), "height": lyr.height()})
    ms = QgsMapSettings()
    ms.setLayers([lyr])
    ms.setDestinationCrs(crs)
    ms.setExtent(e)
    ms.setOutputSize(QSize(420, 300))
    ms.setBackgroundColor(QColor(255, 255, 255))
    job = QgsMapRendererSequentialJob(ms)
    job.start(); job.waitForFinished()
    img = job.renderedImage()
    img.save(png)
    seen = set()
    for x in range(0, 420, 3):
        for y in range(0, 300, 3):
            seen.add(img.pixelColor(x, y).name())
    out["colours"] = len(seen)
print(json.dumps(out))
