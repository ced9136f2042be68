package demo

import (
	"context"
	"math"
	"path/filepath"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
	"testing"
)

// The demo runs the whole job and writes every output of both atlases.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("demo takes ~15 s")
	}
	dir := t.TempDir()
	res, err := Run(context.Background(), dir, engine.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Runs) != 3 {
		t.Fatalf("%d atlases", len(res.Runs))
	}
	runcheck.CheckDemoMesh(t, res.Runs[2].Result.OutDir) // mesh_test.go
	runcheck.RequireFiles(t, res.Runs[0].Result.OutDir, runcheck.AllTables...)
	runcheck.RequireFiles(t, res.Runs[0].Result.OutDir, "contours/power_mean_kw_m.bands.geojson", "contours/aep_demo_wec_mwh.geojson")
	runcheck.RequireFiles(t, res.Runs[1].Result.OutDir, runcheck.AllTables...)
	aep := runcheck.ReadColumn(t, filepath.Join(res.Runs[0].Result.OutDir, "cells.parquet"), "aep_demo_wec_mwh")
	n := 0
	for _, v := range aep {
		if v > 0 {
			n++
		}
	}
	if n == 0 {
		t.Error("no cell has a device yield")
	}
	runcheck.CheckDemoExtremes(t, res.Runs[0].Result.OutDir)
	// The grid atlas takes the demo's own validation: the cells within
	// reach of the invented station have bias-corrected energies beside the
	// raw ones, lower (the station reads the hindcast's Hm0 as (h - 0.15 m)
	// / 1.05 plus noise, station.go), the others none.
	corr := runcheck.ReadColumn(t, filepath.Join(res.Runs[0].Result.OutDir, "cells.parquet"), "aep_demo_wec_corr_mwh")
	nc := 0
	for id, v := range corr {
		if math.IsNaN(v) {
			continue
		}
		nc++
		if !(v > 0 && v < aep[id]) {
			t.Errorf("cell %d: bias-corrected AEP %g, raw %g: want positive and below the raw", id, v, aep[id])
		}
	}
	if nc == 0 || nc == len(corr) {
		t.Errorf("%d of %d cells have a bias-corrected AEP; want those near the station only", nc, len(corr))
	}
	// A small memory budget splits the cells into several passes (cell
	// ranges read separately); the tables are byte-identical to one pass.
	s := Specs(dir)[0]
	s.Output.Dir = t.TempDir()
	s.Run.MemoryLimit = "96MiB" // one cell of the 30-year demo needs about 90 MiB; 96 MiB gives several passes (the plan's count is in the log)
	mustRun(t, s)
	passes, _ := filepath.Glob(filepath.Join(s.Output.Dir, lock.StateDir, "pass-*.ckpt"))
	if len(passes) < 2 {
		t.Fatalf("96MiB gives %d passes; the test needs several", len(passes))
	}
	runcheck.SameBytes(t, "passes", runcheck.ParquetFiles(t, res.Runs[0].Result.OutDir), runcheck.ParquetFiles(t, s.Output.Dir))
}

// mustRun runs spec s with the run engine, failing t on an error.
func mustRun(t *testing.T, s *runspec.Spec) {
	t.Helper()
	if _, err := engine.Run(context.Background(), s, engine.Options{Version: "test"}); err != nil {
		t.Fatalf("run %v: %v", s.Input.Paths, err)
	}
}

// testSpec is the default spec on input (relative to the repository) into out.
func testSpec(t *testing.T, input string, out string) *runspec.Spec {
	t.Helper()
	s := runspec.DefaultSpec()
	s.Input.Paths, s.Output.Dir = []string{filepath.Join("..", "..", input)}, out
	return s
}
