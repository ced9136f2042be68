package runcheck

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"testing"

	"swellgrid/internal/testtool"
)

// QGISRaster is what QGIS (Debian's python3-qgis) reports of an atlas.nc
// variable opened as a raster layer (testdata/gridmapping/qgis_raster.py).
type QGISRaster struct {
	Valid    bool      `json:"valid"`
	CRSValid bool      `json:"crs_valid"`
	WKT      string    `json:"crs_wkt"` // WKT2:2019
	Extent   []float64 `json:"extent"`  // xmin, ymin, xmax, ymax
	Width    int       `json:"width"`
	Height   int       `json:"height"`
	Colours  int       `json:"colours"` // distinct colours in the rendered picture
	PNG      string    `json:"-"`
}

// OpenInQGIS opens variable of the atlas.nc at path in QGIS, headless, and
// renders it to $TMPDIR/swellgrid-test-output/<shot>.png, kept for the
// note; it stops t (testtool.NeedPython) without python3-qgis.
func OpenInQGIS(t *testing.T, path, variable, shot string) QGISRaster {
	t.Helper()
	py := testtool.NeedPython(t, "qgis.core")
	_, here, _, _ := runtime.Caller(0)
	script := filepath.Join(filepath.Dir(here), "..", "..", "testdata", "gridmapping", "qgis_raster.py")
	png := filepath.Join(os.TempDir(), "swellgrid-test-output", shot+".png")
	os.MkdirAll(filepath.Dir(png), 0o755)
	cmd := exec.Command(py, script, path, variable, png)
	cmd.Env = append(os.Environ(), "QT_QPA_PLATFORM=offscreen", "XDG_RUNTIME_DIR="+t.TempDir())
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("qgis_raster.py %s: %v", path, err)
	}
	var q QGISRaster
	if err := json.Unmarshal(out, &q); err != nil {
		t.Fatalf("qgis_raster.py: %v\n%s", err, out)
	}
	q.PNG = png
	return q
}
