package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/ingest"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/inspect"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/validation"
)

// axesRef is testdata/spectral_axes/reference.json: for the three monthly
// files of testdata/spectral_axes/make_fixtures.py (python3-netcdf4;
// invented, synthetic spectra whose axes change from 25 x 24 to 32 x 36
// log-spaced bins and then to 25 x 24 other bins), the record columns per
// station, the monthly means and the direction sectors, each file's spectra
// integrated on its own bins, computed independently of swellgrid by
// testdata/spectral_axes/reference.py (numpy and scipy; definitions in its
// docstring).
type axesRef struct {
	Cells      []map[string]any   `json:"cells"`
	Monthly    []map[string]any   `json:"monthly"`
	Directions []map[string]any   `json:"directions"`
	Continuity map[string]float64 `json:"continuity"`
}

// TestSpectralAxesChangeAgainstNumpy runs a record whose spectral axes
// change between files (issue 34's model upgrade): exit 0; cells.parquet
// (power 1e-6 relative, Hm0 and Te 1e-6, directions 0.01 deg: the issue's
// figures; Tp and the width as in spectral_e2e_test.go), every year-month of
// monthly.parquet and every sector of directions.parquet equal numpy's on
// each file's own bins; station 2, the same sea at every step, keeps its
// monthly means across both changes within the reference's sampling
// difference; the manifest and inspect list the three axis segments. A
// file run alone gives its month's values, and its manifest has no
// spectral_axis_segments (a record on one set of axes is unchanged).
func TestSpectralAxesChangeAgainstNumpy(t *testing.T) {
	var ref axesRef
	readRef(t, "../../testdata/spectral_axes/reference.json", &ref)
	s := conventionsSpec(t, "testdata/spectral_axes")
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatalf("a record whose spectral axes change: %v", err)
	}
	out := s.Output.Dir
	checkConventionColumns(t, out, ref.Cells)
	d, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), "cell_id", "tp_mean_s", "width_mean")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range ref.Cells {
		i := int(asFloat(r["cell_id"])) // one row per station, in cell order
		for _, c := range []string{"tp_mean_s", "width_mean"} {
			if got, want := asFloat(d[c][i]), asFloat(r[c]); !near(got, want, spectralTolerances[c]) {
				t.Errorf("cell %d: %s = %.12g, numpy %.12g", i, c, got, want)
			}
		}
	}
	got := monthlyMeans(t, out)
	for _, r := range ref.Monthly {
		k := [2]int64{int64(asFloat(r["cell_id"])), int64(asFloat(r["month"]))}
		m, ok := got[k]
		if !ok {
			t.Fatalf("monthly.parquet has no row for cell %d 2031-%02d", k[0], k[1])
		}
		if want := asFloat(r["power_mean_kw_m"]); !near(m[0], want, conventionsTolerances["power_mean_kw_m"]) {
			t.Errorf("cell %d 2031-%02d: power_mean_kw_m = %.12g, numpy on the file's own bins %.12g", k[0], k[1], m[0], want)
		}
		if want := asFloat(r["hm0_mean_m"]); !near(m[1], want, conventionsTolerances["hm0_mean_m"]) {
			t.Errorf("cell %d 2031-%02d: hm0_mean_m = %.12g, numpy on the file's own bins %.12g", k[0], k[1], m[1], want)
		}
	}
	// continuity: the one sea of station 2 sampled on three sets of bins
	// differs by the reference's sampling difference (about 0.1 %), which
	// swellgrid's months must not exceed by more than their tolerances
	for k, col := range map[int]string{0: "power_mean_kw_m", 1: "hm0_mean_m"} {
		lo, hi, sum := math.Inf(1), math.Inf(-1), 0.0
		for m := int64(1); m <= 3; m++ {
			x := got[[2]int64{2, m}][k]
			lo, hi, sum = math.Min(lo, x), math.Max(hi, x), sum+x
		}
		spread, allowed := (hi-lo)/(sum/3), ref.Continuity[col]+2e-6
		t.Logf("station 2 %s: months differ by %.3g relative across the axis changes (numpy %.3g)", col, spread, ref.Continuity[col])
		if !(spread <= allowed) || allowed > 0.01 {
			t.Errorf("station 2 %s: months differ by %.3g relative across the axis changes, numpy's sampling difference %.3g", col, spread, ref.Continuity[col])
		}
	}
	checkDirections(t, "spectral axes", out, ref.Directions, 16)

	b, err := os.ReadFile(filepath.Join(out, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var man struct {
		Segs []ingest.AxisSegment `json:"spectral_axis_segments"`
	}
	if err := json.Unmarshal(b, &man); err != nil {
		t.Fatal(err)
	}
	want := []struct {
		first, file string
		nf, nd      int
		lo, hi      float64
	}{
		{"2031-01-01 00:00:00", "axes_2031-01.nc", 25, 24, 0.035, 0.5},
		{"2031-02-01 00:00:00", "axes_2031-02.nc", 32, 36, 0.035, 0.5},
		{"2031-03-01 00:00:00", "axes_2031-03.nc", 25, 24, 0.03, 0.45},
	}
	if len(man.Segs) != len(want) {
		t.Fatalf("manifest's spectral_axis_segments: %+v, want %d segments", man.Segs, len(want))
	}
	for i, w := range want {
		g := man.Segs[i]
		if g.First != w.first || filepath.Base(g.FirstFile) != w.file || g.Files != 1 || g.Frequencies != w.nf || g.Directions != w.nd ||
			math.Abs(g.FreqMinHz-w.lo) > 1e-12 || math.Abs(g.FreqMaxHz-w.hi) > 1e-12 || g.Axes != i {
			t.Errorf("segment %d: %+v, want from %s in %s, %d x %d bins %g .. %g Hz", i, g, w.first, w.file, w.nf, w.nd, w.lo, w.hi)
		}
	}
	if !strings.Contains(string(b), "the spectral axes change between files") {
		t.Errorf("manifest's warnings do not say that the spectral axes change")
	}

	r, err := inspect.Inspect([]string{"../../testdata/spectral_axes"}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var sb strings.Builder
	if err := r.WriteText(&sb); err != nil {
		t.Fatal(err)
	}
	for _, frag := range []string{"spectral axes change between files: 3 segments",
		"2031-01-01 00:00:00 to 2031-01-31 00:00:00: 25 x 24 bins, 0.035 .. 0.5 Hz (1 file, axes_2031-01.nc)",
		"2031-02-01 00:00:00 to 2031-02-28 00:00:00: 32 x 36 bins, 0.035 .. 0.5 Hz (1 file, axes_2031-02.nc)",
		"2031-03-01 00:00:00 to 2031-03-31 00:00:00: 25 x 24 bins, 0.03 .. 0.45 Hz (1 file, axes_2031-03.nc)"} {
		if !strings.Contains(sb.String(), frag) {
			t.Errorf("inspect's text lacks %q:\n%s", frag, sb.String())
		}
	}
	js, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(js), `"spectral_axis_segments":[{"first":"2031-01-01 00:00:00"`) || strings.Count(string(js), `"frequency_min_hz"`) != 3 {
		t.Errorf("inspect's JSON does not list the three segments:\n%s", js)
	}

	// validation reads the record again, each file on its own axes: a
	// station at station 2 measuring a constant 3.35 m and 9.6 s every day
	// has as bias numpy's record means less those (stats/validate: bias =
	// mean of hindcast - measured over the matched times)
	var csv strings.Builder
	csv.WriteString("# invented, synthetic station for spectral_axes_e2e_test.go\ntime,station,lon,lat,hm0_m,te_s\n")
	for day := 0; day < 90; day++ {
		ts := time.Date(2031, 1, 1+day, 0, 0, 0, 0, time.UTC).Format(time.RFC3339)
		csv.WriteString(ts + ",SYN-AXES,-30,53,3.35,9.6\n")
	}
	obs := filepath.Join(t.TempDir(), "station.csv")
	if err := os.WriteFile(obs, []byte(csv.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	vdir := filepath.Join(t.TempDir(), "validation")
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: out, Obs: []string{obs}, OutDir: vdir}); err != nil {
		t.Fatalf("validate on a record whose spectral axes change: %v", err)
	}
	tb, err := rundir.ReadTable(filepath.Join(vdir, "validation.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	for v, measured := range map[string]float64{"hm0": 3.35, "te": 9.6} {
		i := valRowOf(t, tb, "SYN-AXES", v, "all")
		want := asFloat(ref.Cells[2][v+"_mean_"+map[string]string{"hm0": "m", "te": "s"}[v]]) - measured
		if got, n := tb.Col("bias").Value(i), tb.Col("n").Value(i); math.Abs(got-want) > 1e-7 || n != 90 {
			t.Errorf("validation %s: bias %.9g over %v times, numpy's record mean less the measured value %.9g over 90", v, got, n, want)
		}
	}

	// February alone: the month's values, and no axis segments
	s = conventionsSpec(t, "testdata/spectral_axes/axes_2031-02.nc")
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatal(err)
	}
	alone := monthlyMeans(t, s.Output.Dir)
	for id := int64(0); id < 3; id++ {
		k := [2]int64{id, 2}
		if alone[k] != got[k] {
			t.Errorf("cell %d 2031-02: alone %v, in the record %v", id, alone[k], got[k])
		}
	}
	b, err = os.ReadFile(filepath.Join(s.Output.Dir, contract.ManifestFile))
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(b), "spectral_axis_segments") || strings.Contains(string(b), "spectral axes change") {
		t.Errorf("a record on one set of axes has spectral_axis_segments or the warning in its manifest")
	}
}

// monthlyMeans reads monthly.parquet's year-month rows: (cell, month) ->
// (power_mean_kw_m, hm0_mean_m).
func monthlyMeans(t *testing.T, out string) map[[2]int64][2]float64 {
	t.Helper()
	d, err := parquetread.Columns(filepath.Join(out, "monthly.parquet"), "cell_id", "period", "month", "power_mean_kw_m", "hm0_mean_m")
	if err != nil {
		t.Fatal(err)
	}
	m := map[[2]int64][2]float64{}
	for i := range d["cell_id"] {
		if d["period"][i].(string) != "year_month" {
			continue
		}
		m[[2]int64{d["cell_id"][i].(int64), d["month"][i].(int64)}] = [2]float64{asFloat(d["power_mean_kw_m"][i]), asFloat(d["hm0_mean_m"][i])}
	}
	return m
}

// TestSpectralAxesReferenceReproduced reruns
// testdata/spectral_axes/reference.py (Debian's python3 with numpy, scipy
// and netCDF4; required under CI) and checks that it gives the committed
// reference.json.
func TestSpectralAxesReferenceReproduced(t *testing.T) {
	var a, b axesRef
	rerunReference(t, "../../testdata/spectral_axes/reference.py", "../../testdata/spectral_axes/reference.json", &a, &b, "numpy", "scipy", "netCDF4")
	for name, pair := range map[string][2][]map[string]any{"cells": {a.Cells, b.Cells}, "monthly": {a.Monthly, b.Monthly}, "directions": {a.Directions, b.Directions}} {
		if len(pair[0]) != len(pair[1]) {
			t.Fatalf("%s: %d rows committed, %d recomputed", name, len(pair[0]), len(pair[1]))
		}
		for i := range pair[0] {
			for c, x := range pair[0][i] {
				if x, y := asFloat(x), asFloat(pair[1][i][c]); !near(y, x, tol{1e-12, 1e-9}) {
					t.Errorf("%s row %d %s: committed %v, recomputed %v", name, i, c, x, y)
				}
			}
		}
	}
}

// The model upgrade as it comes: a run on January (one set of axes), then
// February and March (two other sets) added by an update, and the same
// through two shards updated and merged, give the tables of a run on the
// three files at once (DESIGN.md: resuming continues the per-cell states),
// and the updated and merged manifests list the three axis segments.
func TestSpectralAxesUpdateSameAsFullRun(t *testing.T) {
	tmp := t.TempDir()
	src, _ := filepath.Glob("../../testdata/spectral_axes/axes_2031-0*.nc")
	if len(src) != 3 {
		t.Fatalf("fixtures %v", src)
	}
	spec := func(in []string, out string) *runspec.Spec {
		s := clSpec(in, out)
		s.Output.Report, s.Output.NetCDF, s.Output.GeoPackage = false, false, false
		return s
	}
	full := filepath.Join(tmp, "full")
	clRun(t, spec(src, full), Options{})
	want := runcheck.RunOutputs(t, full)

	grow := filepath.Join(tmp, "grow")
	os.MkdirAll(grow, 0o755)
	copyInto(t, grow, src[:1])
	run := filepath.Join(tmp, "run")
	clRun(t, spec([]string{grow}, run), Options{})
	if bytes.Equal(runcheck.RunOutputs(t, run)["cells.parquet"], want["cells.parquet"]) {
		t.Fatal("January alone gave the three months' tables: the comparison would prove nothing")
	}
	copyInto(t, grow, src[1:])
	clRun(t, spec([]string{grow}, run), Options{Update: true})
	runcheck.SameOutputs(t, "January + update with February and March", want, runcheck.RunOutputs(t, run))

	grow2 := filepath.Join(tmp, "grow2")
	os.MkdirAll(grow2, 0o755)
	copyInto(t, grow2, src[:1])
	var dirs []string
	for i := 1; i <= 2; i++ {
		d := filepath.Join(tmp, "shard", strconv.Itoa(i))
		clRun(t, spec([]string{grow2}, d), Options{Shard: &Shard{Index: i, Count: 2}})
		dirs = append(dirs, d)
	}
	copyInto(t, grow2, src[1:])
	for _, d := range dirs {
		clRun(t, spec([]string{grow2}, d), Options{Update: true})
	}
	merged := filepath.Join(tmp, "merged")
	if _, err := Merge(context.Background(), merged, dirs, Options{}); err != nil {
		t.Fatal(err)
	}
	runcheck.SameOutputs(t, "2 shards of January, each updated with February and March, merged", want, runcheck.RunOutputs(t, merged))
	for _, d := range []string{run, merged} {
		b, err := os.ReadFile(filepath.Join(d, contract.ManifestFile))
		if err != nil {
			t.Fatal(err)
		}
		var man struct {
			Segs []ingest.AxisSegment `json:"spectral_axis_segments"`
		}
		if err := json.Unmarshal(b, &man); err != nil || len(man.Segs) != 3 || man.Segs[1].Frequencies != 32 || man.Segs[1].Directions != 36 {
			t.Errorf("%s: manifest's spectral_axis_segments %+v (%v), want 3 with February's 32 x 36", d, man.Segs, err)
		}
	}
}
