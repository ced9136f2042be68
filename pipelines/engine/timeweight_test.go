package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// The time-weighting checks (issue 27): the whole pipeline on the fixtures of
// testdata/timeweight (written by make_fixtures.py with Debian's
// python3-netcdf4; invented, synthetic data, 1 x 2 cells, bulk Hm0, Te, Tp
// and direction in monthly CF files), whose time steps change length: a
// 3-hourly record extended by an hourly year (a), an hourly year with three
// 3-hourly months (b), steps of 1.5 h and 3 h alternating (c), monthly files
// that repeat the next month's first step with identical values (d) and with
// different values (e: refused, or with input.duplicate_steps "first" or
// "last"). Every table is compared with reference_<variant>.json, which
// testdata/timeweight/reference.py computes from the NetCDF files with numpy
// and scipy alone, weighting every step by its duration (the rule stated in
// its docstring and the README), and the manifest's time segments,
// duplicates and gaps with the same reference.
//
// Tolerances: means and energies 1e-6 relative, and half the quantum in
// which the state sums each value (stats/climate/fixed.go: J in 1/16 W/m,
// Hm0, Te, Tp in 2^-20 m or s): a mean over one or a few steps (a scatter bin)
// is that value rounded; percentiles within one histogram bin; hours,
// windows, counts and flags exact; fitted parameters as in the e2e test
// (e2e_columns_test.go, two optimisers). Fits are compared where the
// reference makes them (at least extremes.min_peaks peaks); the GEV of these
// short records is never published (few_years, or no_fit under 3 years), and
// its row count, nulls and flags are checked.

// twVariants are the fixtures run to completion (spec_<variant>.toml).
var twVariants = []string{"a", "b", "c", "d", "e_first", "e_last"}

// twTol is a column tolerance (colTol, e2e_columns_test.go).
type twTol = colTol

var (
	twPower  = twTol{tol: tol{1.0 / 32 / 1000 * 1.02, 1e-6}} // kW/m: 1e-6, or half of 1/16 W/m (and 2 % of it for the two group-velocity solvers)
	twMean   = twTol{tol: tol{0x1p-21, 1e-6}}                // Hm0, Te, Tp: 1e-6, or half of 2^-20 m or s
	twEnergy = twTol{tol: tol{0, 1e-6}}                      // device power (quantum 2^-16 kW, far below 1e-6 of the means here)
	twExact  = twTol{tol: exact}
	twShare  = twTol{tol: tolShare}
	twShareJ = twTol{tol: tol{1e-7, 1e-6}}
	twHm0Bin = twTol{tol: tol{0.05 + 1e-9, 0}}         // one Hm0 bin (statistics.hm0_bin_m)
	twJBin   = twTol{tol: tol{1.0 / 32, 0.022}}        // one power bin: 1/32 kW/m, or 2^(1/32) - 1 of the value
	twIndex  = twTol{tol: tol{0, 1e-5}}                // ratios of differences of means (as in the e2e test)
	twThr    = twTol{tol: tol{1e-9, 0}}                // grouped quantiles of the same Hm0 values and hours
	twRate   = twTol{tol: tol{0, 2.5e-3}}              // peaks per year: a year of 8766 h here, of the calendar there
	twFitLvl = twTol{tol: tolFitLevel, optional: true} // fitted parameters and levels (see tolFitLevel)
)

// twCellCols are the cells.parquet columns compared with the reference.
var twCellCols = map[string]twTol{
	"steps": twExact, "depth_m": twExact, "coverage": twShare,
	"power_mean_kw_m": twPower, "power_std_kw_m": twPower, "power_cov": twEnergy, "power_max_kw_m": twPower,
	"hm0_mean_m": twMean, "hm0_max_m": twMean, "te_mean_s": twMean, "tp_mean_s": twMean,
	"dir_mean_deg": {tol: tol{0.06, 0}}, // directions are summed at 0.1 deg (climate.DirResDeg)
	"hm0_p10_m":    twHm0Bin, "hm0_p50_m": twHm0Bin, "hm0_p90_m": twHm0Bin, "hm0_p99_m": twHm0Bin,
	"power_p10_kw_m": twJBin, "power_p50_kw_m": twJBin, "power_p90_kw_m": twJBin, "power_p99_kw_m": twJBin,
	"mvi": twIndex, "svi": twIndex, "interannual_cov": twIndex,
	"interannual_std_kw_m": twIndex, "annual_years": twExact,
	"aep_wec_a_mwh": twEnergy, "aep_wec_b_mwh": twEnergy, "cf_wec_a": twEnergy, "cf_wec_b": twEnergy,
	// shares of energy: sums of J in 1/16 W/m, whose rounding moves a share
	// by at most (1/16 W/m) / mean J (6e-6 here) and in practice far less
	"above_rated_wec_a": twShareJ, "above_rated_wec_b": twShareJ,
	"below_cutin_wec_a": twShareJ, "below_cutin_wec_b": twShareJ,
	"energy_outside_matrix_wec_a_frac": twShareJ, "energy_outside_matrix_wec_b_frac": twShareJ,
	"hm0_depth_limit_m": {tol: tol{1e-12, 0}},
	"gev_years":         twExact,
	// GEV levels: never published on these records (null)
	"hm0_rl2y_m": twExact, "hm0_rl5y_m": twExact, "hm0_rl10y_m": twExact,
	"hm0_rl2y_lo_m": twExact, "hm0_rl5y_lo_m": twExact, "hm0_rl10y_lo_m": twExact,
	"hm0_rl2y_hi_m": twExact, "hm0_rl5y_hi_m": twExact, "hm0_rl10y_hi_m": twExact,
	"te_rl2y_s": twExact, "te_rl5y_s": twExact, "te_rl10y_s": twExact,
	"gpd_threshold_m": twThr, "gpd_peaks_per_year": twRate,
	"gpd_scale_m": {tol: tol{0, 2e-3}, optional: true}, "gpd_shape": {tol: tol{5e-3, 0}, optional: true},
	"hm0_pot_rl2y_m": twFitLvl, "hm0_pot_rl5y_m": twFitLvl, "hm0_pot_rl10y_m": twFitLvl,
	"hm0_pot_rl2y_lo_m": twFitLvl, "hm0_pot_rl5y_lo_m": twFitLvl, "hm0_pot_rl10y_lo_m": twFitLvl,
	"hm0_pot_rl2y_hi_m": {tol: tol{0, 5e-3}, optional: true}, "hm0_pot_rl5y_hi_m": {tol: tol{0, 5e-3}, optional: true},
	"hm0_pot_rl10y_hi_m": {tol: tol{0, 5e-3}, optional: true},
}

// twTable is one long table (or part) compared row by row with a list of the
// reference, matched by keys.
type twTable struct {
	file, ref string
	keys      []string
	where     func(cols map[string][]any, i int) bool
	cols      map[string]twTol
}

var twLevelCols = map[string]twTol{
	"hm0_m": twFitLvl, "hm0_lo_m": twFitLvl, "hm0_hi_m": {tol: tol{0, 5e-3}, optional: true},
	"hm0_delta_lo_m": {tol: tolDelta, optional: true}, "hm0_delta_hi_m": {tol: tolDelta, optional: true},
	"te_s": {tol: tol{0, 1e-3}, optional: true}, "tp_s": {tol: tol{0, 1e-3}, optional: true},
}

func withCols(base map[string]twTol, more map[string]twTol) map[string]twTol {
	out := map[string]twTol{}
	for k, v := range base {
		out[k] = v
	}
	for k, v := range more {
		out[k] = v
	}
	return out
}

var twTables = []twTable{
	// year by year and the AEP bands, weighted by duration (fixture a: two
	// 3-hourly years and an hourly one)
	{"annual.parquet", "annual", []string{"cell_id", "year", "device"}, nil,
		map[string]twTol{"power_mean_kw_m": twPower, "energy_mwh": twEnergy, "valid_hours": twExact, "hours": twExact,
			"coverage_frac": twShare, "excluded": twExact}},
	{"aep_bands.parquet", "aep_bands", []string{"cell_id", "device", "horizon_y"}, nil,
		map[string]twTol{"years_used": twExact, "aep_p50_mwh": twEnergy, "interannual_frac": twIndex, "u_record_frac": twIndex,
			"u_future_frac": twIndex, "u_model_frac": twShare, "u_total_frac": twIndex, "aep_p90_mwh": twEnergy, "aep_p99_mwh": twEnergy}},
	{"monthly.parquet", "monthly", []string{"cell_id", "year", "month"}, periodIs(func(p string) bool { return p == "year_month" }),
		map[string]twTol{"power_mean_kw_m": twPower, "hm0_mean_m": twMean, "valid_hours": twExact, "coverage": twShare, "excluded": twExact}},
	{"monthly.parquet", "climatology", []string{"cell_id", "period", "month"}, periodIs(func(p string) bool { return p != "year_month" }),
		map[string]twTol{"year": twExact, "power_mean_kw_m": twPower, "hm0_mean_m": twMean, "valid_hours": twExact, "coverage": twShare, "excluded": twExact}},
	{"scatter.parquet", "scatter", []string{"cell_id", "hm0_lo_m", "te_lo_s"}, nil,
		map[string]twTol{"hm0_hi_m": twExact, "te_hi_s": twExact, "hours": twExact, "time_share": twShare, "power_mean_kw_m": twPower}},
	{"exceedance.parquet", "exceedance", []string{"cell_id", "variable", "value"}, func(c map[string][]any, i int) bool { return c["variable"][i] == "hm0_m" },
		map[string]twTol{"share_exceeded": twShare}},
	// J may cross a power-histogram edge between the two computations (as in the e2e test)
	{"exceedance.parquet", "exceedance", []string{"cell_id", "variable", "value"}, func(c map[string][]any, i int) bool { return c["variable"][i] == "power_kw_m" },
		map[string]twTol{"share_exceeded": {tol: tol{2.5e-4, 0}}}},
	{"windows.parquet", "windows", []string{"cell_id", "hm0_limit_m", "min_duration_h", "month"}, nil,
		map[string]twTol{"window_hours": twExact, "valid_hours": twExact, "fraction_in_windows": twShare, "windows": twExact, "windows_per_month": twShare}},
	{"extremes.parquet", "extremes", []string{"cell_id", "method", "return_period_y"}, methodIs("gev_annual_maxima"),
		withCols(twLevelCols, map[string]twTol{"n": twExact})},
	{"extremes.parquet", "extremes", []string{"cell_id", "method", "return_period_y"}, methodIs("gpd_storm_peaks"),
		withCols(twLevelCols, map[string]twTol{"n": twExact, "loc_or_threshold_m": twThr,
			"scale_m": {tol: tol{0, 2e-3}, optional: true}, "shape": {tol: tol{5e-3, 0}, optional: true}})},
	{"threshold_diagnostics.parquet", "threshold_diagnostics", []string{"cell_id", "quantile"}, nil,
		map[string]twTol{"threshold_m": twThr, "n_peaks": twExact,
			"mean_excess_m": {tol: tol{1e-9, 1e-9}, optional: true}, "mean_excess_lo_m": {tol: tol{1e-9, 1e-9}, optional: true}, "mean_excess_hi_m": {tol: tol{1e-9, 1e-9}, optional: true},
			"shape": {tol: tol{5e-3, 0}, optional: true}, "shape_lo": {tol: tol{1e-2, 0}, optional: true}, "shape_hi": {tol: tol{1e-2, 0}, optional: true},
			"modified_scale_m": {tol: tol{0, 5e-3}, optional: true}, "modified_scale_lo_m": {tol: tol{0, 2e-2}, optional: true}, "modified_scale_hi_m": {tol: tol{0, 2e-2}, optional: true}}},
}

// twRef is one reference_<variant>.json.
type twRef struct {
	Steps        int                         `json:"steps"`
	CoveredHours float64                     `json:"covered_hours"`
	Start        string                      `json:"time_start"`
	End          string                      `json:"time_end"`
	Segments     []twSegment                 `json:"time_segments"`
	Duplicates   []twDuplicate               `json:"duplicate_steps"`
	Gaps         []twGap                     `json:"gaps"`
	Refused      *twDuplicate                `json:"refused"`
	Policy       *string                     `json:"duplicate_policy"`
	Cells        []map[string]any            `json:"cells"`
	Tables       map[string][]map[string]any `json:"-"`
}

// twSegment and twDuplicate are the manifest's entries (issue 27's names).
type twSegment struct {
	First    string  `json:"first"`
	Last     string  `json:"last"`
	Steps    int     `json:"steps"`
	Hours    float64 `json:"hours"` // the sum of the steps' durations
	StepH    float64 `json:"step_hours"`
	MinStepH float64 `json:"min_step_hours"`
	MaxStepH float64 `json:"max_step_hours"`
}

// twGap is a gap of the record: time that no step covers.
type twGap struct {
	After  string  `json:"after"`
	Before string  `json:"before"`
	Hours  float64 `json:"missing_hours"`
}

type twDuplicate struct {
	Role      string   `json:"role"`  // the reference: one entry per role
	Roles     []string `json:"roles"` // the manifest: one entry per time and pair of files
	Time      string   `json:"time"`
	Files     []string `json:"files"`
	Identical bool     `json:"identical"`
	Used      string   `json:"used"` // the file whose values are used
}

func readTWRef(t *testing.T, variant string) *twRef {
	t.Helper()
	path := "../../testdata/timeweight/reference_" + variant + ".json"
	var r twRef
	readRef(t, path, &r)
	var raw map[string]json.RawMessage
	readRef(t, path, &raw)
	r.Tables = map[string][]map[string]any{}
	for k, v := range raw {
		var rows []map[string]any
		if json.Unmarshal(v, &rows) == nil {
			r.Tables[k] = rows
		}
	}
	return &r
}

// runTW runs the pipeline with testdata/timeweight/spec_<variant>.toml into a
// temporary directory.
func runTW(t *testing.T, variant string) (string, error) {
	t.Helper()
	s, err := runspec.LoadSpec("../../testdata/timeweight/spec_" + variant + ".toml")
	if err != nil {
		return "", err
	}
	s.Output.Dir = t.TempDir()
	_, err = Run(context.Background(), s, Options{Version: "test"})
	return s.Output.Dir, err
}

// TestTimeWeight runs every fixture and compares its tables and manifest with
// the duration-weighted numpy reference.
func TestTimeWeight(t *testing.T) {
	for _, v := range twVariants {
		t.Run(v, func(t *testing.T) {
			ref := readTWRef(t, v)
			out, err := runTW(t, v)
			if err != nil {
				t.Fatalf("run of spec_%s.toml: %v (exit code %d)", v, err, fault.ExitCode(err))
			}
			twCompareCells(t, out, ref)
			for _, tb := range twTables {
				twCompareTable(t, out, tb, ref.Tables[tb.ref])
			}
			twCompareManifest(t, out, ref)
		})
	}
}

// TestTimeWeightDuplicateRefused: a time held by two files with different
// values refuses the run (exit code 2) naming both files and the time, as the
// reference finds them.
func TestTimeWeightDuplicateRefused(t *testing.T) {
	ref := readTWRef(t, "e")
	if ref.Refused == nil {
		t.Fatal("reference_e.json has no refusal: rerun testdata/timeweight/reference.py")
	}
	_, err := runTW(t, "e")
	if err == nil {
		t.Fatalf("the run of spec_e.toml succeeded; %s and %s hold different values at %s", ref.Refused.Files[0], ref.Refused.Files[1], ref.Refused.Time)
	}
	if c := fault.ExitCode(err); c != 2 {
		t.Errorf("exit code %d, want 2 (bad input): %v", c, err)
	}
	msg := err.Error()
	for _, want := range append([]string{ref.Refused.Time}, ref.Refused.Files...) {
		if !strings.Contains(msg, want) {
			t.Errorf("the refusal does not name %q: %v", want, err)
		}
	}
}

func twCompareCells(t *testing.T, out string, ref *twRef) {
	t.Helper()
	cols, err := parquetread.Columns(filepath.Join(out, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if len(cols["cell_id"]) != len(ref.Cells) || len(ref.Cells) == 0 {
		t.Fatalf("%d cells, the reference has %d", len(cols["cell_id"]), len(ref.Cells))
	}
	names := make([]string, 0, len(twCellCols))
	for n := range twCellCols {
		names = append(names, n)
	}
	sort.Strings(names)
	w := worst{}
	for _, name := range names {
		got, ok := cols[name]
		if !ok {
			t.Errorf("cells.parquet has no column %s", name)
			continue
		}
		tl := twCellCols[name]
		for _, r := range ref.Cells {
			id := int(asFloat(r["cell_id"]))
			want, ok := r[name]
			if !ok && !tl.optional {
				t.Fatalf("reference has no cells column %s: rerun testdata/timeweight/reference.py", name)
			}
			if tl.optional && (!ok || want == nil) {
				continue
			}
			g := asFloat(got[id])
			w.see(name, g, asFloat(want), tl.tol)
			if !near(g, asFloat(want), tl.tol) {
				t.Errorf("cell %d: %s = %.9g, numpy (duration-weighted) %.9g", id, name, g, asFloat(want))
			}
		}
	}
	w.log(t, "cells.parquet")
	// The flags that depend on the time weights are present exactly when the
	// reference finds them true of the data.
	for _, r := range ref.Cells {
		id := int(asFloat(r["cell_id"]))
		have := map[string]bool{}
		for _, f := range strings.Split(cols["qc_flags"][id].(string), ",") {
			have[f] = true
		}
		flags, _ := r["flags"].(map[string]any)
		if len(flags) == 0 {
			t.Fatalf("reference cell %d has no flags: rerun testdata/timeweight/reference.py", id)
		}
		for f, v := range flags {
			want, ok := v.(bool)
			if !ok {
				t.Fatalf("reference cell %d flag %s = %v, not a boolean: rerun testdata/timeweight/reference.py", id, f, v)
			}
			if have[f] != want {
				t.Errorf("cell %d: qc_flags %q: %s is %v, the data say %v", id, cols["qc_flags"][id], f, have[f], want)
			}
		}
	}
}

// twCompareTable compares the rows of tb.file that tb.where selects with the
// reference rows: the same rows in the same order, each column within its
// tolerance.
func twCompareTable(t *testing.T, out string, tb twTable, ref []map[string]any) {
	t.Helper()
	compareRows(t, out, rowCheck{file: tb.file, ref: tb.ref, keys: tb.keys, where: tb.where, cols: tb.cols,
		script: "testdata/timeweight/reference.py", source: "numpy (duration-weighted)"}, ref)
}

// twTimeText normalises a time of the manifest (YYYY-MM-DD HH:MM:SS, maybe
// with T or Z) for comparison.
func twTimeText(s string) string {
	return strings.TrimSuffix(strings.Replace(s, "T", " ", 1), "Z")
}

// twCompareManifest checks the record, its segments, gaps and duplicates in
// manifest.json against the reference (issue 27's names: time_segments,
// duplicate_steps).
func twCompareManifest(t *testing.T, out string, ref *twRef) {
	t.Helper()
	data, err := os.ReadFile(filepath.Join(out, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m struct {
		Steps      int                        `json:"steps"`
		Covered    float64                    `json:"covered_hours"`
		Start      string                     `json:"time_start"`
		End        string                     `json:"time_end"`
		Gaps       []twGap                    `json:"gaps"`
		Segments   []twSegment                `json:"time_segments"`
		Duplicates []twDuplicate              `json:"duplicate_steps"`
		Params     map[string]json.RawMessage `json:"parameters"`
	}
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatalf("manifest.json: %v", err)
	}
	if m.Steps != ref.Steps || twTimeText(m.Start) != ref.Start || twTimeText(m.End) != ref.End {
		t.Errorf("manifest: %d steps from %s to %s; the files hold %d distinct times from %s to %s", m.Steps, m.Start, m.End, ref.Steps, ref.Start, ref.End)
	}
	if m.Covered != ref.CoveredHours {
		t.Errorf("manifest: covered_hours %g, the steps' durations sum to %g h", m.Covered, ref.CoveredHours)
	}
	gap := func(g twGap) string {
		return fmt.Sprintf("after %s, before %s: %g h uncovered", twTimeText(g.After), twTimeText(g.Before), g.Hours)
	}
	if len(m.Gaps) != len(ref.Gaps) {
		t.Errorf("manifest: %d gaps, the reference %d", len(m.Gaps), len(ref.Gaps))
	}
	for i := 0; i < max(len(m.Gaps), len(ref.Gaps)); i++ {
		var g, w string
		if i < len(m.Gaps) {
			g = gap(m.Gaps[i])
		}
		if i < len(ref.Gaps) {
			w = gap(ref.Gaps[i])
		}
		if g != w {
			t.Errorf("manifest gaps[%d] = %q, want %q", i, g, w)
		}
	}
	seg := func(s twSegment) string {
		return fmt.Sprintf("%s .. %s, %d steps, %g h, step %g h (%g..%g h)", twTimeText(s.First), twTimeText(s.Last), s.Steps, s.Hours, s.StepH, s.MinStepH, s.MaxStepH)
	}
	if len(m.Segments) != len(ref.Segments) {
		t.Errorf("manifest: %d time segments, the reference %d:", len(m.Segments), len(ref.Segments))
	}
	for i := 0; i < max(len(m.Segments), len(ref.Segments)); i++ {
		var got, want string
		if i < len(m.Segments) {
			got = seg(m.Segments[i])
		}
		if i < len(ref.Segments) {
			want = seg(ref.Segments[i])
		}
		if got != want {
			t.Errorf("manifest time_segments[%d] = %q, want %q", i, got, want)
		}
	}
	// duplicates: one entry per role and shared time, in any order
	dups := func(ds []twDuplicate) []string {
		var out []string
		for _, d := range ds {
			files := make([]string, len(d.Files))
			for i, f := range d.Files {
				files[i] = filepath.Base(f)
			}
			roles := d.Roles
			if len(roles) == 0 {
				roles = []string{d.Role}
			}
			for _, r := range roles {
				out = append(out, fmt.Sprintf("%s at %s in %s: identical=%v, used %s", r, twTimeText(d.Time), strings.Join(files, ", "), d.Identical, filepath.Base(d.Used)))
			}
		}
		sort.Strings(out)
		return out
	}
	got, want := dups(m.Duplicates), dups(ref.Duplicates)
	if len(got) != len(want) {
		t.Errorf("manifest: %d duplicate steps, the reference %d", len(got), len(want))
	}
	for i := 0; i < max(len(got), len(want)); i++ {
		var g, w string
		if i < len(got) {
			g = got[i]
		}
		if i < len(want) {
			w = want[i]
		}
		if g != w {
			t.Errorf("manifest duplicate_steps (sorted) [%d] = %q, want %q", i, g, w)
		}
	}
	// the rule chosen for differing duplicates is recorded (the spec's key)
	if ref.Policy != nil {
		var in map[string]any
		json.Unmarshal(m.Params["input"], &in)
		if in["duplicate_steps"] != *ref.Policy {
			t.Errorf("manifest parameters.input.duplicate_steps = %v, the spec says %q", in["duplicate_steps"], *ref.Policy)
		}
	}
}

// TestTimeWeightReferenceReproduced reruns testdata/timeweight/reference.py
// (Debian's python3 with numpy, scipy and netCDF4; required under CI): it
// must give the committed reference_*.json, and (--check-e2e) its
// duration-weighted computation must reproduce testdata/e2e/reference.json on
// the constant 6-hourly e2e fixture, where every step weighs the same.
func TestTimeWeightReferenceReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy", "netCDF4")
	dir := t.TempDir()
	if out, err := exec.Command(py, "../../testdata/timeweight/reference.py", "--out", dir).CombinedOutput(); err != nil {
		t.Fatalf("reference.py: %v\n%s", err, out)
	}
	for _, v := range append(append([]string{}, twVariants...), "e") {
		var a, b map[string]any
		readRef(t, "../../testdata/timeweight/reference_"+v+".json", &a)
		readRef(t, filepath.Join(dir, "reference_"+v+".json"), &b)
		twSameJSON(t, "reference_"+v, a, b)
	}
	out, err := exec.Command(py, "../../testdata/timeweight/reference.py", "--check-e2e").CombinedOutput()
	if err != nil {
		t.Fatalf("reference.py --check-e2e: %v\n%s", err, out)
	}
	t.Logf("%s", out)
}

// twSameJSON compares two decoded JSON values: numbers within 1e-12 + 1e-9
// relative, everything else equal.
func twSameJSON(t *testing.T, at string, a, b any) {
	t.Helper()
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			t.Errorf("%s: committed %v, recomputed %v", at, twShort(a), twShort(b))
			return
		}
		for k := range x {
			if k == "numpy" || k == "scipy" || k == "netCDF4" {
				continue // versions of the reference libraries
			}
			twSameJSON(t, at+"."+k, x[k], y[k])
		}
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			t.Errorf("%s: committed %d entries, recomputed %v", at, len(x), twShort(b))
			return
		}
		for i := range x {
			twSameJSON(t, fmt.Sprintf("%s[%d]", at, i), x[i], y[i])
		}
	case float64:
		y, ok := b.(float64)
		if !ok || !near(y, x, tol{1e-12, 1e-9}) {
			t.Errorf("%s: committed %v, recomputed %v", at, x, b)
		}
	default:
		if a != b {
			t.Errorf("%s: committed %v, recomputed %v", at, a, b)
		}
	}
}

func twShort(v any) string {
	s := fmt.Sprint(v)
	if len(s) > 80 {
		s = s[:80] + "..."
	}
	return s
}

// An update whose new files have a finer step than the earlier ones (two
// years 3-hourly, then a year hourly: fixture a) gives the tables of a full
// run, byte for byte: the saved states continue across the change of step.
// (Shards split rows of cells, and fixture a has one row; the cluster tests
// cover shards.)
// The reference is the single run over the whole record (common practice
// for mergeable accumulators: A+B equals the state of the concatenated
// record); its numbers are checked against numpy by TestTimeWeight.
func TestTimeWeightUpdate(t *testing.T) {
	src, err := filepath.Abs("../../testdata/timeweight/a_step_change")
	if err != nil {
		t.Fatal(err)
	}
	files, _ := filepath.Glob(filepath.Join(src, "*.nc"))
	sort.Strings(files)
	if len(files) != 36 {
		t.Fatalf("fixture a: %d files, want 36", len(files))
	}
	tmp := t.TempDir()
	spec := func(in []string, out string) *runspec.Spec {
		s := clSpec(in, out)
		return s
	}
	full := filepath.Join(tmp, "full")
	clRun(t, spec([]string{src}, full), Options{})
	want := runcheck.RunOutputs(t, full)

	grow := filepath.Join(tmp, "grow")
	os.MkdirAll(grow, 0o755)
	copyInto(t, grow, files[:24]) // the 3-hourly years
	run := filepath.Join(tmp, "run")
	clRun(t, spec([]string{grow}, run), Options{})
	if bytes.Equal(runcheck.RunOutputs(t, run)["cells.parquet"], want["cells.parquet"]) {
		t.Fatal("the 3-hourly years alone gave the whole record's tables: the comparison would prove nothing")
	}
	copyInto(t, grow, files[24:]) // the hourly year
	clRun(t, spec([]string{grow}, run), Options{Update: true})
	runcheck.SameOutputs(t, "3-hourly years + update with the hourly year", want, runcheck.RunOutputs(t, run))

}

// Monthly files that repeat the next month's first step (fixture d): an
// update adding later months reads the shared step once, from the earlier
// file, and gives the full run's tables; with input.duplicate_steps =
// "last" the shared step would move to the new file, changing what the
// saved states hold, and the update is refused saying so (exit 2).
func TestTimeWeightUpdateSharedStep(t *testing.T) {
	src, err := filepath.Abs("../../testdata/timeweight/d_dup_equal")
	if err != nil {
		t.Fatal(err)
	}
	files, _ := filepath.Glob(filepath.Join(src, "*.nc"))
	sort.Strings(files)
	if len(files) != 4 {
		t.Fatalf("fixture d: %d files, want 4", len(files))
	}
	for _, policy := range []runspec.DuplicateSteps{runspec.DuplicatesRefused, runspec.DuplicatesLast} {
		tmp := t.TempDir()
		spec := func(in []string, out string) *runspec.Spec {
			s := clSpec(in, out)
			s.Input.DuplicateSteps = policy
			return s
		}
		full := filepath.Join(tmp, "full")
		clRun(t, spec([]string{src}, full), Options{})
		grow := filepath.Join(tmp, "grow")
		os.MkdirAll(grow, 0o755)
		copyInto(t, grow, files[:2])
		run := filepath.Join(tmp, "run")
		clRun(t, spec([]string{grow}, run), Options{})
		copyInto(t, grow, files[2:])
		_, err := Run(context.Background(), spec([]string{grow}, run), Options{Update: true, Version: "test"})
		if policy == "" {
			if err != nil {
				t.Fatalf("update over a shared step: %v", err)
			}
			runcheck.SameOutputs(t, "2 months + update with 2 more (shared steps)", runcheck.RunOutputs(t, full), runcheck.RunOutputs(t, run))
			continue
		}
		if err == nil || !IsUpdateRefused(err) || !strings.Contains(err.Error(), "begins at step") {
			t.Errorf("duplicate_steps = \"last\": update gave %v, want a refusal saying where the new file begins", err)
		}
	}
}
