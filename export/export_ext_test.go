package export

// Checks with readers outside the project: GDAL's ogrinfo (Debian gdal-bin)
// for the GeoJSON contour layers, and DuckDB (npm @duckdb/node-api) for the
// Parquet tables. Each test skips with a message when its tool is missing.

import (
	"swellgrid/internal/testtool"

	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"swellgrid/grid"
)

func coneField(n int) *grid.Field {
	f := &grid.Field{NX: n, NY: n}
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x := -5 + 10*float64(i)/float64(n-1)
			y := 50 + 10*float64(j)/float64(n-1)
			f.Lon = append(f.Lon, x)
			f.Lat = append(f.Lat, y)
			f.Value = append(f.Value, math.Hypot(x, y-55))
		}
	}
	return f
}

// ogrinfo must open each layer with the GeoJSON driver and report the feature
// count and geometry type we wrote (GDAL GeoJSON driver documentation).
func TestContoursOgrinfo(t *testing.T) {
	testtool.Need(t, "ogrinfo", "gdal-bin")
	f := coneField(81)
	levels := grid.NiceLevels(0, 7, 6)
	lines, err := grid.Isolines(f, levels)
	if err != nil {
		t.Fatal(err)
	}
	edges := append(append([]float64{math.Inf(-1)}, levels...), math.Inf(1))
	bands, err := grid.Bands(f, edges)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := WriteContours(dir, "hm0_mean_m", "m", levels, lines, edges, bands); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		file, geom string
		n          int
	}{{"hm0_mean_m.geojson", "Multi Line String", len(levels)}, {"hm0_mean_m.bands.geojson", "Multi Polygon", len(bands)}} {
		p := filepath.Join(dir, "contours", tc.file)
		out, err := exec.Command("ogrinfo", "-so", "-al", p).CombinedOutput()
		if err != nil {
			t.Fatalf("ogrinfo %s: %v\n%s", p, err, out)
		}
		s := string(out)
		t.Logf("ogrinfo -so -al %s:\n%s", tc.file, s)
		m := regexp.MustCompile(`Feature Count: (\d+)`).FindStringSubmatch(s)
		if m == nil || m[1] != strconv.Itoa(tc.n) {
			t.Errorf("%s: ogrinfo feature count %v, want %d", tc.file, m, tc.n)
		}
		if !strings.Contains(s, "Geometry: "+tc.geom) {
			t.Errorf("%s: ogrinfo geometry type is not %q", tc.file, tc.geom)
		}
		if !strings.Contains(s, "EPSG\",4326") {
			t.Errorf("%s: ogrinfo does not see WGS 84", tc.file)
		}
	}
}

// duckdbAPI installs @duckdb/node-api into a cache directory outside the
// repository (once) and returns the package directory.
func duckdbAPI(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("-short: skipping the DuckDB reader check")
	}
	testtool.Need(t, "node", "nodejs")
	cache := os.Getenv("SWELLGRID_NODE_CACHE")
	if cache == "" {
		base, err := os.UserCacheDir()
		if err != nil {
			testtool.Unavailable(t, "no cache directory for the npm DuckDB package (%v); set SWELLGRID_NODE_CACHE", err)
		}
		cache = filepath.Join(base, "swellgrid-test", "duckdb-node")
	}
	pkg := filepath.Join(cache, "node_modules", "@duckdb", "node-api")
	if _, err := os.Stat(filepath.Join(pkg, "package.json")); err == nil {
		return pkg
	}
	testtool.Need(t, "npm", "npm")
	if err := os.MkdirAll(cache, 0o755); err != nil {
		testtool.Unavailable(t, "cannot create %s for the npm DuckDB package: %v", cache, err)
	}
	cmd := exec.Command("npm", "install", "--prefix", cache, "--no-audit", "--no-fund", "@duckdb/node-api@1.5.6-r.1")
	if out, err := cmd.CombinedOutput(); err != nil {
		testtool.Unavailable(t, "npm install @duckdb/node-api failed (offline?; `make test-deps` installs it): %v\n%s", err, out)
	}
	return pkg
}

type duckFile struct {
	Columns     [][2]string       `json:"columns"`
	Rows        int               `json:"rows"`
	KV          map[string]string `json:"kv"`
	Nulls       map[string]int    `json:"nulls"`
	RowGroups   int               `json:"row_groups"`
	Compression []string          `json:"compression"`
	Stats       map[string]struct {
		Min, Max *string
		Nulls    *int
	} `json:"stats"`
	GeometryHex []string `json:"geometry_hex"`
	GeometryWKT []string `json:"geometry_wkt"`
}

func TestParquetDuckDB(t *testing.T) {
	pkg := duckdbAPI(t)
	dir := t.TempDir()
	cells, lon, lat := sampleCells(1000)
	cells.RowGroupRows = 400
	cp := filepath.Join(dir, "cells.parquet")
	if err := WriteGeoParquet(cp, cells, lon, lat); err != nil {
		t.Fatal(err)
	}
	long := &Table{Columns: []Column{
		Int64Column("cell_id", "1", "cell", []int64{0, 0, 1}, nil),
		Float64Column("hm0_rl_m", "m", "return level", []float64{3.5, math.NaN(), 4.25}),
		StringColumn("method", "", "GEV or GPD", []string{"gev", "gpd", "gev"}, nil),
	}}
	lp := filepath.Join(dir, "extremes.parquet")
	if err := WriteParquet(lp, long); err != nil {
		t.Fatal(err)
	}
	script, _ := filepath.Abs(filepath.Join("..", "testdata", "export", "read_parquet.js"))
	cmd := exec.Command("node", script, cp, lp)
	cmd.Env = append(os.Environ(), "DUCKDB_NODE_API="+pkg)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("node %s: %v\n%s%s", script, err, out, stderr.String())
	}
	var res struct {
		API     string              `json:"duckdb_node_api"`
		Version string              `json:"duckdb_version"`
		Files   map[string]duckFile `json:"files"`
	}
	if err := json.Unmarshal(out, &res); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	t.Logf("DuckDB %s (@duckdb/node-api %s)", res.Version, res.API)

	c := res.Files[cp]
	wantCols := [][2]string{{"cell_id", "BIGINT"}, {"lon", "DOUBLE"}, {"lat", "DOUBLE"}, {"power_mean_kw_m", "DOUBLE"},
		{"steps", "BIGINT"}, {"qc_flags", "VARCHAR"}, {"converged", "BOOLEAN"}}
	if len(c.Columns) != len(wantCols)+1 {
		t.Fatalf("DuckDB sees columns %v", c.Columns)
	}
	for k, w := range wantCols {
		if c.Columns[k] != w {
			t.Errorf("column %d: DuckDB %v, want %v", k, c.Columns[k], w)
		}
	}
	// DuckDB shows the WKB column as BLOB, or as GEOMETRY when it reads the
	// geo metadata itself (newer versions).
	if g := c.Columns[len(wantCols)]; g[0] != "geometry" || (g[1] != "BLOB" && !strings.HasPrefix(g[1], "GEOMETRY")) {
		t.Errorf("geometry column %v", g)
	}
	if c.Rows != 1000 || c.RowGroups != 3 {
		t.Errorf("rows %d, row groups %d; want 1000 and 3", c.Rows, c.RowGroups)
	}
	if len(c.Compression) != 1 || !strings.EqualFold(c.Compression[0], "ZSTD") {
		t.Errorf("compression %v, want ZSTD", c.Compression)
	}
	nan, nullSteps := 0, 0
	for k := 0; k < 1000; k++ {
		if k%7 == 3 {
			nan++
		}
		if k%5 == 0 {
			nullSteps++
		}
	}
	if c.Nulls["power_mean_kw_m"] != nan || c.Nulls["steps"] != nullSteps || c.Nulls["cell_id"] != 0 {
		t.Errorf("nulls %v, want power %d, steps %d", c.Nulls, nan, nullSteps)
	}
	// Row group 0 holds rows 0..399: power 0 .. 199.5 (row 399 is not null).
	// A zero minimum is stored as -0.0, as parquet.thrift (Statistics, the
	// note on floating-point min/max) asks of writers.
	if s := c.Stats["power_mean_kw_m"]; s.Min == nil || s.Max == nil || (*s.Min != "0.0" && *s.Min != "-0.0") || *s.Max != "199.5" {
		t.Errorf("row-group statistics of power_mean_kw_m: min %v max %v", deref(s.Min), deref(s.Max))
	}
	var geo struct {
		Version string `json:"version"`
		Primary string `json:"primary_column"`
		Columns map[string]struct {
			Encoding string    `json:"encoding"`
			Types    []string  `json:"geometry_types"`
			BBox     []float64 `json:"bbox"`
		} `json:"columns"`
	}
	if err := json.Unmarshal([]byte(c.KV["geo"]), &geo); err != nil {
		t.Fatalf("geo metadata via DuckDB: %v (%q)", err, c.KV["geo"])
	}
	if geo.Version != "1.1.0" || geo.Primary != "geometry" || geo.Columns["geometry"].Encoding != "WKB" || len(geo.Columns["geometry"].BBox) != 4 {
		t.Errorf("geo metadata via DuckDB: %s", c.KV["geo"])
	}
	// Row 0 is the point (-30, 40): WKB little-endian Point per OGC Simple
	// Features 1.2.1, section 8.2 = 01 01000000 <x> <y>; -30 = 0xC03E000000000000
	// and 40 = 0x4044000000000000 (IEEE 754 binary64).
	// When DuckDB decodes the WKB itself, row 0 must read as POINT (-30 40)
	// (OGC WKT) and the column type must carry the GeoParquet default CRS.
	switch {
	case len(c.GeometryWKT) > 0:
		if c.GeometryWKT[0] != "POINT (-30 40)" {
			t.Errorf("geometry of row 0 via DuckDB: %v", c.GeometryWKT)
		}
		if g := c.Columns[len(wantCols)][1]; g != "BLOB" && !strings.Contains(g, "OGC:CRS84") {
			t.Errorf("DuckDB geometry type %q does not carry OGC:CRS84", g)
		}
	case len(c.GeometryHex) > 0:
		if c.GeometryHex[0] != "0101000000000000000000003EC00000000000004440" {
			t.Errorf("geometry of row 0: %v", c.GeometryHex)
		}
	default:
		t.Error("DuckDB gave no geometry")
	}
	var docs []colDoc
	if err := json.Unmarshal([]byte(c.KV[MetaColumns]), &docs); err != nil || len(docs) != 8 || docs[3].Unit != "kW/m" {
		t.Errorf("column docs via DuckDB: %v %v", err, c.KV[MetaColumns])
	}
	if c.KV[MetaCaution] != ScreeningCaution {
		t.Error("caution not visible to DuckDB")
	}

	l := res.Files[lp]
	if l.Rows != 3 || l.Nulls["hm0_rl_m"] != 1 || len(l.Columns) != 3 || l.Columns[2] != [2]string{"method", "VARCHAR"} {
		t.Errorf("long table via DuckDB: %+v", l)
	}
	if _, ok := l.KV["geo"]; ok {
		t.Error("long table has geo metadata")
	}
}

func deref(s *string) string {
	if s == nil {
		return "<nil>"
	}
	return *s
}
