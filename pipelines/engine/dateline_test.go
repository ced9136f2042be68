package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"

	"swellgrid/export/contract"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/inspect"
	"swellgrid/pipelines/runspec"
)

// The date-line checks (issue 31, longitude wrap): a Pacific grid across
// 180 degrees, stored 0..360 (pacific_0360) and -180..180 with the jump
// inside the axis and latitude descending (pacific_pm180), and the same
// values on the same grid 170 degrees west (away), from
// testdata/dateline (python3-netcdf4; invented, synthetic data, 9 x 4
// cells, three months of 6-hourly bulk values, an energetic patch on the
// 180-degree column; a screening scenario with a reserve polygon and a port
// point beside 180 degrees). Each run must end with exit 0; its tables
// equal the numpy/pyproj/shapely reference of testdata/dateline/reference.py
// and those of the run away from the date line; its GeoJSON layers are
// valid under GEOS and conform to RFC 7946 and, joined across 180 degrees,
// equal the layers away from it (testdata/dateline/check_layers.py, python3-
// shapely); atlas.nc has the regular geotransform GDAL reads (gdalinfo) and
// the patch in one piece (gdallocationinfo); atlas.gpkg and the report's
// maps are in the 0..360 frame, one piece; the manifest and inspect give
// the true extent (RFC 7946 section 5.2: west > east).

var dlFixtures = []string{"pacific_0360", "pacific_pm180", "away"}

var dlRuns struct {
	sync.Once
	dir  string
	out  map[string]string
	errs map[string]error
}

// dlRun runs the three date-line specs once for the tests of this file.
func dlRun(t *testing.T) map[string]string {
	t.Helper()
	dlRuns.Do(func() {
		dlRuns.out, dlRuns.errs = map[string]string{}, map[string]error{}
		var err error
		if dlRuns.dir, err = os.MkdirTemp("", "swellgrid-dateline-"); err != nil {
			dlRuns.errs["tmp"] = err
			return
		}
		for _, f := range dlFixtures {
			s, err := runspec.LoadSpec("../../testdata/dateline/spec_" + f + ".toml")
			if err != nil {
				dlRuns.errs[f] = err
				continue
			}
			s.Output.Dir = filepath.Join(dlRuns.dir, f)
			s.Run.Workers = 2
			_, err = Run(context.Background(), s, Options{Version: "test"})
			dlRuns.out[f], dlRuns.errs[f] = s.Output.Dir, err
		}
	})
	for f, err := range dlRuns.errs {
		if err != nil {
			t.Fatalf("run of spec_%s.toml: %v (exit code %d, want 0)", f, err, fault.ExitCode(err))
		}
	}
	return dlRuns.out
}

type dlRef struct {
	BBox     [4]float64         `json:"bbox"`
	LonFrame string             `json:"lon_frame"`
	GeoRaw   map[string]float64 `json:"geotransform"`
	Cells    []map[string]any   `json:"cells"`
}

func readDLRef(t *testing.T, name string) *dlRef {
	t.Helper()
	var r dlRef
	readRef(t, "../../testdata/dateline/reference_"+name+".json", &r)
	if len(r.Cells) != 36 {
		t.Fatalf("reference_%s.json has %d cells: rerun testdata/dateline/reference.py", name, len(r.Cells))
	}
	return &r
}

// TestDateLineTables: every run ends with exit 0; cells.parquet and
// screening.parquet equal the numpy/pyproj/shapely reference, the manifest
// gives the reference's extent and frame, and every table of the two
// Pacific runs equals the run away from the date line (lon apart).
func TestDateLineTables(t *testing.T) {
	out := dlRun(t)
	power := tol{1.0 / 32 / 1000 * 1.02, 1e-6} // kW/m: 1e-6, or half of the 1/16 W/m the state sums J in (as timeweight_test.go)
	mean := tol{0x1p-21, 1e-6}                 // Hm0, Te: 1e-6, or half of 2^-20 m or s
	for _, f := range dlFixtures {
		ref := readDLRef(t, f)
		cells, err := parquetread.Columns(filepath.Join(out[f], "cells.parquet"))
		if err != nil {
			t.Fatal(err)
		}
		scr, err := parquetread.Columns(filepath.Join(out[f], "screening.parquet"))
		if err != nil {
			t.Fatal(err)
		}
		w := worst{}
		for i, rc := range ref.Cells {
			for col, tl := range map[string]tol{"lon": exact, "lat": exact, "hm0_mean_m": mean, "te_mean_s": mean, "power_mean_kw_m": power} {
				g, want := asFloat(cells[col][i]), asFloat(rc[col])
				w.see(col, g, want, tl)
				if !near(g, want, tl) {
					t.Errorf("%s cell %d: %s = %.10g, numpy %.10g", f, i, col, g, want)
				}
			}
			if l := asFloat(cells["lon"][i]); l < -180 || l >= 180 {
				t.Errorf("%s cell %d: lon %v outside [-180, 180) (cells.parquet's schema)", f, i, l)
			}
			// screening: areas against pyproj's geodesic polygon area of the
			// densified box (1e-8, as grid/screening_ref_test.go), distances
			// against Geod.inv (Vincenty and Karney agree to 0.1 mm), pass
			// as the reference decides it from its own numbers
			for col, tl := range map[string]tol{"area_km2": {0, 1e-8}, "dist_port_km": {1e-6, 0}} {
				g, want := asFloat(scr[col][i]), asFloat(rc[col])
				w.see(col, g, want, tl)
				if !near(g, want, tl) {
					t.Errorf("%s cell %d: screening %s = %.12g, pyproj %.12g", f, i, col, g, want)
				}
			}
			if scr["pass"][i] != rc["pass"] {
				t.Errorf("%s cell %d (lon %v): pass %v, reference %v (in reserve %v, %v km from the port)", f, i, rc["lon"], scr["pass"][i], rc["pass"], rc["in_reserve"], rc["dist_port_km"])
			}
		}
		w.log(t, f)
		var m contract.Manifest
		b, _ := os.ReadFile(filepath.Join(out[f], "manifest.json"))
		json.Unmarshal(b, &m)
		if m.Grid.BBox != ref.BBox || m.Grid.LonFrame != ref.LonFrame {
			t.Errorf("%s: manifest grid bbox %v frame %q, want %v %q (RFC 7946 5.2)", f, m.Grid.BBox, m.Grid.LonFrame, ref.BBox, ref.LonFrame)
		}
		for _, w := range m.Warnings {
			if strings.Contains(w, "contour") {
				t.Errorf("%s: warning %q", f, w)
			}
		}
	}
	// every table of the Pacific runs equals the run away from the date line
	away := out["away"]
	files, _ := filepath.Glob(filepath.Join(away, "*.parquet"))
	if len(files) < 8 {
		t.Fatalf("the run away from the date line wrote %d tables", len(files))
	}
	for _, f := range dlFixtures[:2] {
		largest := 0.0
		for _, p := range files {
			name := filepath.Base(p)
			want, err := parquetread.Columns(p)
			if err != nil {
				t.Fatal(err)
			}
			got, err := parquetread.Columns(filepath.Join(out[f], name))
			if err != nil {
				t.Fatal(err)
			}
			cols := make([]string, 0, len(want))
			for c := range want {
				cols = append(cols, c)
			}
			sort.Strings(cols)
			for _, c := range cols {
				if len(got[c]) != len(want[c]) {
					t.Errorf("%s %s: column %s has %d rows, away %d", f, name, c, len(got[c]), len(want[c]))
					continue
				}
				for i := range want[c] {
					a, b := got[c][i], want[c][i]
					switch {
					case name == "cells.parquet" && c == "geometry":
						continue
					case name == "cells.parquet" && c == "lon":
						if a.(float64) != grid.NormLon(b.(float64)+170) {
							t.Errorf("%s cell %d: lon %v, away %v", f, i, a, b)
						}
						continue
					}
					fa, oka := a.(float64)
					fb, okb := b.(float64)
					if oka && okb {
						if d := math.Abs(fa - fb); d > 0 && !math.IsNaN(d) {
							largest = math.Max(largest, d/math.Max(math.Abs(fb), 1e-12))
						}
						if !near(fa, fb, tol{0, 1e-6}) {
							t.Errorf("%s %s row %d: %s = %v, away from the date line %v", f, name, i, c, fa, fb)
						}
						continue
					}
					if a != b {
						t.Errorf("%s %s row %d: %s = %v, away from the date line %v", f, name, i, c, a, b)
					}
				}
			}
		}
		t.Logf("%s: %d tables equal to the run away from the date line; largest relative difference %.3g", f, len(files), largest)
	}
}

// TestDateLineLayers: every GeoJSON layer of the Pacific runs is valid
// under GEOS and conforms to RFC 7946 (cut at 180 degrees), and, joined
// again, equals the layer away from the date line; every layer of
// atlas.gpkg is valid, in the 0..360 frame, in as many pieces as away from
// the date line and equal to it (check_layers.py, python3-shapely).
func TestDateLineLayers(t *testing.T) {
	out := dlRun(t)
	py := testtool.NeedPython(t, "shapely")
	for _, f := range dlFixtures[:2] {
		cmd := exec.Command(py, "../../testdata/dateline/check_layers.py", out[f], out["away"])
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		b, err := cmd.Output()
		if err != nil {
			t.Fatalf("check_layers.py: %v\n%s", err, stderr.String())
		}
		var rows []struct {
			File      string   `json:"file"`
			Feature   int      `json:"feature"`
			Valid     bool     `json:"valid"`
			Why       string   `json:"why"`
			RFC       []string `json:"rfc"`
			East      int      `json:"east"`
			MinLon    *float64 `json:"min_lon"`
			Parts     int      `json:"parts"`
			PartsAway int      `json:"parts_away"`
			Diff      float64  `json:"diff"`
			Scale     float64  `json:"scale"`
		}
		if err := json.Unmarshal(b, &rows); err != nil {
			t.Fatalf("check_layers.py output: %v", err)
		}
		geojson, gpkg, east := 0, map[string]bool{}, 0
		for _, r := range rows {
			what := f + " " + r.File + " feature " + strconv.Itoa(r.Feature)
			if !r.Valid {
				t.Errorf("%s: not valid under GEOS: %s", what, r.Why)
			}
			if len(r.RFC) > 0 {
				t.Errorf("%s: breaks RFC 7946: %s", what, strings.Join(r.RFC, "; "))
			}
			if r.Diff > 1e-9*math.Max(r.Scale, 1) {
				t.Errorf("%s: differs from the layer away from the date line by %g (of %g)", what, r.Diff, r.Scale)
			}
			if strings.HasPrefix(r.File, "contours/") {
				geojson++
				east += r.East
				continue
			}
			gpkg[r.File] = true
			if r.MinLon != nil && *r.MinLon < 171 {
				t.Errorf("%s: smallest longitude %v: not in the 0..360 frame of the grid (171..189)", what, *r.MinLon)
			}
			if r.Parts != r.PartsAway {
				t.Errorf("%s: %d parts, %d away from the date line (not joined across 180)", what, r.Parts, r.PartsAway)
			}
		}
		if geojson < 20 || len(gpkg) != 7 || east == 0 { // cells, cell_footprints, isolines and bands of two columns, a screening outline
			t.Errorf("%s: %d GeoJSON features (%d positions east of 180), %d gpkg layers: the check saw too little", f, geojson, east, len(gpkg))
		}
		t.Logf("%s: %d GeoJSON features valid and RFC 7946 (%d positions east of 180), %d atlas.gpkg layers in the 0..360 frame, all equal to the run away from the date line", f, geojson, east, len(gpkg))
	}
}

// TestDateLineRaster: GDAL (Debian's gdal-bin) finds the regular
// geotransform of the reference on atlas.nc (origin at the outer corner
// of the north-west cell, 171 E, pixel size 2 degrees), and the value at
// 180 degrees, 17 S is the mean power of the cell there in cells.parquet.
func TestDateLineRaster(t *testing.T) {
	out := dlRun(t)
	gi := testtool.Need(t, "gdalinfo", "gdal-bin")
	gl := testtool.Need(t, "gdallocationinfo", "gdal-bin")
	re := regexp.MustCompile(`Origin = \(([-0-9.e]+),([-0-9.e]+)\)\s+Pixel Size = \(([-0-9.e]+),([-0-9.e]+)\)`)
	for _, f := range dlFixtures {
		ref := readDLRef(t, f)
		src := "NETCDF:" + filepath.Join(out[f], "atlas.nc") + ":power_mean_kw_m"
		b, err := exec.Command(gi, src).CombinedOutput()
		if err != nil {
			t.Fatalf("gdalinfo: %v\n%s", err, b)
		}
		s := string(b)
		m := re.FindStringSubmatch(s)
		if m == nil || !strings.Contains(s, "Size is 9, 4") {
			t.Fatalf("%s: gdalinfo finds no geotransform of 9 x 4 pixels:\n%s", f, runcheck.FirstLines(s, 30))
		}
		g := ref.GeoRaw
		for k, w := range []float64{g["origin_x"], g["origin_y"], g["pixel_x"], g["pixel_y"]} {
			v, _ := strconv.ParseFloat(m[k+1], 64)
			if math.Abs(v-w) > 1e-9 {
				t.Errorf("%s: gdalinfo %s = %v, want %v", f, []string{"origin x", "origin y", "pixel x", "pixel y"}[k], v, w)
			}
		}
		if strings.Contains(s, "Warning") || strings.Contains(s, "ERROR") {
			t.Errorf("%s: gdalinfo complains:\n%s", f, s)
		}
		x := 180.0
		if f == "away" {
			x = 10
		}
		b, err = exec.Command(gl, "-valonly", "-geoloc", src, strconv.FormatFloat(x, 'f', -1, 64), "-17").CombinedOutput()
		if err != nil {
			t.Fatalf("gdallocationinfo: %v\n%s", err, b)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(string(b)), 64)
		var want float64
		for _, c := range ref.Cells {
			if asFloat(c["lat"]) == -17 && grid.NormLon(asFloat(c["lon"])) == grid.NormLon(x) {
				want = asFloat(c["power_mean_kw_m"])
			}
		}
		if err != nil || !near(v, want, tol{1.0 / 32 / 1000 * 1.02, 1e-6}) {
			t.Errorf("%s: atlas.nc at (%v, -17) = %q, want the cell's mean power %v", f, x, b, want)
		}
		t.Logf("%s: gdalinfo origin (%s, %s), pixel (%s, %s); power at (%v, -17) %v kW/m", f, m[1], m[2], m[3], m[4], x, v)
	}
}

// TestDateLineMapsAndInspect: the report's maps of the Pacific runs cover
// 171..189 degrees east in the 0..360 frame (one piece, not the globe);
// inspect gives the true extent (RFC 7946 5.2: west 172 > east -172) and
// says the grid crosses 180 degrees.
func TestDateLineMapsAndInspect(t *testing.T) {
	out := dlRun(t)
	re := regexp.MustCompile(`data-column="power_mean_kw_m"[^>]*data-extent="([^"]+)"`)
	for _, f := range dlFixtures[:2] {
		b, err := os.ReadFile(filepath.Join(out[f], "report", "index.html"))
		if err != nil {
			t.Fatal(err)
		}
		m := re.FindSubmatch(b)
		if m == nil {
			t.Fatalf("%s: no map of power_mean_kw_m with its extent in report/index.html", f)
		}
		var ext [4]float64
		for k, s := range strings.Fields(string(m[1])) {
			ext[k], _ = strconv.ParseFloat(s, 64)
		}
		if ext != [4]float64{171, -22, 189, -14} {
			t.Errorf("%s: map extent %v, want [171 -22 189 -14] (the cells' edges in the 0..360 frame)", f, ext)
		}
	}
	r, err := inspect.Inspect([]string{"../../testdata/dateline/pacific_pm180"}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Bounds != [4]float64{172, -21, -172, -15} || r.LonFrame != "0..360" {
		t.Errorf("inspect: extent %v frame %q, want [172 -21 -172 -15] 0..360", r.Bounds, r.LonFrame)
	}
	var sb strings.Builder
	r.WriteText(&sb)
	if !strings.Contains(sb.String(), "lon 172.0000 .. -172.0000, lat -21.0000 .. -15.0000 (across 180 degrees: lon 172.0000 .. 188.0000 in the frame 0..360)") {
		t.Errorf("inspect text:\n%s", sb.String())
	}
}

// TestDateLineReferenceReproduced reruns testdata/dateline/reference.py
// (required under CI=true) and compares its output with the committed
// references.
func TestDateLineReferenceReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy", "netCDF4", "pyproj", "shapely")
	tmp := t.TempDir()
	cmd := exec.Command(py, "reference.py", tmp)
	cmd.Dir = "../../testdata/dateline"
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("reference.py: %v\n%s", err, b)
	}
	for _, f := range dlFixtures {
		var a, b dlRef
		readRef(t, "../../testdata/dateline/reference_"+f+".json", &a)
		readRef(t, filepath.Join(tmp, "reference_"+f+".json"), &b)
		if a.BBox != b.BBox || len(a.Cells) != len(b.Cells) {
			t.Fatalf("%s: the committed reference differs from a new run of reference.py", f)
		}
		for i := range a.Cells {
			for k, v := range a.Cells[i] {
				if x, ok := v.(float64); ok {
					if !near(asFloat(b.Cells[i][k]), x, tol{0, 1e-12}) {
						t.Errorf("%s cell %d %s: committed %v, again %v", f, i, k, x, b.Cells[i][k])
					}
				} else if b.Cells[i][k] != v {
					t.Errorf("%s cell %d %s: committed %v, again %v", f, i, k, v, b.Cells[i][k])
				}
			}
		}
	}
}
