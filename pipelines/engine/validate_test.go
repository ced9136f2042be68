package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/products"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/validation"
)

// stationExpected is testdata/validate/station_expected.json, made by
// testdata/validate/make_station.py (Debian python3-netcdf4 and numpy): the
// fixture's own Hm0, Te and direction at one cell read with netCDF4, the
// injected errors, and the statistics numpy computes from the station
// files as written.
type stationExpected struct {
	Cell     int                `json:"cell"`
	Injected map[string]float64 `json:"injected"`
	A        map[string]float64 `json:"SYN-A"`
	B        map[string]float64 `json:"SYN-B"`
	Mid      map[string]float64 `json:"SYN-MID"`
}

var (
	valRunOnce sync.Once
	valRunDir  string
	valRunErr  error
)

// validationRun is a finished run of the bulk fixture's first four months,
// shared by the validation tests and removed by TestMain.
func validationRun(t *testing.T) string {
	t.Helper()
	valRunOnce.Do(func() {
		dir, err := os.MkdirTemp("", "swellgrid-validate-run")
		if err != nil {
			valRunErr = err
			return
		}
		valRunDir = dir
		s := testSpec(t, "testdata/bulk_monthly/sgfx_bulk_2001-0[1-4].nc", dir)
		s.Output.Report, s.Output.NetCDF, s.Output.GeoPackage = false, false, false
		_, valRunErr = Run(context.Background(), s, Options{Version: "test"})
	})
	if valRunErr != nil {
		t.Fatal(valRunErr)
	}
	return valRunDir
}

func loadStationExpected(t *testing.T) *stationExpected {
	b, err := os.ReadFile("../../testdata/validate/station_expected.json")
	if err != nil {
		t.Fatalf("run testdata/validate/make_station.py: %v", err)
	}
	e := &stationExpected{}
	if err := json.Unmarshal(b, e); err != nil {
		t.Fatal(err)
	}
	return e
}

// valRowOf returns the validation.parquet row of station, variable, period.
func valRowOf(t *testing.T, tb *rundir.Table, station, variable, period string) int {
	t.Helper()
	st, va, pe := tb.Col("station"), tb.Col("variable"), tb.Col("period")
	for i := 0; i < tb.Rows; i++ {
		if st.Str[i] == station && va.Str[i] == variable && pe.Str[i] == period {
			return i
		}
	}
	t.Fatalf("validation.parquet has no row %s %s %s", station, variable, period)
	return -1
}

func readSummary(t *testing.T, dir string) *contract.ValidationDocument[runspec.ValidationSpec] {
	b, err := os.ReadFile(filepath.Join(dir, "validation.json"))
	if err != nil {
		t.Fatal(err)
	}
	s := &contract.ValidationDocument[runspec.ValidationSpec]{}
	if err := json.Unmarshal(b, s); err != nil {
		t.Fatal(err)
	}
	return s
}

// TestValidateSyntheticStation: stations made from the hindcast's own values
// at a cell with an injected bias, scale, noise and time offsets
// (make_station.py) give back the injected bias and scale within their
// sampling error, the exact statistics numpy computes from the same files,
// and the right numbers of matched, unmatched and outside times; and every
// column of the three tables equals make_columns.py's independent
// computation (numpy, scipy, pyproj; compareValidationColumns).
func TestValidateSyntheticStation(t *testing.T) {
	run := validationRun(t)
	exp := loadStationExpected(t)
	out := t.TempDir()
	res, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{"../../testdata/validate/station_synth.csv"}, OutDir: out})
	if err != nil {
		t.Fatal(err)
	}
	tb, err := rundir.ReadTable(filepath.Join(out, "validation.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	compareValidationColumns(t, out, loadValColumnsRef(t, "../../testdata/validate/columns_expected.json").Runs["nearest"])
	num := func(i int, c string) float64 { return tb.Col(c).Value(i) }
	a := valRowOf(t, tb, "SYN-A", "hm0", "all")
	if int(num(a, "n")) != int(exp.A["n_hm0"]) || int(num(a, "cell_id")) != exp.Cell {
		t.Errorf("SYN-A: n %v at cell %v; want %v at cell %d", num(a, "n"), num(a, "cell_id"), exp.A["n_hm0"], exp.Cell)
	}
	// Against numpy on the same series (CSV values as written, the
	// fixture's float32 values widened): equal to rounding.
	for c, k := range map[string]string{"bias": "hm0_bias", "rmse": "hm0_rmse", "scatter_index": "hm0_si"} {
		if d := math.Abs(num(a, c) - exp.A[k]); d > 1e-9 {
			t.Errorf("SYN-A hm0 %s = %.12g, numpy %.12g", c, num(a, c), exp.A[k])
		}
	}
	// Against the injected bias: within 3 standard errors of the mean.
	bias, se := num(a, "bias"), exp.A["hm0_bias_se"]
	if math.Abs(bias-exp.Injected["hm0_bias_m"]) > 3*se {
		t.Errorf("SYN-A: recovered Hm0 bias %.4f m, injected %.4f m (standard error %.4f)", bias, exp.Injected["hm0_bias_m"], se)
	}
	t.Logf("SYN-A: Hm0 bias %.4f m (injected %.2f, SE %.4f), RMSE %.4f m, SI %.4f; injected noise %.2f m", bias, exp.Injected["hm0_bias_m"], se, num(a, "rmse"), num(a, "scatter_index"), exp.Injected["hm0_noise_m"])
	te := valRowOf(t, tb, "SYN-A", "te", "all")
	if math.Abs(num(te, "bias")-exp.A["te_bias"]) > 1e-9 || math.Abs(num(te, "bias")-exp.Injected["te_bias_s"]) > 3*exp.A["te_bias_se"] {
		t.Errorf("SYN-A: Te bias %.5f s; numpy %.5f, injected %.2f (SE %.4f)", num(te, "bias"), exp.A["te_bias"], exp.Injected["te_bias_s"], exp.A["te_bias_se"])
	}
	dr := valRowOf(t, tb, "SYN-A", "dir", "all")
	if math.Abs(num(dr, "rmse")-exp.A["dir_rmse"]) > 1e-6 || math.Abs(num(dr, "bias")-exp.Injected["dir_bias_deg"]) > 1 || !math.IsNaN(num(dr, "r")) {
		t.Errorf("SYN-A: direction circular RMSE %.5f (numpy %.5f), bias %.3f (injected %.1f), r %v (want null)", num(dr, "rmse"), exp.A["dir_rmse"], num(dr, "bias"), exp.Injected["dir_bias_deg"], num(dr, "r"))
	}
	b := valRowOf(t, tb, "SYN-B", "hm0", "all")
	slope := num(b, "slope_origin")
	seSlope := exp.Injected["scale"] * exp.Injected["relative_noise"] / math.Sqrt(exp.B["matched"])
	if math.Abs(slope-exp.B["slope_origin"]) > 1e-9 || math.Abs(slope-exp.Injected["scale"]) > 3*seSlope {
		t.Errorf("SYN-B: slope through the origin %.5f; numpy %.5f, injected %.3f (SE %.4f)", slope, exp.B["slope_origin"], exp.Injected["scale"], seSlope)
	}
	t.Logf("SYN-B: slope through the origin %.4f (injected %.2f, SE %.4f), symmetric slope %.4f", slope, exp.Injected["scale"], seSlope, num(b, "slope_symmetric"))
	// Power on each side from its own Hm0 and Te; the station B has no Te
	// (power from Te = alpha Tp needs Tp too): no power rows for it.
	pa := valRowOf(t, tb, "SYN-A", "power", "all")
	if !(num(pa, "bias") > 0) || int(num(pa, "n")) == 0 {
		t.Errorf("SYN-A power: bias %v n %v; the model's Hm0 is higher, so is its power", num(pa, "bias"), num(pa, "n"))
	}
	// Every month, season and the storm tail has its row.
	for _, p := range []string{"month_01", "month_04", "DJF", "MAM", "storm_p95"} {
		valRowOf(t, tb, "SYN-A", "hm0", p)
	}
	if r := valRowOf(t, tb, "SYN-A", "hm0", "JJA"); num(r, "n") != 0 || !math.IsNaN(num(r, "bias")) {
		t.Errorf("JJA (no data): n %v bias %v; want 0 and null", num(r, "n"), num(r, "bias"))
	}
	storm := valRowOf(t, tb, "SYN-A", "hm0", "storm_p95")
	if n := num(storm, "n"); !(n >= 0.04*exp.A["n_hm0"] && n <= 0.06*exp.A["n_hm0"]) {
		t.Errorf("storm tail holds %v of %v pairs, want about 5 %%", n, exp.A["n_hm0"])
	}
	sum := readSummary(t, out)
	st := sum.Stations[0]
	if st.Name != "SYN-A" || st.Matched != int(exp.A["matched"]) || st.Outside != int(exp.A["outside"]) || st.Unpaired != int(exp.A["unmatched_inside"]) || st.Measured != int(exp.A["measured"]) {
		t.Errorf("SYN-A: measured %d matched %d outside %d unmatched %d; want %v %v %v %v", st.Measured, st.Matched, st.Outside, st.Unpaired, exp.A["measured"], exp.A["matched"], exp.A["outside"], exp.A["unmatched_inside"])
	}
	if !strings.Contains(st.Attributes["comment"], "invented") {
		t.Errorf("station attributes %v lack the file's comment", st.Attributes)
	}
	pairs, err := rundir.ReadTable(filepath.Join(out, "validation_pairs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if len(pairs.RowsOfStr("station", "SYN-A")) != int(exp.A["matched"]) {
		t.Errorf("validation_pairs.parquet: %d rows of SYN-A, want %v", len(pairs.RowsOfStr("station", "SYN-A")), exp.A["matched"])
	}
	for _, f := range []string{"validation.parquet", "validation_qq.parquet", "validation_pairs.parquet", "validation.json"} {
		found := false
		for _, g := range res.Files {
			found = found || g == f
		}
		if !found {
			t.Errorf("%s not written (%v)", f, res.Files)
		}
	}
	// Interpolated in time: the measured times 45 min after a step are now
	// matched too (between two steps of the record).
	out2 := t.TempDir()
	v := runspec.DefaultValidation()
	v.Time = "interpolate"
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{"../../testdata/validate/station_synth.csv"}, OutDir: out2, Spec: &runspec.Spec{Validation: &v}}); err != nil {
		t.Fatal(err)
	}
	if m := readSummary(t, out2).Stations[0].Matched; m < int(exp.A["matched"]+exp.A["unmatched_inside"])-1 {
		t.Errorf("interpolated: %d matched, want all %v inside the record but at most one at its end", m, exp.A["matched"]+exp.A["unmatched_inside"])
	}
}

// TestValidateBilinearAndDistance: a station midway between four cells is
// refused beyond max_distance_km (naming it, exit code 2) and, allowed,
// matches the mean of the four cells exactly with bilinear location; its
// distance (about 34 km) and every column of the three tables equal
// make_columns.py's (pyproj's WGS 84 geodesic, numpy).
func TestValidateBilinearAndDistance(t *testing.T) {
	run := validationRun(t)
	exp := loadStationExpected(t)
	obs := []string{"../../testdata/validate/station_mid.csv"}
	_, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: obs, OutDir: t.TempDir()})
	if err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), `station "SYN-MID"`) || !strings.Contains(err.Error(), "max_distance_km = 25") || !strings.Contains(err.Error(), "station_mid.csv") {
		t.Errorf("station 28 km away: %v (exit %d); want refused naming the station, the file and the limit", err, fault.ExitCode(err))
	}
	v := runspec.DefaultValidation()
	v.Location, v.MaxDistanceKm = "bilinear", 40
	out := t.TempDir()
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: obs, OutDir: out, Spec: &runspec.Spec{Validation: &v}}); err != nil {
		t.Fatal(err)
	}
	tb, err := rundir.ReadTable(filepath.Join(out, "validation.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	compareValidationColumns(t, out, loadValColumnsRef(t, "../../testdata/validate/columns_expected.json").Runs["bilinear"])
	r := valRowOf(t, tb, "SYN-MID", "hm0", "all")
	if b := tb.Col("bias").Value(r); math.Abs(b-exp.Mid["bilinear_bias"]) > 1e-6 || tb.Col("location").Str[r] != "bilinear" || int(tb.Col("n").Value(r)) != int(exp.Mid["matched"]) {
		t.Errorf("bilinear: bias %g (numpy %g), location %s, n %v", b, exp.Mid["bilinear_bias"], tb.Col("location").Str[r], tb.Col("n").Value(r))
	}
	if w := readSummary(t, out).Stations[0].Weights; len(w) != 4 || math.Abs(w[0]-0.25) > 1e-9 || math.Abs(w[3]-0.25) > 1e-9 {
		t.Errorf("bilinear weights %v, want four of 0.25", w)
	}
}

// TestValidateRefusals: bad observation files are refused with exit code 2,
// the file and what to do.
func TestValidateRefusals(t *testing.T) {
	run := validationRun(t)
	d := t.TempDir()
	late := filepath.Join(d, "late.csv")
	os.WriteFile(late, []byte("time,station,lon,lat,hm0_m\n2031-01-01T00:00:00Z,LATE,-29,44.5,1\n2031-01-01T03:00:00Z,LATE,-29,44.5,1.2\n"), 0o644)
	far := filepath.Join(d, "far.csv")
	os.WriteFile(far, []byte("time,station,lon,lat,hm0_m\n2001-01-01T00:00:00Z,FAR,10,10,1\n"), 0o644)
	cases := map[string][]string{
		late:                                     {`station "LATE"`, "none of its 2 measured times", "2001-01-01"},
		far:                                      {`station "FAR"`, "max_distance_km"},
		"../../testdata/validate/bad_no_time.nc": {"bad_no_time.nc", "no time coordinate"},
		"../../testdata/validate/bad_units.nc":   {"bad_units.nc", `units "degree"`},
		"../../testdata/validate/bad_no_feature.nc": {"bad_no_feature.nc", "featureType"},
		filepath.Join(d, "none*.csv"):               {"no observation files"},
	}
	for obs, want := range cases {
		_, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{obs}, OutDir: filepath.Join(d, "out")})
		if err == nil || fault.ExitCode(err) != 2 {
			t.Errorf("%s: %v (exit %d), want refused with exit 2", obs, err, fault.ExitCode(err))
			continue
		}
		for _, w := range want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %q lacks %q", obs, err, w)
			}
		}
	}
	if _, err := os.Stat(filepath.Join(d, "out", "validation.json")); err == nil {
		t.Errorf("a refused validation wrote validation.json")
	}
}

// TestValidateReportPage: the report gets a page per station whose table
// holds the numbers of validation.parquet, and its figures decode as PNG.
func TestValidateReportPage(t *testing.T) {
	run := validationRun(t)
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{"../../testdata/validate/station_synth.csv"}}); err != nil {
		t.Fatal(err)
	}
	if _, _, err := products.Rebuild(run, products.Products{Report: true}); err != nil {
		t.Fatal(err)
	}
	tb, err := rundir.ReadTable(filepath.Join(run, "validation.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(run, "report", "validation_syn_a.html"))
	if err != nil {
		t.Fatal(err)
	}
	a := valRowOf(t, tb, "SYN-A", "hm0", "all")
	for _, c := range []string{"bias", "rmse", "scatter_index", "slope_symmetric"} {
		want := "<td>" + strconvG4(tb.Col(c).Value(a)) + "</td>"
		if !strings.Contains(string(page), want) {
			t.Errorf("station page lacks %s %s", c, want)
		}
	}
	if !strings.Contains(string(page), "invented synthetic stations") {
		t.Errorf("station page does not say the station is invented")
	}
	index, _ := os.ReadFile(filepath.Join(run, "report", "index.html"))
	if !strings.Contains(string(index), `href="validation_syn_b.html"`) {
		t.Errorf("index has no link to the station pages")
	}
	for _, f := range []string{"scatter", "qq", "series"} {
		fh, err := os.Open(filepath.Join(run, "report", "validation_syn_a_"+f+".png"))
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(fh)
		fh.Close()
		if err != nil || img.Bounds().Dx() < 300 {
			t.Errorf("%s figure: %v", f, err)
		}
	}
}

func strconvG4(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

// validate reads the run's hindcast files from the paths its manifest
// records: run from another working directory it failed as if a file were
// missing, the run's relative input paths being taken against the current
// directory (issue 33). The results from elsewhere are the same bytes.
func TestValidateFromAnotherDirectory(t *testing.T) {
	run := validationRun(t)
	obs, err := filepath.Abs("../../testdata/validate/station_synth.csv")
	if err != nil {
		t.Fatal(err)
	}
	here := t.TempDir()
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{obs}, OutDir: here}); err != nil {
		t.Fatal(err)
	}
	t.Chdir(t.TempDir())
	there := t.TempDir()
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: run, Obs: []string{obs}, OutDir: there}); err != nil {
		t.Fatalf("validate from another working directory: %v", err)
	}
	for _, name := range []string{"validation.parquet", "validation_pairs.parquet"} {
		a, err1 := os.ReadFile(filepath.Join(here, name))
		b, err2 := os.ReadFile(filepath.Join(there, name))
		if err1 != nil || err2 != nil || !bytes.Equal(a, b) {
			t.Errorf("%s differs when validate runs from another directory (%v, %v)", name, err1, err2)
		}
	}
}

// The recorded spec names the bathymetry file by absolute path (validate
// reopens it with the inputs); the run's own spec is left as given.
func TestRecordedSpecBathymetryAbsolute(t *testing.T) {
	wd, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	s := runspec.DefaultSpec()
	s.Depth.BathymetryFile = filepath.Join("data", "bathy.nc")
	r := recordedSpec(s)
	if want := filepath.Join(wd, "data", "bathy.nc"); r.Depth.BathymetryFile != want {
		t.Errorf("recorded bathymetry file %q, want %q", r.Depth.BathymetryFile, want)
	}
	if s.Depth.BathymetryFile != filepath.Join("data", "bathy.nc") {
		t.Errorf("the run's spec was changed: %q", s.Depth.BathymetryFile)
	}
}

// A manifest written before the inputs were recorded by absolute path
// names them relative to where the run started: validate from elsewhere
// says so and what to do.
func TestValidateRelativeManifestHint(t *testing.T) {
	run := validationRun(t)
	dir := t.TempDir()
	b, err := os.ReadFile(filepath.Join(run, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	wd, _ := os.Getwd()
	for _, in := range doc["inputs"].([]any) {
		m := in.(map[string]any)
		rel, err := filepath.Rel(wd, m["path"].(string))
		if err != nil {
			t.Fatal(err)
		}
		m["path"] = rel
	}
	// a manifest of that time also predates the checksums and the seal
	// (rundir reads such a run with a warning)
	delete(doc, "output_checksums")
	b, _ = json.Marshal(doc)
	os.WriteFile(filepath.Join(dir, "manifest.json"), b, 0o644)
	cells, _ := os.ReadFile(filepath.Join(run, "cells.parquet"))
	os.WriteFile(filepath.Join(dir, "cells.parquet"), cells, 0o644)
	obs, _ := filepath.Abs("../../testdata/validate/station_synth.csv")
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: dir, Obs: []string{obs}, OutDir: t.TempDir()}); err != nil {
		t.Fatalf("relative manifest paths from the run's own directory: %v", err)
	}
	t.Chdir(t.TempDir())
	_, err = validation.Validate(context.Background(), validation.Options{RunDir: dir, Obs: []string{obs}, OutDir: t.TempDir()})
	if err == nil || !strings.Contains(err.Error(), "relative to the directory the run was started from") {
		t.Errorf("relative manifest paths from elsewhere: %v, want the hint", err)
	}
}
