package engine

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/runspec"
)

// The end-to-end column checks: the whole pipeline on the bulk fixture of
// testdata/e2e (written by make_fixture.py with Debian's python3-netcdf4;
// invented, synthetic data: 3 x 2 cells, 12 years 6-hourly, a missing month,
// missing values, depths 12-3000 m, two devices), every table compared with
// testdata/e2e/reference.json, which testdata/e2e/reference.py computes from
// the NetCDF files with python3-numpy and python3-scipy alone (definitions and
// sources in its docstring and beside each function). The tolerances, with
// their reasons, are below. Which column is proven where: columnProofs
// (proofs_test.go).

// tol is a column's tolerance: |got - want| <= abs + rel |want|; both zero
// means exactly equal. A null (NaN) reference value requires null.
type tol struct{ abs, rel float64 }

var exact = tol{}

// Tolerances shared by several tables. The state sums fixed-point values
// (stats/climate/fixed.go): J in 1/16 W/m, Hm0, Te, Tp in 2^-20 m or s,
// device power in 2^-16 kW; the tolerances are those quanta and their effect
// on ratios.
var (
	tolPower = tol{1e-4, 1e-9}
	tolHm0   = tol{2e-6, 0}
	tolShare = tol{1e-12, 0}
	// GEV and GPD maximum likelihood by two optimisers (gonum here, scipy's
	// there) agree to their stopping tolerances; levels and profile ends
	// follow (the profile ends also from two root finders).
	tolFitLevel = tol{0, 3e-3}
	// Delta-method bounds and standard errors: the reference's Hessian is a
	// finite difference of scipy's nnlf, 2 % of the level.
	tolDelta = tol{0, 2e-2}
	// Design contours: grouped-data ML of the Weibull marginal on the 0.05 m
	// histogram and of each 0.5 m row's law of ln Te on its 1 s counts, in
	// both (two optimisers: largest difference seen 9e-8 relative in Hm0);
	// then weighted least squares of mu(h) and sigma(h), gonum's Nelder-Mead
	// and BFGS against scipy's curve_fit (0.16 % in Te seen).
	tolDesignHm0 = tol{0, 1e-5}
	tolDesignTe  = tol{0, 3e-3}
)

// e2eCellTolerances: every cells.parquet column the reference computes.
var e2eCellTolerances = map[string]tol{
	"depth_m":         exact,
	"coverage":        tolShare,
	"power_mean_kw_m": tolPower, "power_std_kw_m": {1e-4, 1e-8}, "power_cov": {0, 1e-5}, "power_max_kw_m": tolPower,
	"hm0_mean_m": tolHm0, "hm0_max_m": tolHm0, "te_mean_s": tolHm0, "tp_mean_s": tolHm0,
	"dir_mean_deg": {0.06, 0}, // directions are summed at 0.1 deg (climate.DirResDeg)
	"mvi":          {0, 1e-5}, "svi": {0, 1e-5}, "interannual_cov": {0, 1e-5},
	// year means of J from fixed-point sums (1/16 W/m a step), their ddof-1 std
	"interannual_std_kw_m": {1e-6, 1e-6}, "annual_years": exact,
	"aep_wec_a_mwh": {1e-3, 1e-9}, "aep_wec_b_mwh": {1e-3, 1e-9},
	"cf_wec_a": {1e-6, 1e-9}, "cf_wec_b": {1e-6, 1e-9},
	// shares of energy: J sums in fixed point; the device classes of a sea
	// state depend on Hm0 and Te only (read identically)
	"above_rated_wec_a": {1e-8, 1e-7}, "above_rated_wec_b": {1e-8, 1e-7},
	"below_cutin_wec_a": {1e-8, 1e-7}, "below_cutin_wec_b": {1e-8, 1e-7},
	"energy_outside_matrix_wec_a_frac": {1e-8, 1e-7}, "energy_outside_matrix_wec_b_frac": {1e-8, 1e-7},
	// percentiles from histograms: one bin (0.05 m; J 2^(1/32) - 1 = 2.2 %)
	"hm0_p10_m": {0.05 + 1e-9, 0}, "hm0_p50_m": {0.05 + 1e-9, 0}, "hm0_p90_m": {0.05 + 1e-9, 0}, "hm0_p99_m": {0.05 + 1e-9, 0},
	"power_p10_kw_m": {1.0 / 32, 0.022}, "power_p50_kw_m": {1.0 / 32, 0.022}, "power_p90_kw_m": {1.0 / 32, 0.022}, "power_p99_kw_m": {1.0 / 32, 0.022},
	// GEV on the 12 calendar-year maxima
	"gev_loc_m": {0, 2e-3}, "gev_scale_m": {0, 5e-3}, "gev_shape": {5e-3, 0},
	"hm0_rl2y_m": tolFitLevel, "hm0_rl5y_m": tolFitLevel, "hm0_rl10y_m": tolFitLevel,
	"hm0_rl2y_lo_m": tolFitLevel, "hm0_rl5y_lo_m": tolFitLevel, "hm0_rl10y_lo_m": tolFitLevel,
	"hm0_rl2y_hi_m": {0, 5e-3}, "hm0_rl5y_hi_m": {0, 5e-3}, "hm0_rl10y_hi_m": {0, 5e-3}, // the flat side of the profile
	// associated Te: least squares on the exceeding storm peaks (the same
	// peaks), evaluated at the level
	"te_rl2y_s": {0, 1e-3}, "te_rl5y_s": {0, 1e-3}, "te_rl10y_s": {0, 1e-3},
	// GPD: the threshold is the grouped-data 99 % quantile of Hm0 (0.05 m
	// bins), computed the same way from the raw values
	"gpd_threshold_m": {1e-9, 0},
	"gpd_scale_m":     {0, 2e-3}, "gpd_shape": {5e-3, 0},
	// the peak rate: the reference divides by the valid time in years of
	// 8766 h; swellgrid by the step count of the record's longest year (2008,
	// a leap year: 366 d), 0.2 % more years (noticed, left to the owner of
	// stats/extremes)
	"gpd_peaks_per_year": {0, 2.5e-3},
	"hm0_pot_rl2y_m":     tolFitLevel, "hm0_pot_rl5y_m": tolFitLevel, "hm0_pot_rl10y_m": tolFitLevel,
	"hm0_pot_rl2y_lo_m": tolFitLevel, "hm0_pot_rl5y_lo_m": tolFitLevel, "hm0_pot_rl10y_lo_m": tolFitLevel,
	"hm0_pot_rl2y_hi_m": {0, 5e-3}, "hm0_pot_rl5y_hi_m": {0, 5e-3}, "hm0_pot_rl10y_hi_m": {0, 5e-3},
	"hm0_depth_limit_m": {1e-12, 0},
	// design contours (see tolDesignHm0, tolDesignTe)
	"design_hm0_1y_m": tolDesignHm0, "design_hm0_10y_m": tolDesignHm0, "design_hm0_50y_m": tolDesignHm0, "design_hm0_100y_m": tolDesignHm0,
	"design_te_1y_s": tolDesignTe, "design_te_10y_s": tolDesignTe, "design_te_50y_s": tolDesignTe, "design_te_100y_s": tolDesignTe,
}

// e2eTable is one long table (or a part of one) compared with a list of
// reference.json row by row.
type e2eTable struct {
	file  string                                  // the run's table
	ref   string                                  // its list in reference.json
	keys  []string                                // columns that identify a row (equal as text)
	where func(cols map[string][]any, i int) bool // the file's rows the list covers (nil: all)
	tols  map[string]tol                          // compared columns
}

func periodIs(want func(string) bool) func(map[string][]any, int) bool {
	return func(c map[string][]any, i int) bool { return want(c["period"][i].(string)) }
}

func methodIs(m string) func(map[string][]any, int) bool {
	return func(c map[string][]any, i int) bool { return c["method"][i].(string) == m }
}

var e2eTables = []e2eTable{
	{"monthly.parquet", "monthly", []string{"cell_id", "year", "month"}, periodIs(func(p string) bool { return p == "year_month" }),
		map[string]tol{"power_mean_kw_m": tolPower, "hm0_mean_m": tolHm0, "valid_hours": exact, "coverage": tolShare, "excluded": exact}},
	// calendar-month climatology and season rows (pooled over the year-months
	// with at least 80 % coverage)
	{"monthly.parquet", "climatology", []string{"cell_id", "period", "month"}, periodIs(func(p string) bool { return p != "year_month" }),
		map[string]tol{"year": exact, "power_mean_kw_m": tolPower, "hm0_mean_m": tolHm0, "valid_hours": exact, "coverage": tolShare, "excluded": exact}},
	{"scatter.parquet", "scatter", []string{"cell_id", "hm0_lo_m", "te_lo_s"}, nil,
		map[string]tol{"hm0_hi_m": exact, "te_hi_s": exact, "hours": exact, "time_share": tolShare, "power_mean_kw_m": tolPower}},
	// exceedance on the histogram edges: Hm0 is read identically; J may
	// cross an edge between the two computations (a few steps of ~17 000)
	{"exceedance.parquet", "exceedance", []string{"cell_id", "variable", "value"}, func(c map[string][]any, i int) bool { return c["variable"][i] == "hm0_m" },
		map[string]tol{"share_exceeded": tolShare}},
	{"exceedance.parquet", "exceedance", []string{"cell_id", "variable", "value"}, func(c map[string][]any, i int) bool { return c["variable"][i] == "power_kw_m" },
		map[string]tol{"share_exceeded": {2.5e-4, 0}}},
	{"windows.parquet", "windows", []string{"cell_id", "hm0_limit_m", "min_duration_h", "month"}, nil,
		map[string]tol{"window_hours": exact, "valid_hours": exact, "fraction_in_windows": tolShare, "windows": exact, "windows_per_month": tolShare}},
	{"extremes.parquet", "extremes", []string{"cell_id", "method", "return_period_y"}, methodIs("gev_annual_maxima"),
		map[string]tol{"hm0_m": tolFitLevel, "hm0_lo_m": tolFitLevel, "hm0_hi_m": {0, 5e-3}, "hm0_delta_lo_m": tolDelta, "hm0_delta_hi_m": tolDelta,
			"te_s": {0, 1e-3}, "tp_s": {0, 1e-3}, "loc_or_threshold_m": {0, 2e-3}, "scale_m": {0, 5e-3}, "shape": {5e-3, 0}, "n": exact,
			"hm0_boot_lo_m": exact, "hm0_boot_hi_m": exact}},
	{"extremes.parquet", "extremes", []string{"cell_id", "method", "return_period_y"}, methodIs("gpd_storm_peaks"),
		map[string]tol{"hm0_m": tolFitLevel, "hm0_lo_m": tolFitLevel, "hm0_hi_m": {0, 5e-3}, "hm0_delta_lo_m": tolDelta, "hm0_delta_hi_m": tolDelta,
			"te_s": {0, 1e-3}, "tp_s": {0, 1e-3}, "loc_or_threshold_m": {1e-9, 0}, "scale_m": {0, 2e-3}, "shape": {5e-3, 0}, "n": exact,
			"hm0_boot_lo_m": exact, "hm0_boot_hi_m": exact}},
	// the threshold ladder: grouped-data quantiles of Hm0, the same storm
	// peaks, GPD fits by two optimisers, covariances from a finite-difference
	// Hessian in the reference
	{"threshold_diagnostics.parquet", "threshold_diagnostics", []string{"cell_id", "quantile"}, nil,
		map[string]tol{"threshold_m": {1e-9, 0}, "n_peaks": exact, "mean_excess_m": {1e-9, 1e-9}, "mean_excess_lo_m": {1e-9, 1e-9}, "mean_excess_hi_m": {1e-9, 1e-9},
			"shape": {5e-3, 0}, "shape_lo": {1e-2, 0}, "shape_hi": {1e-2, 0},
			"modified_scale_m": {0, 5e-3}, "modified_scale_lo_m": {0, 2e-2}, "modified_scale_hi_m": {0, 2e-2}}},
	// year by year: the resource rows (J in 1/16 W/m fixed point) and the
	// device rows (device power in 2^-16 kW fixed point, as aep_<device>_mwh)
	{"annual.parquet", "annual", []string{"cell_id", "year", "device"}, nil,
		map[string]tol{"power_mean_kw_m": tolPower, "energy_mwh": {1e-3, 1e-9}, "valid_hours": exact, "hours": exact,
			"coverage_frac": tolShare, "excluded": exact}},
	// monthly device yield: device power in 2^-16 kW fixed point, as
	// annual.parquet's energies; every year-month of the record and the
	// calendar-month climatology of the included ones
	{"monthly_yield.parquet", "monthly_yield", []string{"cell_id", "device", "period", "year", "month"}, nil,
		map[string]tol{"mean_power_kw": tolPower, "energy_mwh": {1e-3, 1e-9}, "valid_hours": exact, "hours": {1e-9, 0},
			"coverage_frac": tolShare, "years_used": exact, "excluded": exact}},
	// AEP bands: fractions are ratios of the fixed-point year means (a
	// relative error near 1e-8); energies as aep_<device>_mwh. The reference
	// takes z from scipy.stats.norm.ppf, swellgrid from gonum's UnitNormal.
	{"aep_bands.parquet", "aep_bands", []string{"cell_id", "device", "horizon_y"}, nil,
		map[string]tol{"years_used": exact, "aep_p50_mwh": {1e-3, 1e-9}, "interannual_frac": {1e-9, 1e-6},
			"u_record_frac": {1e-9, 1e-6}, "u_future_frac": {1e-9, 1e-6}, "u_model_frac": {1e-15, 0},
			"u_total_frac": {1e-9, 1e-6}, "aep_p90_mwh": {1e-3, 1e-8}, "aep_p99_mwh": {1e-3, 1e-8}}},
	// IFORM contours of the joint model (see the design_* cells columns)
	{"design.parquet", "design", []string{"cell_id", "return_period_y", "point"}, nil,
		map[string]tol{"hm0_m": tolDesignHm0, "te_s": tolDesignTe}},
}

// e2eFixtureChecks: cells.parquet columns the test checks against what the
// fixture is (not values computed by the reference).
var e2eFixtureChecks = map[string]string{
	"cell_id": "the row index", "lon": "the fixture's longitudes", "lat": "the fixture's latitudes",
	"steps": "the steps in the files", "gev_years": "the 12 complete years",
	"dir_max_power_deg": "bulk input: the mean direction (README)", "directionality": "null on bulk input", "width_mean": "null on bulk input",
	"bad_bins": "0 on bulk input", "invalid_values": "0", "rejected_steps": "0", "qc_flags": "no no_data", "name": "empty (no station names in the files)",
}

// e2eNoAccessRule are the columns of a device's repair access, null for
// every cell when the spec gives the device no access rule (as
// testdata/e2e/spec.toml does; testdata/access checks them against numpy).
var e2eNoAccessRule = []string{"access_wait_%s_h", "access_censored_%s_frac", "availability_%s", "energy_available_%s_mwh"}

// isCorrColumn: a column of the bias-corrected atlas (uncertainty.correct;
// TestBiasCorrectedAtlas checks them against numpy), null or empty for
// every cell of the e2e run, which asks for no correction.
func isCorrColumn(name string) bool {
	return strings.HasPrefix(name, "corr_") || strings.Contains(name, "_corr_")
}

func init() {
	for _, d := range []string{"wec_a", "wec_b"} {
		for _, c := range e2eNoAccessRule {
			e2eFixtureChecks[fmt.Sprintf(c, d)] = "null without an access rule"
		}
	}
}

func near(got, want float64, tl tol) bool {
	if math.IsNaN(want) {
		return math.IsNaN(got)
	}
	d := math.Abs(got - want)
	if tl.abs == 0 && tl.rel == 0 {
		return d == 0
	}
	return d <= tl.abs+tl.rel*math.Abs(want)
}

func asFloat(v any) float64 {
	switch x := v.(type) {
	case float64:
		return x
	case int64:
		return float64(x)
	case int32:
		return float64(x)
	case nil:
		return math.NaN()
	case bool:
		if x {
			return 1
		}
		return 0
	}
	panic(fmt.Sprintf("not a number: %v (%T)", v, v))
}

// keyText is a key value as text: numbers in the shortest form, so that the
// JSON 2 and the Parquet 2.0 or int64 2 agree.
func keyText(v any) string {
	if s, ok := v.(string); ok {
		return s
	}
	return strconv.FormatFloat(asFloat(v), 'g', -1, 64)
}

// worst keeps the largest difference seen per column, for the log.
type worst map[string]struct{ d, want, tl float64 }

func (w worst) see(col string, got, want float64, tl tol) {
	d := math.Abs(got - want)
	if math.IsNaN(d) {
		return
	}
	if x, ok := w[col]; !ok || d > x.d {
		w[col] = struct{ d, want, tl float64 }{d, want, tl.abs + tl.rel*math.Abs(want)}
	}
}

func (w worst) log(t *testing.T, table string) {
	names := make([]string, 0, len(w))
	for n := range w {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		x := w[n]
		t.Logf("%s %s: largest difference %.3g (at reference %.6g; tolerance there %.3g)", table, n, x.d, x.want, x.tl)
	}
}

// runE2E runs the pipeline on the e2e fixture and returns its output directory.
func runE2E(t *testing.T) string {
	t.Helper()
	s, err := runspec.LoadSpec("../../testdata/e2e/spec.toml")
	if err != nil {
		t.Fatal(err)
	}
	s.Output.Dir = t.TempDir()
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatal(err)
	}
	return s.Output.Dir
}

func readE2ERef(t *testing.T) map[string][]map[string]any {
	var raw map[string]json.RawMessage
	readRef(t, "../../testdata/e2e/reference.json", &raw)
	out := map[string][]map[string]any{}
	for k, v := range raw {
		var rows []map[string]any
		if json.Unmarshal(v, &rows) == nil {
			out[k] = rows
		}
	}
	return out
}

// TestE2EColumnsAgainstNumpy runs the whole pipeline on the bulk fixture and
// compares every column of every table with the independent numpy/scipy
// computation (reference.json), or with what the fixture is.
func TestE2EColumnsAgainstNumpy(t *testing.T) {
	ref := readE2ERef(t)
	out := runE2E(t)
	cols, err := parquetread.Columns(filepath.Join(out, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	num := func(name string) []float64 {
		v, ok := cols[name]
		if !ok {
			t.Fatalf("cells.parquet has no column %s", name)
		}
		f := make([]float64, len(v))
		for i, x := range v {
			f[i] = asFloat(x)
		}
		return f
	}
	rc := ref["cells"]
	if len(cols["cell_id"]) != len(rc) || len(rc) == 0 {
		t.Fatalf("%d cells, the reference has %d", len(cols["cell_id"]), len(rc))
	}
	names := make([]string, 0, len(e2eCellTolerances))
	for n := range e2eCellTolerances {
		names = append(names, n)
	}
	sort.Strings(names)
	w := worst{}
	for _, name := range names {
		got := num(name)
		for _, r := range rc {
			id := int(asFloat(r["cell_id"]))
			want, ok := r[name]
			if !ok {
				t.Fatalf("reference.json has no %s: rerun testdata/e2e/reference.py", name)
			}
			tl := e2eCellTolerances[name]
			w.see(name, got[id], asFloat(want), tl)
			if !near(got[id], asFloat(want), tl) {
				t.Errorf("cell %d: %s = %.9g, numpy/scipy %.9g", id, name, got[id], asFloat(want))
			}
		}
	}
	w.log(t, "cells.parquet")
	// Every column of the file is compared or checked below.
	for name := range cols {
		if isCorrColumn(name) { // no uncertainty.correct: empty or null everywhere
			for id, x := range cols[name] {
				if s, ok := x.(string); ok && s != "" || !ok && !math.IsNaN(asFloat(x)) {
					t.Errorf("cell %d: %s = %v without uncertainty.correct, want null (or empty)", id, name, x)
				}
			}
			continue
		}
		_, a := e2eCellTolerances[name]
		_, b := e2eFixtureChecks[name]
		if !a && !b && name != "geometry" {
			t.Errorf("cells.parquet column %s is neither compared with testdata/e2e/reference.json nor checked against the fixture: add it to reference.py and e2eCellTolerances", name)
		}
	}
	lon, lat, dmax, dmean := num("lon"), num("lat"), num("dir_max_power_deg"), num("dir_mean_deg")
	steps, years := num("steps"), num("gev_years")
	for id := range lon {
		if num("cell_id")[id] != float64(id) {
			t.Errorf("row %d: cell_id %g", id, num("cell_id")[id])
		}
		if lon[id] != 10+0.5*float64(id%3) || lat[id] != 50+0.5*float64(id/3) {
			t.Errorf("cell %d at (%g, %g), the fixture has (%g, %g)", id, lon[id], lat[id], 10+0.5*float64(id%3), 50+0.5*float64(id/3))
		}
		if dmax[id] != dmean[id] {
			t.Errorf("cell %d: bulk dir_max_power_deg %g is not the mean direction %g", id, dmax[id], dmean[id])
		}
		if want := asFloat(rc[id]["steps"]); steps[id] != want {
			t.Errorf("cell %d: steps %g, the files have %g", id, steps[id], want)
		}
		if years[id] != 12 {
			t.Errorf("cell %d: gev_years %g, want the 12 years of the record", id, years[id])
		}
		for _, c := range []string{"directionality", "width_mean"} {
			if v := num(c)[id]; !math.IsNaN(v) {
				t.Errorf("cell %d: %s = %g on bulk input, want null", id, c, v)
			}
		}
		for _, d := range []string{"wec_a", "wec_b"} {
			for _, c := range e2eNoAccessRule {
				if v := num(fmt.Sprintf(c, d))[id]; !math.IsNaN(v) {
					t.Errorf("cell %d: %s = %g without an access rule, want null", id, fmt.Sprintf(c, d), v)
				}
			}
		}
		for _, c := range []string{"bad_bins", "invalid_values", "rejected_steps"} {
			if v := num(c)[id]; v != 0 {
				t.Errorf("cell %d: %s = %g, want 0", id, c, v)
			}
		}
		if f := cols["qc_flags"][id].(string); strings.Contains(f, "no_data") {
			t.Errorf("cell %d: qc_flags %q", id, f)
		}
		if n := cols["name"][id].(string); n != "" {
			t.Errorf("cell %d: name %q, the fixture names no stations", id, n)
		}
	}

	// the long tables
	for _, tb := range e2eTables {
		compareTable(t, out, tb, ref[tb.ref])
	}
	// the two intervals of a level agree across tables
	x, err := parquetread.Columns(filepath.Join(out, "extremes.parquet"), "cell_id", "method", "return_period_y", "hm0_lo_m", "hm0_hi_m")
	if err != nil {
		t.Fatal(err)
	}
	for i := range x["cell_id"] {
		id, tag := x["cell_id"][i].(int64), periodTag(x["return_period_y"][i].(float64))
		pre := "hm0_rl"
		if x["method"][i] == "gpd_storm_peaks" {
			pre = "hm0_pot_rl"
		}
		lo, hi := asFloat(x["hm0_lo_m"][i]), asFloat(x["hm0_hi_m"][i])
		if clo, chi := num(pre + tag + "y_lo_m")[id], num(pre + tag + "y_hi_m")[id]; clo != lo || chi != hi {
			t.Errorf("cell %d %s T=%s: cells.parquet interval [%g, %g], extremes.parquet [%g, %g]", id, x["method"][i], tag, clo, chi, lo, hi)
		}
	}
}

// compareTable compares the rows of tb.file that tb.where selects with the
// reference rows, matched by tb.keys: the same set of rows, and each column
// of tb.tols within its tolerance.
func compareTable(t *testing.T, out string, tb e2eTable, ref []map[string]any) {
	t.Helper()
	cols := map[string]colTol{}
	for c, tl := range tb.tols {
		cols[c] = colTol{tol: tl}
	}
	compareRows(t, out, rowCheck{file: tb.file, ref: tb.ref, keys: tb.keys, where: tb.where, cols: cols,
		script: "testdata/e2e/reference.py", source: "numpy/scipy"}, ref)
}

// colTol is a column's tolerance; an optional column is compared only where
// the reference has a value (the fits it makes), elsewhere not at all.
type colTol struct {
	tol
	optional bool
}

// rowCheck is one long table (or a part of one) compared with a reference
// list row by row, matched by keys.
type rowCheck struct {
	file, ref string                                  // the run's table and its list in the reference
	keys      []string                                // columns that identify a row (equal as text)
	where     func(cols map[string][]any, i int) bool // the file's rows the list covers (nil: all)
	cols      map[string]colTol                       // compared columns
	script    string                                  // the reference's script (for the messages)
	source    string                                  // what computed the reference
}

// compareRows compares the rows of a run's long table with a reference's
// list: the same rows (by key), in the reference's order (cells, then the
// table's own order: ascending bins and levels, months, periods), each
// compared column within its tolerance.
func compareRows(t *testing.T, out string, tb rowCheck, ref []map[string]any) {
	t.Helper()
	label := tb.file + " (" + tb.ref + ")"
	if len(ref) == 0 {
		t.Fatalf("the reference has no %s rows: rerun %s", tb.ref, tb.script)
	}
	need := append([]string{}, tb.keys...)
	need = append(need, "cell_id")
	for c := range tb.cols {
		need = append(need, c)
	}
	if tb.ref == "monthly" || tb.ref == "climatology" {
		need = append(need, "period")
	}
	if tb.file == "exceedance.parquet" {
		need = append(need, "variable")
	}
	if tb.file == "extremes.parquet" {
		need = append(need, "method")
	}
	sort.Strings(need)
	uniq := need[:0]
	for i, c := range need {
		if i == 0 || c != need[i-1] {
			uniq = append(uniq, c)
		}
	}
	cols, err := parquetread.Columns(filepath.Join(out, tb.file), uniq...)
	if err != nil {
		t.Fatal(err)
	}
	key := func(get func(string) any) string {
		parts := make([]string, len(tb.keys))
		for i, k := range tb.keys {
			parts[i] = keyText(get(k))
		}
		return strings.Join(parts, "|")
	}
	rows := map[string]int{}
	for i := range cols["cell_id"] {
		if tb.where == nil || tb.where(cols, i) {
			rows[key(func(c string) any { return cols[c][i] })] = i
		}
	}
	// the reference rows this check covers
	var mine []map[string]any
	for _, r := range ref {
		if tb.where == nil || tb.where(map[string][]any{"period": {r["period"]}, "method": {r["method"]}, "variable": {r["variable"]}}, 0) {
			mine = append(mine, r)
		}
	}
	if len(rows) != len(mine) {
		t.Errorf("%s: %d rows, the reference %d", label, len(rows), len(mine))
	}
	w := worst{}
	bad, last := 0, -1
	report := func(format string, args ...any) {
		if bad++; bad <= 25 {
			t.Errorf(format, args...)
		}
	}
	for _, r := range mine {
		k := key(func(c string) any { return r[c] })
		i, ok := rows[k]
		if !ok {
			report("%s: no row %s = %s", label, strings.Join(tb.keys, "|"), k)
			continue
		}
		if i < last {
			report("%s: row %s = %s comes before the row the reference lists ahead of it", label, strings.Join(tb.keys, "|"), k)
		}
		last = i
		for c, tl := range tb.cols {
			want, ok := r[c]
			if !ok && !tl.optional {
				t.Fatalf("reference %s rows have no %s: rerun %s", tb.ref, c, tb.script)
			}
			if tl.optional && (!ok || want == nil) {
				continue
			}
			col, ok := cols[c]
			if !ok {
				t.Fatalf("%s has no column %s", tb.file, c)
			}
			got := asFloat(col[i])
			w.see(c, got, asFloat(want), tl.tol)
			if !near(got, asFloat(want), tl.tol) {
				report("%s row %s: %s = %.9g, %s %.9g", label, k, c, got, tb.source, asFloat(want))
			}
		}
	}
	if bad > 25 {
		t.Errorf("%s: %d differences in all", label, bad)
	}
	w.log(t, label)
}

// TestE2EReferenceReproduced reruns testdata/e2e/reference.py (needs Debian's
// python3 with numpy, scipy and netCDF4; required under CI) and checks that it
// gives the committed reference.json.
func TestE2EReferenceReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy", "netCDF4")
	tmp := filepath.Join(t.TempDir(), "reference.json")
	if out, err := exec.Command(py, "../../testdata/e2e/reference.py", tmp).CombinedOutput(); err != nil {
		t.Fatalf("reference.py: %v\n%s", err, out)
	}
	var a, b map[string]any
	for p, v := range map[string]*map[string]any{"../../testdata/e2e/reference.json": &a, tmp: &b} {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, v); err != nil {
			t.Fatal(err)
		}
	}
	for table, va := range a {
		ra, ok := va.([]any)
		if !ok {
			continue
		}
		rb, _ := b[table].([]any)
		if len(ra) != len(rb) {
			t.Fatalf("%s: %d rows committed, %d recomputed", table, len(ra), len(rb))
		}
		for i := range ra {
			for k, va := range ra[i].(map[string]any) {
				vb := rb[i].(map[string]any)[k]
				if sa, ok := va.(string); ok {
					if sa != vb {
						t.Errorf("%s row %d %s: committed %v, recomputed %v", table, i, k, va, vb)
					}
					continue
				}
				if va == nil || vb == nil {
					if va != vb {
						t.Errorf("%s row %d %s: committed %v, recomputed %v", table, i, k, va, vb)
					}
					continue
				}
				if fa, fb := asFloat(va), asFloat(vb); !near(fb, fa, tol{1e-12, 1e-9}) {
					t.Errorf("%s row %d %s: committed %v, recomputed %v", table, i, k, fa, fb)
				}
			}
		}
	}
}
