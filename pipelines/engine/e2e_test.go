package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
	"testing"
)

func testSpec(t *testing.T, input string, out string) *runspec.Spec {
	t.Helper()
	s := runspec.DefaultSpec()
	s.Input.Paths = []string{filepath.Join("..", "..", input)}
	s.Output.Dir = out
	return s
}

func mustRun(t *testing.T, s *runspec.Spec) *Result {
	t.Helper()
	r, err := Run(context.Background(), s, Options{Version: "test"})
	if err != nil {
		t.Fatalf("run %v: %v", s.Input.Paths, err)
	}
	return r
}

// The bulk fixture gives every output, and the tables are byte-identical
// whatever the number of workers (DESIGN.md: deterministic output).
func TestBulkRunAndWorkerDeterminism(t *testing.T) {
	var ref map[string][]byte
	for _, w := range []int{1, 2, 8} {
		out := t.TempDir()
		s := testSpec(t, "testdata/bulk_monthly", out)
		s.Run.Workers = w
		mustRun(t, s)
		runcheck.RequireFiles(t, out, runcheck.AllTables...)
		runcheck.RequireFiles(t, out, "contours/power_mean_kw_m.geojson", "contours/power_mean_kw_m.bands.geojson")
		got := runcheck.ParquetFiles(t, out)
		if ref == nil {
			ref = got
			continue
		}
		runcheck.SameBytes(t, "workers 1 vs "+string(rune('0'+w)), ref, got)
	}
}

// A run over the first year, then the same command over both years in the
// same directory, resumes from the checkpoint and gives the bytes of a fresh
// run over both years.
func TestResumeGivesSameBytes(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/bulk_monthly/*.nc")
	sort.Strings(files)
	if len(files) != 24 {
		t.Fatalf("fixture has %d files", len(files))
	}
	fresh := t.TempDir()
	s := runspec.DefaultSpec()
	s.Input.Paths, s.Output.Dir = files, fresh
	mustRun(t, s)
	resumed := t.TempDir()
	s1 := runspec.DefaultSpec()
	s1.Input.Paths, s1.Output.Dir = files[:12], resumed
	mustRun(t, s1)
	s2 := runspec.DefaultSpec()
	s2.Input.Paths, s2.Output.Dir = files, resumed
	mustRun(t, s2)
	runcheck.SameBytes(t, "resumed", runcheck.ParquetFiles(t, fresh), runcheck.ParquetFiles(t, resumed))

	// A changed spec refuses to resume and says why; --restart starts over.
	s3 := runspec.DefaultSpec()
	s3.Input.Paths, s3.Output.Dir = files, resumed
	s3.Physics.Rho = 1027
	_, err := Run(context.Background(), s3, Options{})
	if err == nil || !strings.Contains(err.Error(), "spec changed") || !strings.Contains(err.Error(), "--restart") {
		t.Errorf("changed spec: %v", err)
	}
	if _, err := Run(context.Background(), s3, Options{Restart: true}); err != nil {
		t.Errorf("restart: %v", err)
	}
}

// The JONSWAP-built spectral fixture gives the mean power computed
// independently with Debian's python3-netcdf4/numpy/scipy
// (testdata/pipeline/make_power_ref.py -> power_ref.json) within 0.5% per cell.
func TestSpectralPowerAgainstNumpy(t *testing.T) {
	out := t.TempDir()
	mustRun(t, testSpec(t, "testdata/spectral_points.nc", out))
	runcheck.RequireFiles(t, out, runcheck.AllTables...)
	var ref struct {
		Stations []struct {
			Station      int
			PowerMeanKWm float64 `json:"power_mean_kw_m"`
		}
	}
	b, err := os.ReadFile("../../testdata/pipeline/power_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	got := runcheck.ReadColumn(t, filepath.Join(out, "cells.parquet"), "power_mean_kw_m")
	if len(ref.Stations) != len(got) || len(got) == 0 {
		t.Fatalf("%d stations vs %d cells", len(ref.Stations), len(got))
	}
	for _, st := range ref.Stations {
		rel := math.Abs(got[st.Station]-st.PowerMeanKWm) / st.PowerMeanKWm
		if rel > 0.005 {
			t.Errorf("station %d: %.4f kW/m vs numpy %.4f (%.3f%%)", st.Station, got[st.Station], st.PowerMeanKWm, 100*rel)
		}
	}
}

// A point set gets every table and no contours, and the manifest says why;
// its cells' values equal the python3-netcdf4/numpy/scipy computation of
// testdata/pipeline/make_layout_ref.py.
func TestPointSetRun(t *testing.T) {
	out := t.TempDir()
	mustRun(t, testSpec(t, "testdata/points_bulk.nc", out))
	runcheck.RequireFiles(t, out, runcheck.AllTables...)
	if _, err := os.Stat(filepath.Join(out, "contours")); err == nil {
		t.Error("contours written for a point set")
	}
	m, _ := os.ReadFile(filepath.Join(out, "manifest.json"))
	if !bytes.Contains(m, []byte("point set")) || !bytes.Contains(m, []byte("screening estimates")) {
		t.Error("manifest lacks the no-contour reason or the caution")
	}
	compareLayoutRef(t, out, "points_bulk")
}

// A curvilinear grid gets contour layers, and its cells (land cells null)
// the values of testdata/pipeline/make_layout_ref.py.
func TestCurvilinearRun(t *testing.T) {
	out := t.TempDir()
	mustRun(t, testSpec(t, "testdata/curvilinear_bulk.nc", out))
	runcheck.RequireFiles(t, out, runcheck.AllTables...)
	runcheck.RequireFiles(t, out, "contours/power_mean_kw_m.geojson", "contours/hm0_mean_m.bands.geojson")
	compareLayoutRef(t, out, "curvilinear_bulk")
}

// compareLayoutRef matches the cells of a run with the reference's by
// lon/lat and compares mean power, mean and largest Hm0 and mean Te
// (tolerances: the fixed-point sums of stats/climate, see e2eCellTolerances).
func compareLayoutRef(t *testing.T, out, fixture string) {
	t.Helper()
	var ref map[string]any
	readRef(t, "../../testdata/pipeline/layout_ref.json", &ref)
	rows, _ := ref[fixture].([]any)
	cols, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), "lon", "lat", "power_mean_kw_m", "hm0_mean_m", "hm0_max_m", "te_mean_s")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) == 0 || len(rows) != len(cols["lon"]) {
		t.Fatalf("%s: %d cells, the reference %d", fixture, len(cols["lon"]), len(rows))
	}
	at := map[[2]float64]int{}
	for i := range cols["lon"] {
		at[[2]float64{math.Round(asFloat(cols["lon"][i]) * 1e9), math.Round(asFloat(cols["lat"][i]) * 1e9)}] = i
	}
	tols := map[string]tol{"power_mean_kw_m": tolPower, "hm0_mean_m": tolHm0, "hm0_max_m": tolHm0, "te_mean_s": tolHm0}
	for _, x := range rows {
		r := x.(map[string]any)
		i, ok := at[[2]float64{math.Round(asFloat(r["lon"]) * 1e9), math.Round(asFloat(r["lat"]) * 1e9)}]
		if !ok {
			t.Errorf("%s: no cell at (%v, %v)", fixture, r["lon"], r["lat"])
			continue
		}
		for c, tl := range tols {
			if got, want := asFloat(cols[c][i]), asFloat(r[c]); !near(got, want, tl) {
				t.Errorf("%s cell at (%v, %v): %s = %.9g, numpy %.9g", fixture, r["lon"], r["lat"], c, got, want)
			}
		}
	}
}

func TestSpecUnknownKeyAndBadValues(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "s.toml")
	os.WriteFile(p, []byte("[input]\npaths = [\"x\"]\n[physics]\nrho = 1025.0\ngravity = 9.8\n"), 0o644)
	if _, err := runspec.LoadSpec(p); err == nil || !strings.Contains(err.Error(), "physics.gravity") {
		t.Errorf("unknown key: %v", err)
	}
	for _, c := range []struct {
		mod  func(s *runspec.Spec)
		want string
	}{
		{func(s *runspec.Spec) { s.Extremes.ReturnPeriodsY = []float64{-5, 10} }, "extremes.return_periods_y"},
		{func(s *runspec.Spec) { s.Statistics.WindowLimitsM = []float64{2, 1.5} }, "strictly increasing"},
		{func(s *runspec.Spec) {
			s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: "/nonexistent.csv"}}
		}, "device[0].power_matrix"},
		{func(s *runspec.Spec) { s.Depth.Source = "guess" }, "depth.source"},
	} {
		s := runspec.DefaultSpec()
		s.Input.Paths = []string{"x"}
		c.mod(s)
		if _, err := s.Resolve(); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("want %q, got %v", c.want, err)
		}
	}
}

// An output directory in use by a live process is refused.
func TestLockedOutputDir(t *testing.T) {
	out := t.TempDir()
	os.MkdirAll(filepath.Join(out, lock.StateDir), 0o755)
	os.WriteFile(filepath.Join(out, lock.StateDir, "lock"), []byte("1\n"), 0o644) // pid 1 is always alive
	_, err := Run(context.Background(), testSpec(t, "testdata/points_bulk.nc", out), Options{})
	if err == nil || fault.KindOf(err) != fault.OutputUnusable || !strings.Contains(err.Error(), "pid 1") {
		t.Fatalf("locked dir: %v", err)
	}
}

// Every example spec loads, validates and runs.
func TestExampleSpecs(t *testing.T) {
	files, _ := filepath.Glob("../examples/*.toml")
	if len(files) < 3 {
		t.Fatalf("%d example specs", len(files))
	}
	for _, f := range files {
		s, err := runspec.LoadSpec(f)
		if err != nil {
			t.Errorf("%s: %v", f, err)
			continue
		}
		s.Output.Dir = t.TempDir()
		if _, err := Run(context.Background(), s, Options{}); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
}

// Temporary files and folders left by a run killed while writing
// (".<name>.partial-*": export.WriteFileAtomic's files, export.PartialDir's
// folders of atlas.nc and atlas.gpkg, in the run directory and its state
// folder) are removed by the next run in the same directory; a link
// planted under such a name is removed, its target left alone.
func TestPartialsRemoved(t *testing.T) {
	out := t.TempDir()
	outside := t.TempDir()
	victim := filepath.Join(outside, "keep.txt")
	os.WriteFile(victim, []byte("keep"), 0o644)
	left := filepath.Join(out, ".cells.parquet.partial-123")
	os.WriteFile(left, []byte("half"), 0o644)
	folder := filepath.Join(out, ".atlas.gpkg.partial-456")
	os.Mkdir(folder, 0o700)
	os.WriteFile(filepath.Join(folder, "atlas.gpkg"), []byte("half"), 0o644)
	os.Mkdir(filepath.Join(out, lock.StateDir), 0o755)
	state := filepath.Join(out, lock.StateDir, ".pass-0-8.ckpt.partial-789")
	os.WriteFile(state, []byte("half"), 0o644)
	link := filepath.Join(out, ".atlas.nc.partial-000")
	os.Symlink(outside, link)
	mustRun(t, testSpec(t, "testdata/points_bulk.nc", out))
	for _, p := range []string{left, folder, state, link} {
		if _, err := os.Lstat(p); err == nil {
			t.Errorf("%s left in place", p)
		}
	}
	if b, err := os.ReadFile(victim); err != nil || string(b) != "keep" {
		t.Errorf("the target of a planted partial link was touched: %q %v", b, err)
	}
}

func TestMain(m *testing.M) {
	code := m.Run()
	if pairDir != "" {
		os.RemoveAll(pairDir) // mesh_test.go
	}
	if valRunDir != "" {
		os.RemoveAll(valRunDir) // validate_test.go
	}
	if dlRuns.dir != "" {
		os.RemoveAll(dlRuns.dir) // dateline_test.go
	}
	os.Exit(code)
}
