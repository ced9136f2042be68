// Package runcheck holds the test helpers that read a finished run directory
// back (files present, Parquet columns, byte comparisons, the demo's
// common-sense checks), shared by the tests of the run engine and of the
// demo. It is tooling: it imports no run engine (the engine's own tests
// import it) and no product package imports it outside tests.
package runcheck

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/internal/parquetread"
	"swellgrid/pipelines/runspec"
	"testing"
)

// AllTables are the files every run directory holds.
var AllTables = []string{"cells.parquet", "monthly.parquet", "scatter.parquet", "exceedance.parquet", "windows.parquet", "extremes.parquet", "manifest.json", "threshold_diagnostics.parquet", "design.parquet", "directions.parquet", "annual.parquet", "annual_maxima.parquet", "monthly_yield.parquet", "aep_bands.parquet"}

// RequireFiles fails t for each of names missing or empty in dir.
func RequireFiles(t *testing.T, dir string, names ...string) {
	t.Helper()
	for _, n := range names {
		if st, err := os.Stat(filepath.Join(dir, n)); err != nil || st.Size() == 0 {
			t.Errorf("%s: missing or empty %s", dir, n)
		}
	}
}

// ParquetFiles reads the bytes of the Parquet files of AllTables in dir.
func ParquetFiles(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, n := range AllTables {
		if !strings.HasSuffix(n, ".parquet") {
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil {
			t.Fatal(err)
		}
		out[n] = b
	}
	return out
}

// SameBytes fails t for each file of a whose bytes differ in b.
func SameBytes(t *testing.T, what string, a, b map[string][]byte) {
	t.Helper()
	for n := range a {
		if !bytes.Equal(a[n], b[n]) {
			t.Errorf("%s: %s differs", what, n)
		}
	}
}

// ReadColumn reads one float column of a Parquet file with the Arrow reader.
func ReadColumn(t *testing.T, path, col string) []float64 {
	t.Helper()
	v, err := parquetread.Float64s(path, col)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// Num is a Parquet value read back (float64 or int64) as a float64.
func Num(v any) float64 {
	switch x := v.(type) {
	case float64:
		return x
	case int64:
		return float64(x)
	case nil:
		return math.NaN()
	}
	return math.NaN()
}

// SameNum reports whether a and b agree to 1e-12 relative (or both are NaN).
func SameNum(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return a == b || math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b))
}

// FirstLines is the first n lines of s.
func FirstLines(s string, n int) string {
	l := strings.SplitN(s, "\n", n+1)
	if len(l) > n {
		l = l[:n]
	}
	return strings.Join(l, "\n")
}

// ReadStrings reads one string column of a Parquet file with the Arrow reader.
func ReadStrings(t *testing.T, path, col string) []string {
	t.Helper()
	m, err := parquetread.Columns(path, col)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]string, len(m[col]))
	for i, v := range m[col] {
		s, _ := v.(string)
		out[i] = s
	}
	return out
}

// HasFlag reports whether the comma-separated list holds flag.
func HasFlag(list, flag string) bool {
	for _, f := range strings.Split(list, ",") {
		if f == flag {
			return true
		}
	}
	return false
}

// CheckDemoExtremes looks at the demo's extremes as a user would: no published
// Hm0 level (GEV or GPD, any return period, level or interval end) above 3
// times the largest Hm0 of its cell (common sense: the 1,214.7 m level of an
// earlier demo came from a cell whose largest Hm0 was 7.98 m), none above the
// cell's depth limit without the depth_limited flag, and the demo does
// publish 100-year levels and design contours (a 30-year record).
func CheckDemoExtremes(t *testing.T, dir string) {
	t.Helper()
	cp := filepath.Join(dir, "cells.parquet")
	hmax := ReadColumn(t, cp, "hm0_max_m")
	lim := ReadColumn(t, cp, "hm0_depth_limit_m")
	flags := ReadStrings(t, cp, contract.ColQCFlags)
	s := runspec.DefaultSpec()
	published := 0
	best, bestCell := math.Inf(-1), -1
	for _, T := range s.Extremes.ReturnPeriodsY {
		gev := contract.Hm0ReturnLevelColumn(T)          // hm0_rl<T>y_m
		pot := strings.Replace(gev, "_rl", "_pot_rl", 1) // hm0_pot_rl<T>y_m
		for _, m := range []struct{ level, flag string }{{gev, "gev_depth_limited"}, {pot, "gpd_depth_limited"}} {
			lv := ReadColumn(t, cp, m.level)
			hi := ReadColumn(t, cp, strings.TrimSuffix(m.level, "_m")+"_hi_m")
			for i, v := range lv {
				if math.IsNaN(v) {
					continue
				}
				published++
				if T == 100 && m.level == gev && v > best {
					best, bestCell = v, i
				}
				for _, x := range []float64{v, hi[i]} {
					if x > 3*hmax[i] {
						t.Errorf("cell %d: %s level or upper end %.2f m above 3 x its largest Hm0 %.2f m", i, m.level, x, hmax[i])
					}
					if x > lim[i] && !HasFlag(flags[i], m.flag) {
						t.Errorf("cell %d: %s %.2f m above the depth limit %.2f m without %s (%q)", i, m.level, x, lim[i], m.flag, flags[i])
					}
				}
			}
		}
	}
	if bestCell < 0 {
		t.Fatal("the demo publishes no GEV 100-year level")
	}
	t.Logf("demo: %d published levels; largest published GEV 100-year Hm0 %.2f m in cell %d, whose largest Hm0 is %.2f m", published, best, bestCell, hmax[bestCell])
	pot := ReadColumn(t, cp, strings.Replace(contract.Hm0ReturnLevelColumn(100), "_rl", "_pot_rl", 1))
	pbest, pcell := math.Inf(-1), -1
	for i, v := range pot {
		if v > pbest {
			pbest, pcell = v, i
		}
	}
	if pcell >= 0 {
		t.Logf("demo: largest published GPD 100-year Hm0 %.2f m in cell %d, whose largest Hm0 is %.2f m", pbest, pcell, hmax[pcell])
	}
	dh := ReadColumn(t, cp, "design_hm0_100y_m")
	n := 0
	for i, v := range dh {
		if !math.IsNaN(v) {
			n++
			if v > 3*hmax[i] {
				t.Errorf("cell %d: 100-year contour Hm0 %.2f m above 3 x its largest Hm0 %.2f m", i, v, hmax[i])
			}
		}
	}
	if n == 0 {
		t.Error("the demo has no design contour")
	}
	below := 0
	for _, f := range flags {
		if HasFlag(f, "design_below_record_max") {
			below++
		}
	}
	t.Logf("demo: %d cells with design contours; 100-year contour Hm0 %.2f m in cell %d (largest Hm0 %.2f m); %d cells flagged design_below_record_max", n, dh[bestCell], bestCell, hmax[bestCell], below)
	rows, err := parquetread.Columns(filepath.Join(dir, "design.parquet"), "cell_id")
	if err != nil || len(rows["cell_id"]) == 0 {
		t.Errorf("design.parquet: %v, %d rows", err, len(rows["cell_id"]))
	}
}

// CheckDemoMesh: the demo's mesh atlas is a mesh run (manifest grid kind
// "mesh"), labelled synthetic, with contours, a UGRID atlas.nc and maps;
// its per-node mean power is finite and positive on every node.
func CheckDemoMesh(t *testing.T, dir string) {
	t.Helper()
	RequireFiles(t, dir, AllTables...)
	RequireFiles(t, dir, "contours/power_mean_kw_m.geojson", "contours/power_mean_kw_m.bands.geojson", "atlas.nc", "mesh_nodes.parquet", "mesh_faces.parquet", "report/map_power_mean_kw_m.png")
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m struct {
		Grid struct {
			Kind  string `json:"kind"`
			Cells int    `json:"cells"`
		} `json:"grid"`
	}
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	if m.Grid.Kind != "mesh" || m.Grid.Cells < 50 {
		t.Errorf("demo mesh atlas: grid %+v", m.Grid)
	}
	cols, err := parquetread.Columns(filepath.Join(dir, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	for i, v := range cols[contract.ColPowerMean] {
		if x, ok := v.(float64); !ok || !(x > 0) {
			t.Errorf("demo mesh node %d: power_mean_kw_m %v", i, v)
		}
	}
}

// RunOutputs reads every output file of a run directory except manifest.json
// (which holds timings and paths) and the state folder.
func RunOutputs(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, f := range rundir.Files(dir) {
		// The manifest, the report's summary page and atlas.nc's global
		// attributes name the input files, which these runs read from
		// different directories; their values are checked elsewhere
		// (atlas.nc against cells.parquet in the products test).
		if f == "manifest.json" || f == "report/index.html" || f == "atlas.nc" {
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil {
			t.Fatal(err)
		}
		out[f] = b
	}
	return out
}

// SameOutputs asserts that two runs wrote the same files with the same bytes.
func SameOutputs(t *testing.T, what string, want, got map[string][]byte) {
	t.Helper()
	var names []string
	for k := range want {
		names = append(names, k)
	}
	sort.Strings(names)
	if len(names) < 7 || want["cells.parquet"] == nil {
		t.Fatalf("%s: the reference run wrote only %v", what, names)
	}
	for _, k := range names {
		if g, ok := got[k]; !ok {
			t.Errorf("%s: %s missing", what, k)
		} else if !bytes.Equal(want[k], g) {
			t.Errorf("%s: %s differs (%d bytes against %d)", what, k, len(want[k]), len(g))
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("%s: extra file %s", what, k)
		}
	}
}

// BulkFixture is the absolute path of testdata/bulk_monthly, from a test of a
// package two levels below the repository root.
func BulkFixture(t *testing.T) string {
	d, err := filepath.Abs("../../testdata/bulk_monthly")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(d); err != nil {
		t.Fatalf("fixture %s missing; make it with go run ./cmd/mkfixtures: %v", d, err)
	}
	return d
}
