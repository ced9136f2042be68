package engine

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"swellgrid/export/rundir"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// corrRef is testdata/uncertainty/corr_reference.json (make_corr_ref.py,
// Debian numpy and python3-netcdf4, from the hindcast and device of
// make_fixture.py and the invented station of station_corr.csv).
type corrRef struct {
	Station  string    `json:"station"`
	ReachKm  float64   `json:"reach_km"`
	Pcts     []float64 `json:"percentiles"`
	Hm0Slope float64   `json:"hm0_slope"`
	TeSlope  float64   `json:"te_slope"`
	Cells    []struct {
		ID        int64     `json:"cell_id"`
		StationKm float64   `json:"station_km"`
		InReach   bool      `json:"in_reach"`
		PowerRaw  float64   `json:"power_mean_raw_kw_m"`
		AEPRaw    float64   `json:"aep_raw_mwh"`
		Hm0Corr   float64   `json:"hm0_mean_corr_m"`
		TeCorr    float64   `json:"te_mean_corr_s"`
		PowerCorr float64   `json:"power_mean_corr_kw_m"`
		PctCorr   []float64 `json:"power_pct_corr_kw_m"`
		AEPCorr   float64   `json:"aep_corr_mwh"`
	} `json:"cells"`
}

// The bias-corrected atlas (issue 30, uncertainty.correct = "linear"): a
// run validated against the invented station of station_corr.csv (measured
// Hm0 = hindcast / 1.1 x (1 + AR(1) error), measured Te = hindcast x 0.93 x
// (1 + 2 % noise)) and run again with that validation gives, at the three
// cells within 40 km of the station, the slopes through the origin numpy
// fits to the same pairs and, every sea state corrected before its power
// and the device's power, the means of Hm0', Te' and J', the device's AEP
// and the power percentiles that numpy computes (percentiles within one
// bin of the power histogram, as the e2e test's raw percentiles); the raw
// columns keep numpy's raw figures (the correction never replaces them);
// the six cells beyond reach keep null corrected columns, no station and
// no bias_corrected flag. Workers, shards and a resume give the same bytes.
// Without a validation the correction is refused (exit 2).
func TestBiasCorrectedAtlas(t *testing.T) {
	ref := &corrRef{}
	dir, _, val := validatedUncRun(t, "corr_reference.json", "make_corr_ref.py", ref, "station_corr.csv")
	corrSpec := func(out string, workers int) *runspec.Spec {
		s := uncSpec(t, out)
		s.Uncertainty.Validation, s.Uncertainty.ReachKm, s.Uncertainty.Correct = val, ref.ReachKm, "linear"
		s.Uncertainty.BootstrapReps = 100
		s.Run.Workers = workers
		return s
	}
	a := filepath.Join(dir, "a")
	mustRun(t, corrSpec(a, 1))
	tb, err := rundir.ReadTable(filepath.Join(a, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	col := func(name string) *rundir.Column {
		c := tb.Col(name)
		if c == nil {
			t.Fatalf("cells.parquet has no column %s", name)
		}
		return c
	}
	rel := func(what string, id int64, got, want, abs, tol float64) {
		t.Helper()
		if !(math.Abs(got-want) <= abs+tol*math.Abs(want)) {
			t.Errorf("cell %d: %s = %.12g, numpy %.12g", id, what, got, want)
		}
	}
	// The state sums in fixed point (stats/climate fixed.go): means agree
	// with numpy's to about 1e-8 relative.
	const stateTol = 1e-6
	corrCols := []string{"corr_station_km", "corr_hm0_slope", "corr_te_slope", "hm0_mean_corr_m", "te_mean_corr_s", "power_mean_corr_kw_m", "aep_unc_wec_corr_mwh"}
	for k := range ref.Pcts {
		corrCols = append(corrCols, "power_p"+periodTag(ref.Pcts[k])+"_corr_kw_m")
	}
	ids := col("cell_id")
	inReach := 0
	for i := 0; i < tb.Rows; i++ {
		id := ids.Int[i]
		c := ref.Cells[id]
		rel("power_mean_kw_m (raw)", id, col("power_mean_kw_m").Float[i], c.PowerRaw, 0, stateTol)
		rel("aep_unc_wec_mwh (raw)", id, col("aep_unc_wec_mwh").Float[i], c.AEPRaw, 0, stateTol)
		flagged := strings.Contains(col("qc_flags").Str[i], "bias_corrected")
		if !c.InReach {
			if s := col("corr_station").Str[i]; s != "" || flagged {
				t.Errorf("cell %d (%.1f km): corr_station %q, flagged %v beyond reach", id, c.StationKm, s, flagged)
			}
			for _, n := range corrCols {
				if v := col(n).Float[i]; !math.IsNaN(v) {
					t.Errorf("cell %d (%.1f km): %s = %g beyond reach, want null", id, c.StationKm, n, v)
				}
			}
			continue
		}
		inReach++
		if s := col("corr_station").Str[i]; s != ref.Station || !flagged {
			t.Errorf("cell %d: corr_station %q, flagged %v; want %q, flagged", id, s, flagged, ref.Station)
		}
		rel("corr_station_km", id, col("corr_station_km").Float[i], c.StationKm, 0, 1e-9)
		rel("corr_hm0_slope", id, col("corr_hm0_slope").Float[i], ref.Hm0Slope, 0, 1e-12)
		rel("corr_te_slope", id, col("corr_te_slope").Float[i], ref.TeSlope, 0, 1e-12)
		rel("hm0_mean_corr_m", id, col("hm0_mean_corr_m").Float[i], c.Hm0Corr, 0, stateTol)
		rel("te_mean_corr_s", id, col("te_mean_corr_s").Float[i], c.TeCorr, 0, stateTol)
		rel("power_mean_corr_kw_m", id, col("power_mean_corr_kw_m").Float[i], c.PowerCorr, 0, stateTol)
		rel("aep_unc_wec_corr_mwh", id, col("aep_unc_wec_corr_mwh").Float[i], c.AEPCorr, 0, stateTol)
		for k, p := range ref.Pcts {
			n := "power_p" + periodTag(p) + "_corr_kw_m"
			rel(n, id, col(n).Float[i], c.PctCorr[k], 1.0/32, 0.022) // one bin: 2^(1/32) - 1 = 2.2 %, 1/32 kW/m below 1 kW/m
		}
	}
	if inReach != 3 {
		t.Errorf("%d cells within reach, want 3 (the station's cell and its east and west neighbours)", inReach)
	}
	man, err := os.ReadFile(filepath.Join(a, "manifest.json"))
	if err != nil || !strings.Contains(string(man), `bias-corrected atlas (uncertainty.correct = \"linear\"`) {
		t.Errorf("the manifest does not state the bias correction (%v)", err)
	}
	want := runcheck.ParquetFiles(t, a)

	// three workers, a resume and three shards give the same bytes
	w3 := filepath.Join(dir, "w3")
	mustRun(t, corrSpec(w3, 3))
	runcheck.SameBytes(t, "three workers", want, runcheck.ParquetFiles(t, w3))
	files, _ := filepath.Glob("../../testdata/uncertainty/hindcast_*.nc")
	sort.Strings(files)
	res := filepath.Join(dir, "resumed")
	s1 := corrSpec(res, 2)
	s1.Input.Paths = files[:2]
	mustRun(t, s1)
	s2 := corrSpec(res, 2)
	s2.Input.Paths = files
	mustRun(t, s2)
	runcheck.SameBytes(t, "resumed after two of three files", want, runcheck.ParquetFiles(t, res))
	var shards []string
	for i := 1; i <= 3; i++ {
		d := filepath.Join(dir, "shard", string(rune('0'+i)))
		if _, err := Run(context.Background(), corrSpec(d, 1), Options{Version: "test", Shard: &Shard{Index: i, Count: 3}}); err != nil {
			t.Fatalf("shard %d: %v", i, err)
		}
		shards = append(shards, d)
	}
	merged := filepath.Join(dir, "merged")
	if _, err := Merge(context.Background(), merged, shards, Options{Version: "test", Workers: 2}); err != nil {
		t.Fatalf("merge: %v", err)
	}
	runcheck.SameBytes(t, "three shards merged", want, runcheck.ParquetFiles(t, merged))

	// refused without a validation to take the correction from, and an
	// unknown method
	for _, tc := range []struct{ correct, val, why string }{
		{"linear", "", "needs uncertainty.validation"},
		{"quantile", val, `must be "linear"`},
	} {
		s := corrSpec(filepath.Join(dir, "refused"), 1)
		s.Uncertainty.Correct, s.Uncertainty.Validation = tc.correct, tc.val
		_, err := Run(context.Background(), s, Options{Version: "test"})
		if err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), tc.why) {
			t.Errorf("correct %q, validation %q: %v (exit %d), want exit 2 saying %q", tc.correct, tc.val, err, fault.ExitCode(err), tc.why)
		}
	}
}
