package pipelines

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"swellgrid/export/parquetread"
	"swellgrid/internal/testtool"
)

// e2eRef is testdata/e2e/reference.json: values computed independently of
// swellgrid by testdata/e2e/reference.py (Debian python3-numpy, python3-scipy,
// python3-netcdf4) from the fixture written by testdata/e2e/make_fixture.py
// (python3-netcdf4; invented, synthetic data).
type e2eRef struct {
	Cells   []map[string]any `json:"cells"`
	Monthly []map[string]any `json:"monthly"`
}

// tol is a column's tolerance: |got - want| <= abs + rel |want|.
type tol struct{ abs, rel float64 }

// e2eCellTolerances: every cells.parquet column the reference computes, with
// the reason for its tolerance.
var e2eCellTolerances = map[string]tol{
	"depth_m":  {0, 0},
	"coverage": {1e-12, 0},
	// The state sums fixed-point values (stats/climate/fixed.go): J in
	// 1/16 W/m, Hm0, Te, Tp in 2^-20 m or s, device power in 2^-16 kW; the
	// tolerances are those quanta (and their effect on ratios).
	"power_mean_kw_m": {1e-4, 1e-9},
	"power_std_kw_m":  {1e-4, 1e-8},
	"power_cov":       {0, 1e-5},
	"power_max_kw_m":  {1e-4, 1e-9},
	"hm0_mean_m":      {2e-6, 0},
	"hm0_max_m":       {2e-6, 0},
	"te_mean_s":       {2e-6, 0},
	"tp_mean_s":       {2e-6, 0},
	"dir_mean_deg":    {0.06, 0}, // directions are summed at 0.1 deg (climate.DirResDeg)
	"mvi":             {0, 1e-5},
	"svi":             {0, 1e-5},
	"interannual_cov": {0, 1e-5},
	"aep_wec_a_mwh":   {1e-3, 1e-9},
	"aep_wec_b_mwh":   {1e-3, 1e-9},
	"cf_wec_a":        {1e-6, 1e-9},
	"cf_wec_b":        {1e-6, 1e-9},
	// percentiles from histograms: one bin (0.05 m; J 2^(1/32) - 1 = 2.2 %)
	"hm0_p10_m": {0.05 + 1e-9, 0}, "hm0_p50_m": {0.05 + 1e-9, 0}, "hm0_p90_m": {0.05 + 1e-9, 0}, "hm0_p99_m": {0.05 + 1e-9, 0},
	"power_p10_kw_m": {1.0 / 32, 0.022}, "power_p50_kw_m": {1.0 / 32, 0.022}, "power_p90_kw_m": {1.0 / 32, 0.022}, "power_p99_kw_m": {1.0 / 32, 0.022},
	"gpd_threshold_m": {0.05 + 1e-9, 0}, // the 99 % quantile of Hm0, from the histogram
	// GEV: maximum likelihood by two optimisers (gonum here, scipy's
	// fmin there) agree to the optimiser tolerances; the return levels
	// follow. The delta-method bounds use a finite-difference Hessian in
	// the reference: 2 % of the level.
	"gev_loc_m": {0, 2e-3}, "gev_scale_m": {0, 5e-3}, "gev_shape": {5e-3, 0},
	"hm0_rl2y_m": {0, 3e-3}, "hm0_rl5y_m": {0, 3e-3}, "hm0_rl10y_m": {0, 3e-3},
}

// e2eDeltaTolerance: the delta-method bounds (extremes.parquet
// hm0_delta_lo_m/hm0_delta_hi_m) against the reference's, whose Hessian is a
// finite difference of scipy's nnlf: 2 % of the level.
var e2eDeltaTolerance = tol{0, 2e-2}

// e2eNotCompared: columns of the fixture run that the reference does not
// compute yet, with what the test checks of them instead.
var e2eNotCompared = map[string]string{
	"cell_id": "equals the row index", "lon": "fixture coordinates", "lat": "fixture coordinates",
	"steps": "the steps of the files", "gev_years": "12 complete years",
	"dir_max_power_deg": "bulk: the mean direction (README)", "directionality": "null on bulk", "width_mean": "null on bulk",
	"bad_bins": "0 on bulk", "invalid_values": "0", "rejected_steps": "0", "qc_flags": "no no_data",
	"hm0_rl2y_lo_m": "profile interval: equals extremes.parquet, brackets the level (values against R evd in the extremes tests)",
	"hm0_rl5y_lo_m": "profile interval: as above", "hm0_rl10y_lo_m": "profile interval: as above",
	"hm0_rl2y_hi_m": "profile interval: as above", "hm0_rl5y_hi_m": "profile interval: as above", "hm0_rl10y_hi_m": "profile interval: as above",
	"te_rl2y_s": "not compared", "te_rl5y_s": "not compared", "te_rl10y_s": "not compared",
	"hm0_pot_rl2y_m": "not compared", "hm0_pot_rl5y_m": "not compared", "hm0_pot_rl10y_m": "not compared",
	"hm0_pot_rl2y_lo_m": "not compared", "hm0_pot_rl5y_lo_m": "not compared", "hm0_pot_rl10y_lo_m": "not compared",
	"hm0_pot_rl2y_hi_m": "not compared", "hm0_pot_rl5y_hi_m": "not compared", "hm0_pot_rl10y_hi_m": "not compared",
	"gpd_scale_m": "not compared", "gpd_shape": "not compared", "gpd_peaks_per_year": "not compared",
	"above_rated_wec_a": "share in [0, 1]", "above_rated_wec_b": "share in [0, 1]",
	"below_cutin_wec_a": "share in [0, 1]", "below_cutin_wec_b": "share in [0, 1]",
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
	case nil:
		return math.NaN()
	case bool:
		if x {
			return 1
		}
		return 0
	}
	panic(fmt.Sprintf("not a number: %v", v))
}

// runE2E runs the pipeline on the e2e fixture and returns its output directory.
func runE2E(t *testing.T) string {
	t.Helper()
	s, err := LoadSpec("../testdata/e2e/spec.toml")
	if err != nil {
		t.Fatal(err)
	}
	s.Output.Dir = t.TempDir()
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatal(err)
	}
	return s.Output.Dir
}

// TestE2EColumnsAgainstNumpy runs the whole pipeline on the bulk fixture
// (gaps, finite depth, two devices, 12 years) and compares each cells.parquet
// column and the year-month rows of monthly.parquet and the GEV rows of
// extremes.parquet with the independent numpy/scipy computation.
func TestE2EColumnsAgainstNumpy(t *testing.T) {
	var ref e2eRef
	readRef(t, "../testdata/e2e/reference.json", &ref)
	out := runE2E(t)
	cells := filepath.Join(out, "cells.parquet")
	cols, err := parquetread.Columns(cells)
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
			switch y := x.(type) {
			case int64:
				f[i] = float64(y)
			case nil:
				f[i] = math.NaN()
			case float64:
				f[i] = y
			default:
				t.Fatalf("%s: value %v", name, x)
			}
		}
		return f
	}
	if len(cols["cell_id"]) != len(ref.Cells) {
		t.Fatalf("%d cells, the reference has %d", len(cols["cell_id"]), len(ref.Cells))
	}
	names := make([]string, 0, len(e2eCellTolerances))
	for n := range e2eCellTolerances {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, name := range names {
		got := num(name)
		for _, rc := range ref.Cells {
			id := int(asFloat(rc["cell_id"]))
			want := asFloat(rc[name])
			if !near(got[id], want, e2eCellTolerances[name]) {
				t.Errorf("cell %d: %s = %.9g, numpy/scipy %.9g", id, name, got[id], want)
			}
		}
	}
	// The rest of the columns, checked as far as the fixture says.
	var uncompared []string
	for name := range cols {
		if _, ok := e2eCellTolerances[name]; !ok && name != "geometry" {
			if _, ok := e2eNotCompared[name]; !ok {
				uncompared = append(uncompared, name)
			}
		}
	}
	sort.Strings(uncompared)
	if len(uncompared) > 0 {
		t.Logf("cells.parquet columns without an end-to-end check yet: %s (add them to testdata/e2e/reference.py)", strings.Join(uncompared, ", "))
	}
	lon, lat, dmax, dmean := num("lon"), num("lat"), num("dir_max_power_deg"), num("dir_mean_deg")
	steps, years := num("steps"), num("gev_years")
	for id := range lon {
		if lon[id] != 10+0.5*float64(id%3) || lat[id] != 50+0.5*float64(id/3) {
			t.Errorf("cell %d at (%g, %g), the fixture has (%g, %g)", id, lon[id], lat[id], 10+0.5*float64(id%3), 50+0.5*float64(id/3))
		}
		if dmax[id] != dmean[id] {
			t.Errorf("cell %d: bulk dir_max_power_deg %g is not the mean direction %g", id, dmax[id], dmean[id])
		}
		if want := asFloat(ref.Cells[id]["steps"]); steps[id] != want {
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
		for _, c := range []string{"bad_bins", "invalid_values", "rejected_steps"} {
			if v := num(c)[id]; v != 0 {
				t.Errorf("cell %d: %s = %g, want 0", id, c, v)
			}
		}
		for _, c := range []string{"above_rated_wec_a", "above_rated_wec_b", "below_cutin_wec_a", "below_cutin_wec_b"} {
			if v := num(c)[id]; !(v >= 0 && v <= 1) {
				t.Errorf("cell %d: %s = %g, not a share", id, c, v)
			}
		}
		if f := cols["qc_flags"][id].(string); strings.Contains(f, "no_data") {
			t.Errorf("cell %d: qc_flags %q", id, f)
		}
	}

	// monthly.parquet, the year-month rows.
	mp := filepath.Join(out, "monthly.parquet")
	m, err := parquetread.Columns(mp, "cell_id", "period", "year", "month", "power_mean_kw_m", "hm0_mean_m", "valid_hours", "coverage", "excluded")
	if err != nil {
		t.Fatal(err)
	}
	type key struct{ id, y, mo int64 }
	row := map[key]int{}
	for i, p := range m["period"] {
		if p.(string) == "year_month" {
			row[key{m["cell_id"][i].(int64), m["year"][i].(int64), m["month"][i].(int64)}] = i
		}
	}
	if len(row) != len(ref.Monthly) {
		t.Errorf("monthly.parquet: %d year_month rows, the reference %d", len(row), len(ref.Monthly))
	}
	mtol := map[string]tol{"power_mean_kw_m": {1e-4, 1e-9}, "hm0_mean_m": {2e-6, 0}, "valid_hours": {0, 0}, "coverage": {1e-12, 0}, "excluded": {0, 0}}
	bad := 0
	for _, r := range ref.Monthly {
		k := key{int64(asFloat(r["cell_id"])), int64(asFloat(r["year"])), int64(asFloat(r["month"]))}
		i, ok := row[k]
		if !ok {
			t.Errorf("monthly.parquet: no row for cell %d %d-%02d", k.id, k.y, k.mo)
			continue
		}
		for c, tl := range mtol {
			if got, want := asFloat(m[c][i]), asFloat(r[c]); !near(got, want, tl) && bad < 20 {
				bad++
				t.Errorf("monthly cell %d %d-%02d: %s = %.9g, numpy %.9g", k.id, k.y, k.mo, c, got, want)
			}
		}
	}

	// extremes.parquet, the GEV rows: the levels and bounds of cells.parquet.
	ep := filepath.Join(out, "extremes.parquet")
	x, err := parquetread.Columns(ep, "cell_id", "method", "return_period_y", "hm0_m", "hm0_lo_m", "hm0_hi_m", "hm0_delta_lo_m", "hm0_delta_hi_m", "loc_or_threshold_m", "scale_m", "shape", "n")
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for i := range x["cell_id"] {
		if x["method"][i].(string) != "gev_annual_maxima" {
			continue
		}
		seen++
		rc := ref.Cells[x["cell_id"][i].(int64)]
		tag := periodTag(x["return_period_y"][i].(float64))
		for c, want := range map[string]string{"hm0_m": "hm0_rl" + tag + "y_m",
			"loc_or_threshold_m": "gev_loc_m", "scale_m": "gev_scale_m", "shape": "gev_shape"} {
			if got := asFloat(x[c][i]); !near(got, asFloat(rc[want]), e2eCellTolerances[want]) {
				t.Errorf("extremes.parquet cell %d T=%s: %s = %.6g, scipy %.6g", x["cell_id"][i], tag, c, got, asFloat(rc[want]))
			}
		}
		// The delta-method pair against the reference's delta-method bounds.
		for c, want := range map[string]string{"hm0_delta_lo_m": "hm0_rl" + tag + "y_lo_m", "hm0_delta_hi_m": "hm0_rl" + tag + "y_hi_m"} {
			if got := asFloat(x[c][i]); !near(got, asFloat(rc[want]), e2eDeltaTolerance) {
				t.Errorf("extremes.parquet cell %d T=%s: %s = %.6g, scipy delta method %.6g", x["cell_id"][i], tag, c, got, asFloat(rc[want]))
			}
		}
		// The default (profile-likelihood) interval: the same numbers in
		// both tables, and around the level.
		id := x["cell_id"][i].(int64)
		lo, hi, rl := asFloat(x["hm0_lo_m"][i]), asFloat(x["hm0_hi_m"][i]), asFloat(x["hm0_m"][i])
		if clo, chi := num("hm0_rl" + tag + "y_lo_m")[id], num("hm0_rl" + tag + "y_hi_m")[id]; clo != lo || chi != hi {
			t.Errorf("cell %d T=%s: cells.parquet interval [%g, %g], extremes.parquet [%g, %g]", id, tag, clo, chi, lo, hi)
		}
		if !(lo > 0 && lo < rl && rl < hi) {
			t.Errorf("cell %d T=%s: profile interval [%g, %g] does not bracket the level %g", id, tag, lo, hi, rl)
		}
		if n := x["n"][i].(int64); n != 12 {
			t.Errorf("extremes.parquet cell %d: n = %d annual maxima, want 12", x["cell_id"][i], n)
		}
	}
	if seen != 3*len(ref.Cells) {
		t.Errorf("extremes.parquet: %d GEV rows, want 3 periods x %d cells", seen, len(ref.Cells))
	}
}

// TestE2EReferenceReproduced reruns testdata/e2e/reference.py (needs Debian's
// python3 with numpy, scipy and netCDF4; required under CI) and checks that it
// gives the committed reference.json.
func TestE2EReferenceReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy", "netCDF4")
	tmp := filepath.Join(t.TempDir(), "reference.json")
	if out, err := exec.Command(py, "../testdata/e2e/reference.py", tmp).CombinedOutput(); err != nil {
		t.Fatalf("reference.py: %v\n%s", err, out)
	}
	var a, b map[string]any
	for p, v := range map[string]*map[string]any{"../testdata/e2e/reference.json": &a, tmp: &b} {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, v); err != nil {
			t.Fatal(err)
		}
	}
	for _, table := range []string{"cells", "monthly"} {
		ra, rb := a[table].([]any), b[table].([]any)
		if len(ra) != len(rb) {
			t.Fatalf("%s: %d rows committed, %d recomputed", table, len(ra), len(rb))
		}
		for i := range ra {
			for k, va := range ra[i].(map[string]any) {
				vb := rb[i].(map[string]any)[k]
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
