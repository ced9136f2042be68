package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/validation"
)

// uncRef is testdata/uncertainty/reference.json (make_ref.py, Debian numpy
// and python3-netcdf4, from the invented hindcast, station and device of
// make_fixture.py): the station's relative biases, numpy's Monte Carlo
// band of the block bootstrap's standard error ([min, 0.5 %, 99.5 %, max]
// over 300 seeds) and, per cell, the distance to the station, the AEP and
// the inter-annual components.
type uncRef struct {
	Station   string     `json:"station"`
	Block     int        `json:"block_pairs"`
	Reps      int        `json:"bootstrap_reps"`
	ReachKm   float64    `json:"reach_km"`
	HorizonsY []float64  `json:"horizons_y"`
	PowerBias float64    `json:"power_bias_frac"`
	AEPBias   float64    `json:"aep_bias_frac"`
	PowerSE   [4]float64 `json:"power_se_band"`
	AEPSE     [4]float64 `json:"aep_se_band"`
	Cells     []struct {
		ID        int64     `json:"cell_id"`
		StationKm float64   `json:"station_km"`
		InReach   bool      `json:"in_reach"`
		AEP       float64   `json:"aep_mwh"`
		IAV       float64   `json:"interannual_frac"`
		Record    float64   `json:"u_record_frac"`
		Future    []float64 `json:"u_future_frac"`
	} `json:"cells"`
}

// uncSpec is the spec of the uncertainty fixture's runs.
func uncSpec(t *testing.T, out string) *runspec.Spec {
	s := testSpec(t, "testdata/uncertainty/hindcast_*.nc", out)
	s.Output.Report, s.Output.NetCDF, s.Output.GeoPackage = false, false, false
	s.Devices = []runspec.DeviceSpec{{Name: "unc_wec", PowerMatrix: "../../testdata/uncertainty/device.csv", Lookup: "bin"}}
	return s
}

// The AEP bands take their model component from a finished validation
// (issue 30): the invented station's pairs give, at the cells within
// uncertainty.reach_km (40 km: the station's cell and its east and west
// neighbours, 35.4 km), the relative biases numpy computes from the same
// pairs and a circular block-bootstrap standard error inside numpy's Monte
// Carlo band; u_model_frac = sqrt(bias^2 + se^2); the other cells keep the
// spec's assumed 0.10. Every row's total is the root-sum-square of the
// record-length and future-period uncertainties numpy computes from the
// hindcast and the model component (independent errors, JCGM 100:2008
// 5.1.2, from memory), and P90 and P99 are P50 (1 - z u) with z the normal
// quantiles (1.2815515655, 2.3263478740; Abramowitz and Stegun table 26.1,
// from memory). Two runs give byte-identical tables (seeded bootstrap); a
// directory without a finished validation is refused (exit 2).
func TestModelUncertaintyFromValidation(t *testing.T) {
	ref := &uncRef{}
	dir, raw, val := validatedUncRun(t, "reference.json", "make_ref.py", ref, "station.csv")
	withVal := func(out string) *runspec.Spec {
		s := uncSpec(t, out)
		s.Uncertainty.Validation, s.Uncertainty.ReachKm = val, ref.ReachKm
		s.Uncertainty.BlockPairs, s.Uncertainty.BootstrapReps, s.Uncertainty.Seed = ref.Block, ref.Reps, 30
		s.Uncertainty.HorizonsY = ref.HorizonsY
		return s
	}
	a := filepath.Join(dir, "a")
	sa := withVal(a)
	sa.Output.Report = true
	sa.Sites = []runspec.SiteSpec{{Name: "at the station", Lon: -19.5, Lat: 50.5}, {Name: "beyond reach", Lon: -19.5, Lat: 51.0}}
	mustRun(t, sa)
	tb, err := rundir.ReadTable(filepath.Join(a, "aep_bands.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	col := func(name string) *rundir.Column {
		c := tb.Col(name)
		if c == nil {
			t.Fatalf("aep_bands.parquet has no column %s", name)
		}
		return c
	}
	ids, hor, st := col("cell_id"), col("horizon_y"), col("model_station")
	rel := func(what string, got, want, tol float64) {
		t.Helper()
		if !(math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))) {
			t.Errorf("%s = %.12g, want %.12g", what, got, want)
		}
	}
	const z90, z99 = 1.2815515655446004, 2.3263478740408408
	// The run sums device power in 2^-16 kW fixed point (stats/climate
	// fixed.go): its energies and their spreads agree with numpy's to
	// about 1e-8 relative, as in the e2e test's aep_bands tolerances.
	const stateTol = 1e-6
	inReach := 0
	for i := 0; i < tb.Rows; i++ {
		id := ids.Int[i]
		var c = ref.Cells[id]
		if c.ID != id {
			t.Fatalf("reference cell order: %d at %d", c.ID, id)
		}
		h := -1
		for k, x := range ref.HorizonsY {
			if x == hor.Float[i] {
				h = k
			}
		}
		if h < 0 {
			t.Fatalf("row %d: horizon %g not asked", i, hor.Float[i])
		}
		what := func(s string) string { return s + " cell " + string(rune('0'+id)) }
		umodel := col("u_model_frac").Float[i]
		if c.InReach {
			inReach++
			if st.Str[i] != ref.Station {
				t.Errorf("%s: station %q, want %q", what("model_station"), st.Str[i], ref.Station)
			}
			rel(what("model_station_km"), col("model_station_km").Float[i], c.StationKm, 1e-9)
			rel(what("power_bias_frac"), col("power_bias_frac").Float[i], ref.PowerBias, 1e-9)
			rel(what("aep_bias_frac"), col("aep_bias_frac").Float[i], ref.AEPBias, 1e-12)
			pse, ase := col("power_bias_se_frac").Float[i], col("aep_bias_se_frac").Float[i]
			if !(pse >= ref.PowerSE[0] && pse <= ref.PowerSE[3]) || !(ase >= ref.AEPSE[0] && ase <= ref.AEPSE[3]) {
				t.Errorf("%s: SEs %.5g, %.5g outside numpy's Monte Carlo bands %v, %v", what("bootstrap"), pse, ase, ref.PowerSE, ref.AEPSE)
			}
			rel(what("u_model_frac"), umodel, math.Sqrt(ref.AEPBias*ref.AEPBias+ase*ase), 1e-12)
		} else {
			if st.Str[i] != "" || !math.IsNaN(col("aep_bias_frac").Float[i]) || !math.IsNaN(col("model_station_km").Float[i]) {
				t.Errorf("%s: station %q, bias %g beyond reach (%.1f km)", what("model_station"), st.Str[i], col("aep_bias_frac").Float[i], c.StationKm)
			}
			rel(what("u_model_frac (assumed)"), umodel, runspec.DefaultSpec().Uncertainty.ModelFrac, 0)
		}
		p50 := col("aep_p50_mwh").Float[i]
		rel(what("aep_p50_mwh"), p50, c.AEP, stateTol)
		rel(what("interannual_frac"), col("interannual_frac").Float[i], c.IAV, stateTol)
		rel(what("u_record_frac"), col("u_record_frac").Float[i], c.Record, stateTol)
		rel(what("u_future_frac"), col("u_future_frac").Float[i], c.Future[h], stateTol)
		u := math.Sqrt(c.Record*c.Record + c.Future[h]*c.Future[h] + umodel*umodel)
		rel(what("u_total_frac"), col("u_total_frac").Float[i], u, stateTol)
		if p90 := c.AEP * (1 - z90*u); p90 > 0 {
			rel(what("aep_p90_mwh"), col("aep_p90_mwh").Float[i], p90, stateTol)
		} else if !math.IsNaN(col("aep_p90_mwh").Float[i]) {
			t.Errorf("%s: %g, want null", what("aep_p90_mwh"), col("aep_p90_mwh").Float[i])
		}
		if p99 := c.AEP * (1 - z99*u); p99 > 0 {
			rel(what("aep_p99_mwh"), col("aep_p99_mwh").Float[i], p99, stateTol)
		} else if !math.IsNaN(col("aep_p99_mwh").Float[i]) {
			t.Errorf("%s: %g, want null", what("aep_p99_mwh"), col("aep_p99_mwh").Float[i])
		}
	}
	if want := 3 * len(ref.HorizonsY); inReach != want || tb.Rows != 9*len(ref.HorizonsY) {
		t.Errorf("%d rows, %d within reach; want %d and %d", tb.Rows, inReach, 9*len(ref.HorizonsY), want)
	}
	checkBandReport(t, a, ref)
	man, err := os.ReadFile(filepath.Join(a, "manifest.json"))
	if err != nil || !bytes.Contains(man, []byte("model uncertainty from the validation in")) {
		t.Errorf("the manifest does not record the validation behind the model uncertainty (%v)", err)
	}
	// deterministic: the same spec gives the same bytes
	bAgain := filepath.Join(dir, "b")
	mustRun(t, withVal(bAgain))
	x, _ := os.ReadFile(filepath.Join(a, "aep_bands.parquet"))
	y, _ := os.ReadFile(filepath.Join(bAgain, "aep_bands.parquet"))
	if len(x) == 0 || !bytes.Equal(x, y) {
		t.Errorf("aep_bands.parquet differs between two runs of the same spec")
	}
	// no finished validation there: refused
	bad := withVal(filepath.Join(dir, "c"))
	bad.Uncertainty.Validation = t.TempDir()
	if _, err := Run(context.Background(), bad, Options{Version: "test"}); err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "no finished validation") {
		t.Errorf("a directory without validation.json: %v (exit %d), want exit 2 naming it", err, fault.ExitCode(err))
	}
	// a validation.json that is not validate's summary: refused
	fake := t.TempDir()
	pairs, _ := os.ReadFile(filepath.Join(val, "validation_pairs.parquet"))
	os.WriteFile(filepath.Join(fake, "validation_pairs.parquet"), pairs, 0o644)
	os.WriteFile(filepath.Join(fake, "validation.json"), []byte(`{"stations": []}`), 0o644)
	bad.Uncertainty.Validation = fake
	if _, err := Run(context.Background(), bad, Options{Version: "test"}); err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "no valid seal") {
		t.Errorf("an unsealed validation: %v (exit %d), want exit 2 (no seal)", err, fault.ExitCode(err))
	}
	if err := export.SealFiles(fake, contract.ValidationSeal, "validation.json", "validation_pairs.parquet"); err != nil {
		t.Fatal(err)
	}
	if _, err := Run(context.Background(), bad, Options{Version: "test"}); err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "is not the summary of a finished") {
		t.Errorf("a validation.json without stations: %v (exit %d), want exit 2", err, fault.ExitCode(err))
	}
	// the validation's files prove themselves before they are read: a
	// byte altered, truncated, emptied or swapped with another
	// validation's (the run's own, validated in place) is refused naming
	// the file, in a folder of its own (its seal) and in a run (the run's
	// seal)
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: raw, Obs: []string{"../../testdata/uncertainty/station.csv"}}); err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"validation.json", "validation_pairs.parquet"} {
		for _, folder := range []string{val, raw} {
			path := filepath.Join(folder, name)
			good, _ := os.ReadFile(path)
			foreign := append([]byte(nil), good...)
			foreign[len(foreign)/2] ^= 0x20
			if name == "validation.json" { // one digit changed: still valid JSON
				foreign = append([]byte(nil), good...)
				i := bytes.LastIndexAny(foreign, "123456789")
				foreign[i] = '1' + (foreign[i]-'1'+1)%9
			}
			for _, damaged := range [][]byte{foreign, good[:len(good)-1], nil} {
				os.WriteFile(path, damaged, 0o644)
				bad.Uncertainty.Validation = folder
				_, err := Run(context.Background(), bad, Options{Version: "test"})
				if err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), path) {
					t.Errorf("%s damaged (%d bytes of %d): %v (exit %d), want exit 2 naming it", path, len(damaged), len(good), err, fault.ExitCode(err))
				}
			}
			os.WriteFile(path, good, 0o644)
		}
	}
}

// checkBandReport checks the report of run dir against the numpy
// reference: the P90/P50 maps' values (1 - z90 u_total with numpy's
// components) and the site pages' uncertainty components, with the model
// component's source named in the caption.
func checkBandReport(t *testing.T, dir string, ref *uncRef) {
	t.Helper()
	const z90, stateTol = 1.2815515655446004, 1e-6
	r, err := rundir.Open(dir, nil)
	if err != nil {
		t.Fatal(err)
	}
	maps, err := report.BandRatios(r)
	if err != nil || len(maps) != len(ref.HorizonsY) {
		t.Fatalf("P90/P50 maps: %d, %v; want one per horizon", len(maps), err)
	}
	total := func(c int, h int, model float64) float64 {
		x := ref.Cells[c]
		return math.Sqrt(x.Record*x.Record + x.Future[h]*x.Future[h] + model*model)
	}
	tb, _ := rundir.ReadTable(filepath.Join(dir, "aep_bands.parquet"))
	umodel := map[[2]int64]float64{}
	for i := 0; i < tb.Rows; i++ {
		umodel[[2]int64{tb.Col("cell_id").Int[i], int64(tb.Col("horizon_y").Float[i])}] = tb.Col("u_model_frac").Float[i]
	}
	for h, m := range maps {
		if m.HorizonY != ref.HorizonsY[h] || m.Device != "unc_wec" {
			t.Errorf("map %d: %s %g", h, m.Device, m.HorizonY)
		}
		for c, got := range m.Ratio {
			want := 1 - z90*total(c, h, umodel[[2]int64{int64(c), int64(m.HorizonY)}])
			if want <= 0 {
				if !math.IsNaN(got) {
					t.Errorf("P90/P50 map %gy cell %d: %g, want blank", m.HorizonY, c, got)
				}
			} else if math.Abs(got-want) > stateTol {
				t.Errorf("P90/P50 map %gy cell %d: %.9g, numpy %.9g", m.HorizonY, c, got, want)
			}
		}
	}
	idx, _ := os.ReadFile(filepath.Join(dir, "report", "index.html"))
	if !bytes.Contains(idx, []byte("map_p90_p50_unc_wec_1y.png")) {
		t.Errorf("index.html has no P90/P50 map")
	}
	sites, _ := report.Sites(r)
	if len(sites) != 2 {
		t.Fatalf("%d sites", len(sites))
	}
	for k, s := range sites {
		vals, err := report.PlottedValues(r, s)
		if err != nil {
			t.Fatal(err)
		}
		comps, ok := vals["site_"+s.Slug+"_uncertainty_components"].([]report.BandComponents)
		if !ok || len(comps) != len(ref.HorizonsY) {
			t.Fatalf("site %s: components %v", s.Name, vals["site_"+s.Slug+"_uncertainty_components"])
		}
		c := ref.Cells[s.Cell]
		for h, b := range comps {
			if math.Abs(b.Record-c.Record) > stateTol || math.Abs(b.Future-c.Future[h]) > stateTol || math.Abs(b.Total-total(s.Cell, h, b.Model)) > stateTol {
				t.Errorf("site %s horizon %g: components %+v, numpy record %g future %g", s.Name, b.HorizonY, b, c.Record, c.Future[h])
			}
			if (k == 0) != (b.Station == ref.Station) || (k == 1 && b.Model != 0.1) {
				t.Errorf("site %s: model component from %q (%g)", s.Name, b.Station, b.Model)
			}
		}
		page, _ := os.ReadFile(filepath.Join(dir, "report", "site_"+s.Slug+".html"))
		want := "validation station " + ref.Station
		if k == 1 {
			want = "the spec&#39;s assumed 0.1"
		}
		if !bytes.Contains(page, []byte(want)) {
			t.Errorf("site page %s does not say %q", s.Slug, want)
		}
	}
}

// validatedUncRun reads the reference testdata/uncertainty/refName (made by
// script) into ref, runs the uncertainty fixture plainly into DIR/raw and
// validates it against the station file into DIR/validation; it returns
// DIR, the run and the validation.
func validatedUncRun(t *testing.T, refName, script string, ref any, station string) (dir, raw, val string) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/uncertainty/" + refName)
	if err != nil {
		t.Fatalf("run testdata/uncertainty/%s: %v", script, err)
	}
	if err := json.Unmarshal(b, ref); err != nil {
		t.Fatal(err)
	}
	dir = t.TempDir()
	raw = filepath.Join(dir, "raw")
	mustRun(t, uncSpec(t, raw))
	val = filepath.Join(dir, "validation")
	if _, err := validation.Validate(context.Background(), validation.Options{RunDir: raw, Obs: []string{"../../testdata/uncertainty/" + station}, OutDir: val}); err != nil {
		t.Fatal(err)
	}
	return dir, raw, val
}
