package engine

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/runspec"
)

// TestAccessAgainstNumpy runs testdata/access/spec.toml on the fixture
// nc/ (monthly files, python3-netcdf4; invented, synthetic: a known 30 h calm / 18 h
// storm cycle and a random sea, hourly then 3-hourly with a two-day gap)
// and compares the repair-access columns of cells.parquet and the rows of
// access.parquet with testdata/access/reference.json, which
// make_reference.py computes with numpy alone: the waits by a one-minute
// scan of the record (exact: whole and half minutes squared, so 1e-12
// relative), the device energy by month with the bin lookup of
// testdata/e2e/reference.py, the availability per month and its
// energy-weighted mean (1e-6 relative: the device power is summed in
// quanta of 2^-16 kW, stats/climate/fixed.go).
func TestAccessAgainstNumpy(t *testing.T) {
	b, err := os.ReadFile("../../testdata/access/reference.json")
	if err != nil {
		t.Fatalf("reference missing (run /usr/bin/python3 testdata/access/make_reference.py): %v", err)
	}
	var ref struct {
		Cells []map[string]json.RawMessage `json:"cells"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	s, err := runspec.LoadSpec("../../testdata/access/spec.toml")
	if err != nil {
		t.Fatal(err)
	}
	s.Output.Dir = t.TempDir()
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatalf("run of testdata/access/spec.toml: %v", err)
	}
	cells := filepath.Join(s.Output.Dir, "cells.parquet")
	col := func(name string) []float64 {
		v, err := parquetread.Float64s(cells, name)
		if err != nil {
			t.Fatalf("cells.parquet %s: %v", name, err)
		}
		return v
	}
	near := func(what string, got, want, rel float64) {
		t.Helper()
		if math.IsNaN(got) || math.Abs(got-want) > rel*math.Max(1, math.Abs(want)) {
			t.Errorf("%s: got %.12g, numpy %.12g", what, got, want)
		}
	}
	type waitRef struct {
		MeanWaitH     float64    `json:"mean_wait_h"`
		CensoredShare float64    `json:"censored_share"`
		MonthWaitH    []*float64 `json:"month_wait_h"`
		MonthHours    []float64  `json:"month_hours"`
	}
	type devRef struct {
		Availability       float64    `json:"availability"`
		AEPMWh             float64    `json:"aep_mwh"`
		EnergyAvailableMWh float64    `json:"energy_available_mwh"`
		MonthAvailability  []*float64 `json:"month_availability"`
		MonthEnergyShare   []float64  `json:"month_energy_share"`
	}
	rows, err := parquetread.Columns(filepath.Join(s.Output.Dir, "access.parquet"), "cell_id", "device", "month", "access_wait_h", "availability", "energy_share", "record_hours")
	if err != nil {
		t.Fatal(err)
	}
	nrows := 0
	for dev, rule := range map[string]string{"wec_a": "a", "wec_b": "b"} {
		wait, cens := col("access_wait_"+dev+"_h"), col("access_censored_"+dev+"_frac")
		avail, eav, aep := col("availability_"+dev), col("energy_available_"+dev+"_mwh"), col("aep_"+dev+"_mwh")
		for c := range ref.Cells {
			var w waitRef
			var d devRef
			if err := json.Unmarshal(ref.Cells[c][rule], &w); err != nil {
				t.Fatal(err)
			}
			if err := json.Unmarshal(ref.Cells[c][dev], &d); err != nil {
				t.Fatal(err)
			}
			near(dev+" access wait", wait[c], w.MeanWaitH, 1e-12)
			near(dev+" censored share", cens[c], w.CensoredShare, 1e-12)
			near(dev+" aep", aep[c], d.AEPMWh, 1e-6)
			near(dev+" availability", avail[c], d.Availability, 1e-6)
			near(dev+" energy available", eav[c], d.EnergyAvailableMWh, 1e-6)
			for i := range rows["cell_id"] {
				if rows["cell_id"][i].(int64) != int64(c) || rows["device"][i].(string) != dev {
					continue
				}
				nrows++
				m := int(rows["month"][i].(int64)) - 1
				if w.MonthWaitH[m] == nil {
					t.Errorf("%s cell %d: a row for month %d, which has no data", dev, c, m+1)
					continue
				}
				near(dev+" month hours", rows["record_hours"][i].(float64), w.MonthHours[m], 1e-12)
				near(dev+" month wait", rows["access_wait_h"][i].(float64), *w.MonthWaitH[m], 1e-12)
				near(dev+" month availability", rows["availability"][i].(float64), *d.MonthAvailability[m], 1e-12)
				near(dev+" month energy share", rows["energy_share"][i].(float64), d.MonthEnergyShare[m], 1e-6)
			}
		}
	}
	if nrows != 2*2*5 { // two devices, two cells, January to May
		t.Errorf("access.parquet has %d rows of the fixture's months, want 20", nrows)
	}
}

// TestAccessUpdateAndWorkersSameBytes: the access fixture's first two
// monthly files, then an update with the other three (calm runs and open
// stretches cross the files' edges; the states are checkpointed and
// restored in between), with two workers, gives the bytes of one run over
// all five files with one worker (the waits and availabilities of which
// TestAccessAgainstNumpy proves).
func TestAccessUpdateAndWorkersSameBytes(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/access/nc/*.nc")
	sort.Strings(files)
	if len(files) != 5 {
		t.Fatalf("fixture has %d files (run /usr/bin/python3 testdata/access/make_reference.py)", len(files))
	}
	spec := func(dir, out string, workers int) *runspec.Spec {
		s, err := runspec.LoadSpec("../../testdata/access/spec.toml")
		if err != nil {
			t.Fatal(err)
		}
		s.Input.Paths, s.Output.Dir, s.Run.Workers = []string{dir}, out, workers
		return s
	}
	tmp := t.TempDir()
	all := filepath.Join(tmp, "all")
	os.MkdirAll(all, 0o755)
	copyInto(t, all, files)
	full := filepath.Join(tmp, "full")
	clRun(t, spec(all, full, 1), Options{})
	want := runcheck.RunOutputs(t, full)
	grow := filepath.Join(tmp, "grow")
	os.MkdirAll(grow, 0o755)
	copyInto(t, grow, files[:2])
	run := filepath.Join(tmp, "run")
	clRun(t, spec(grow, run, 2), Options{})
	copyInto(t, grow, files[2:])
	clRun(t, spec(grow, run, 2), Options{Update: true})
	runcheck.SameOutputs(t, "two months, then an update with three, two workers", want, runcheck.RunOutputs(t, run))
}
