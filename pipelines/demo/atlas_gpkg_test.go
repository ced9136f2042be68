package demo

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	"swellgrid/export/rundir"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
)

// ogrLayerJSON converts one layer of a GeoPackage to GeoJSON with ogr2ogr
// (Debian gdal-bin), full precision, and returns its features.
func ogrLayerJSON(t *testing.T, gp, layer string) []gjFeature {
	t.Helper()
	o2 := needTool(t, "ogr2ogr", "gdal-bin")
	out := filepath.Join(t.TempDir(), layer+".geojson")
	if b, err := exec.Command(o2, "-f", "GeoJSON", "-lco", "SIGNIFICANT_FIGURES=17", "-lco", "COORDINATE_PRECISION=15", out, gp, layer).CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr %s: %v\n%s", layer, err, b)
	}
	return readFeatures(t, out)
}

type gjFeature struct {
	Properties map[string]any `json:"properties"`
	Geometry   struct {
		Type        string          `json:"type"`
		Coordinates json.RawMessage `json:"coordinates"`
	} `json:"geometry"`
}

func readFeatures(t *testing.T, path string) []gjFeature {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []gjFeature `json:"features"`
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return fc.Features
}

// A layer of atlas.gpkg carries the same fields as its GeoJSON twin under
// contours/, with the same values feature by feature and the same types as
// GDAL reads them (ogrinfo, Debian gdal-bin): texts as String, the screening
// outline's cell count as Integer64, never Real.
func TestAtlasGpkgFieldsMatchGeoJSON(t *testing.T) {
	oi := needTool(t, "ogrinfo", "gdal-bin")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	gp := filepath.Join(run, "atlas.gpkg")
	files, _ := filepath.Glob(filepath.Join(run, "contours", "*.geojson"))
	if len(files) < 3 {
		t.Fatalf("only %d contour layers", len(files))
	}
	screening := 0
	for _, f := range files {
		base := strings.TrimSuffix(filepath.Base(f), ".geojson")
		layer := "isolines_" + base
		switch {
		case strings.HasPrefix(base, "screening_"):
			layer = base
			screening++
		case strings.HasSuffix(base, ".bands"):
			layer = "bands_" + strings.TrimSuffix(base, ".bands")
		}
		want := readFeatures(t, f)
		got := ogrLayerJSON(t, gp, layer)
		if len(got) != len(want) {
			t.Errorf("%s: %d features, %s has %d", layer, len(got), filepath.Base(f), len(want))
			continue
		}
		for k := range want {
			if !sameProps(got[k].Properties, want[k].Properties) {
				t.Errorf("%s feature %d: fields %v, GeoJSON %v", layer, k, got[k].Properties, want[k].Properties)
			}
		}
		out, err := exec.Command(oi, "-ro", "-so", gp, layer).CombinedOutput()
		if err != nil {
			t.Fatalf("ogrinfo %s: %v\n%s", layer, err, out)
		}
		types := map[string]string{}
		for _, m := range regexp.MustCompile(`(?m)^(\w+): (\w+)`).FindAllStringSubmatch(string(out), -1) {
			types[m[1]] = m[2]
		}
		for name, v := range want[0].Properties {
			wantType := "Real"
			switch v.(type) {
			case string:
				wantType = "String"
			}
			if name == "cells" {
				wantType = "Integer64"
			}
			if types[name] != wantType {
				t.Errorf("%s: field %s is %q in atlas.gpkg, want %s", layer, name, types[name], wantType)
			}
		}
	}
	if screening == 0 {
		t.Errorf("the demo's grid atlas has no screening outline to check")
	}
}

// sameProps compares two feature property maps: the same keys, numbers equal
// to 1e-12 relative (ogr2ogr prints 17 significant digits), others equal.
func sameProps(a, b map[string]any) bool {
	if len(a) != len(b) {
		return false
	}
	for k, x := range a {
		y, ok := b[k]
		if !ok {
			return false
		}
		fx, okx := x.(float64)
		fy, oky := y.(float64)
		if okx && oky {
			if math.Abs(fx-fy) > 1e-12*math.Max(1, math.Abs(fy)) {
				return false
			}
			continue
		}
		if x != y {
			return false
		}
	}
	return true
}

// The cells' footprints in atlas.gpkg: one polygon per cell in cell-id order
// with every column of cells.parquet, each the cell's rectangle with edges
// halfway between neighbouring centres (outer edges half a spacing beyond
// the last centre; common practice for cell-centred grids, as CF's
// cell bounds describe them), recomputed here from the cells' own lon/lat.
func TestAtlasGpkgFootprints(t *testing.T) {
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	cells := cellsOf(t, run)
	feats := ogrLayerJSON(t, filepath.Join(run, "atlas.gpkg"), "cell_footprints")
	n := len(cells["cell_id"])
	if len(feats) != n {
		t.Fatalf("%d footprints, %d cells", len(feats), n)
	}
	edges := func(col string) ([]float64, map[float64]int) {
		seen := map[float64]bool{}
		var xs []float64
		for _, v := range cells[col] {
			x := runcheck.Num(v)
			if !seen[x] {
				seen[x] = true
				xs = append(xs, x)
			}
		}
		sort.Float64s(xs)
		e := make([]float64, len(xs)+1)
		for i := 1; i < len(xs); i++ {
			e[i] = (xs[i-1] + xs[i]) / 2
		}
		e[0] = xs[0] - (xs[1]-xs[0])/2
		e[len(xs)] = xs[len(xs)-1] + (xs[len(xs)-1]-xs[len(xs)-2])/2
		idx := map[float64]int{}
		for i, x := range xs {
			idx[x] = i
		}
		return e, idx
	}
	xe, xi := edges("lon")
	ye, yi := edges("lat")
	for k, f := range feats {
		if id := runcheck.Num(f.Properties["cell_id"]); int(id) != k {
			t.Fatalf("footprint %d holds cell %v", k, id)
		}
		for _, col := range []string{"power_mean_kw_m", "hm0_mean_m", "depth_m"} {
			got, want := f.Properties[col], cells[col][k]
			if (got == nil) != (want == nil) || got != nil && math.Abs(runcheck.Num(got)-runcheck.Num(want)) > 1e-9*math.Max(1, math.Abs(runcheck.Num(want))) {
				t.Errorf("footprint %d: %s = %v, cells.parquet %v", k, col, got, want)
			}
		}
		var mp [][][][2]float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &mp); err != nil || len(mp) != 1 || len(mp[0]) != 1 || len(mp[0][0]) != 5 {
			t.Fatalf("footprint %d: not one rectangle: %s", k, f.Geometry.Coordinates)
		}
		i, j := xi[runcheck.Num(cells["lon"][k])], yi[runcheck.Num(cells["lat"][k])]
		minX, maxX, minY, maxY := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
		area2 := 0.0
		ring := mp[0][0]
		for q, p := range ring {
			minX, maxX = math.Min(minX, p[0]), math.Max(maxX, p[0])
			minY, maxY = math.Min(minY, p[1]), math.Max(maxY, p[1])
			if q+1 < len(ring) {
				area2 += p[0]*ring[q+1][1] - ring[q+1][0]*p[1]
			}
		}
		if math.Abs(minX-xe[i]) > 1e-9 || math.Abs(maxX-xe[i+1]) > 1e-9 || math.Abs(minY-ye[j]) > 1e-9 || math.Abs(maxY-ye[j+1]) > 1e-9 {
			t.Errorf("footprint %d: [%g, %g] x [%g, %g], want [%g, %g] x [%g, %g]", k, minX, maxX, minY, maxY, xe[i], xe[i+1], ye[j], ye[j+1])
		}
		if area2 <= 0 {
			t.Errorf("footprint %d: exterior ring not anticlockwise (RFC 7946 3.1.6 right-hand rule)", k)
		}
	}
}

// QGIS (Debian's python3-qgis 3.22, headless) opens every layer of the
// demo's atlas.gpkg valid and applies its default style from the
// layer_styles table: bands and footprints coloured, each feature by exactly
// one class whose colour is matplotlib's viridis (the report's colour scale)
// at its band's middle over the column's range, computed independently by
// testdata/gpkg/qgis_styles.py; isolines labelled with their level; the same
// classes and colours from the OGC SLD through QGIS's SLD reader. The
// rendered bands with isolines are kept as a PNG, and show the bands'
// colours.
func TestAtlasGpkgStylesInQGIS(t *testing.T) {
	py := testtool.NeedPython(t, "qgis.core", "matplotlib")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	shotDir := filepath.Join(os.TempDir(), "swellgrid-test-output")
	os.MkdirAll(shotDir, 0o755)
	png := filepath.Join(shotDir, "atlas_gpkg_qgis.png")
	cmd := exec.Command(py, filepath.Join("..", "..", "testdata", "gpkg", "qgis_styles.py"), run, "power_mean_kw_m", png)
	cmd.Env = append(os.Environ(), "QT_QPA_PLATFORM=offscreen", "XDG_RUNTIME_DIR="+t.TempDir())
	cmd.Stderr = os.Stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("qgis_styles.py: %v", err)
	}
	var rep struct {
		Layers map[string]struct {
			Valid     bool   `json:"valid"`
			Features  int    `json:"features"`
			Renderer  string `json:"renderer"`
			Labels    bool   `json:"labels"`
			LabelExpr string `json:"label_expr"`
			Rules     []struct {
				Label, Filter, Colour string
			} `json:"rules"`
			Matched    [][]int                          `json:"matched"`
			SLDOk      bool                             `json:"sld_ok"`
			SLDRules   []struct{ Label, Colour string } `json:"sld_rules"`
			SLDMatched [][]int                          `json:"sld_matched"`
			Expected   []*string                        `json:"expected"`
		} `json:"layers"`
		Render struct {
			PNG     string         `json:"png"`
			Colours map[string]int `json:"colours"`
		} `json:"render"`
	}
	if err := json.Unmarshal(out, &rep); err != nil {
		t.Fatalf("qgis_styles.py output: %v\n%s", err, out)
	}
	styled := 0
	for name, l := range rep.Layers {
		if !l.Valid || l.Features == 0 {
			t.Errorf("%s: valid %v, %d features in QGIS", name, l.Valid, l.Features)
		}
		switch {
		case strings.HasPrefix(name, "isolines_"):
			if !l.Labels || !strings.Contains(l.LabelExpr, `"level"`) {
				t.Errorf("%s: labels %v (%q), want the level", name, l.Labels, l.LabelExpr)
			}
			styled++
		case strings.HasPrefix(name, "bands_") || name == "cell_footprints":
			if l.Renderer != "RuleRenderer" || len(l.Rules) < 2 {
				t.Errorf("%s: renderer %s with %d rules: the default style was not applied", name, l.Renderer, len(l.Rules))
				continue
			}
			styled++
			if len(l.Expected) != len(l.Matched) {
				t.Fatalf("%s: %d features matched, %d expected colours", name, len(l.Matched), len(l.Expected))
			}
			for k, m := range l.Matched {
				want := l.Expected[k]
				if want == nil {
					continue // a cell without a value
				}
				if len(m) != 1 {
					t.Errorf("%s feature %d: %d classes match, want 1", name, k, len(m))
					continue
				}
				if got := l.Rules[m[0]].Colour; got != *want {
					t.Errorf("%s feature %d: colour %s (%s), viridis at the band's middle %s", name, k, got, l.Rules[m[0]].Label, *want)
				}
				if !l.SLDOk || k >= len(l.SLDMatched) || len(l.SLDMatched[k]) != 1 {
					t.Errorf("%s feature %d: the SLD (loaded %v) gives classes %v", name, k, l.SLDOk, l.SLDMatched)
					continue
				}
				if got := l.SLDRules[l.SLDMatched[k][0]].Colour; got != *want {
					t.Errorf("%s feature %d: SLD colour %s, want %s", name, k, got, *want)
				}
			}
		}
	}
	if styled < 11 { // 5 contoured columns x (bands, isolines) + footprints
		t.Errorf("%d layers styled, want 11", styled)
	}
	bands := rep.Layers["bands_power_mean_kw_m"]
	shown := 0
	for _, r := range bands.Rules {
		if rep.Render.Colours[r.Colour] > 0 {
			shown++
		}
	}
	if shown < len(bands.Rules)-1 {
		t.Errorf("the rendered map (%s) shows %d of %d band colours", rep.Render.PNG, shown, len(bands.Rules))
	}
	t.Logf("QGIS rendering kept at %s", rep.Render.PNG)
}

// On the demo's mesh atlas, cell_footprints has a polygon per cell, none
// empty, and the polygons tile the mesh: their areas (the shoelace formula,
// planar in lon/lat) sum to the area of the mesh's faces as
// mesh_faces.parquet lists them (read by rundir), to 1e-9.
func TestAtlasGpkgMeshFootprints(t *testing.T) {
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-mesh")
	feats := ogrLayerJSON(t, filepath.Join(run, "atlas.gpkg"), "cell_footprints")
	r, err := rundir.Open(run, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Mesh == nil || len(feats) != r.Cells.Rows {
		t.Fatalf("%d footprints, %d cells (mesh %v)", len(feats), r.Cells.Rows, r.Mesh != nil)
	}
	shoelace := func(ring [][2]float64) float64 {
		s := 0.0
		for k := 0; k+1 < len(ring); k++ {
			s += ring[k][0]*ring[k+1][1] - ring[k+1][0]*ring[k][1]
		}
		return s / 2
	}
	sum := 0.0
	for k, f := range feats {
		var mp [][][][2]float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &mp); err != nil || len(mp) != 1 {
			t.Fatalf("footprint %d: %s", k, f.Geometry.Coordinates)
		}
		a := shoelace(mp[0][0])
		if a <= 0 {
			t.Errorf("footprint %d: area %g (not anticlockwise)", k, a)
		}
		sum += a
	}
	mesh := 0.0
	m := r.Mesh
	for fc := 0; fc < m.NFaces(); fc++ {
		var ring [][2]float64
		for _, n := range m.Face(fc) {
			ring = append(ring, [2]float64{m.NodeLon[n], m.NodeLat[n]})
		}
		ring = append(ring, ring[0])
		mesh += math.Abs(shoelace(ring))
	}
	if math.Abs(sum-mesh) > 1e-9*mesh {
		t.Errorf("footprints cover %.12g square degrees, the mesh's faces %.12g", sum, mesh)
	}
	t.Logf("%d mesh footprints (%s) cover %.9g square degrees, the faces %.9g", len(feats), m.Location, sum, mesh)
}

// QGIS (Debian's python3-qgis, headless) opens the demo grid's atlas.nc
// (power_mean_kw_m) as a raster layer in WGS 84 with the grid's 16 x 12
// cells and the extent of its cell edges (the axes' first and last values
// half a spacing out), and draws it in more than a few colours; the PNG is
// kept (testdata/gridmapping/qgis_raster.py).
func TestAtlasNCInQGIS(t *testing.T) {
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	cells := cellsOf(t, run)
	q := runcheck.OpenInQGIS(t, filepath.Join(run, "atlas.nc"), "power_mean_kw_m", "atlas_nc_demo_qgis")
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range cells["lon"] {
		lo, hi = math.Min(lo, runcheck.Num(v)), math.Max(hi, runcheck.Num(v))
	}
	if !q.Valid || !q.CRSValid || !strings.Contains(q.WKT, "WGS 84") || q.Width*q.Height != len(cells["cell_id"]) {
		t.Fatalf("QGIS layer valid %v, CRS valid %v (%.60s), %d x %d for %d cells", q.Valid, q.CRSValid, q.WKT, q.Width, q.Height, len(cells["cell_id"]))
	}
	dx := (hi - lo) / float64(q.Width-1)
	if math.Abs(q.Extent[0]-(lo-dx/2)) > 1e-9 || math.Abs(q.Extent[2]-(hi+dx/2)) > 1e-9 || q.Colours < 4 {
		t.Errorf("QGIS extent %v, want lon %v..%v; %d colours drawn", q.Extent, lo-dx/2, hi+dx/2, q.Colours)
	}
	t.Logf("QGIS: atlas.nc %d x %d, extent %v, %d colours (%s)", q.Width, q.Height, q.Extent, q.Colours, q.PNG)
}
