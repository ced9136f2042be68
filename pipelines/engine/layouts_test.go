package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/inspect"
	"swellgrid/pipelines/runspec"
)

// layoutsRef is testdata/layouts/layouts_ref.json, made by
// make_layouts_ref.py with Debian's python3-netcdf4, numpy and scipy from the
// files written by make_layouts.py (python3-xarray and python3-netcdf4).
type layoutsRef map[string]struct {
	PowerMeanKWm []*float64 `json:"power_mean_kw_m"`
	StaticDepth  []*float64 `json:"first_step_depth_power_mean_kw_m"`
	Steps        int        `json:"steps"`
	Names        []string   `json:"names"`
}

// loadLayoutsRef reads the stored reference values and, when Debian's
// python3 is present (always under CI=true), reruns the reference script
// into a temporary file and checks it gives the stored values.
func loadLayoutsRef(t *testing.T) layoutsRef {
	t.Helper()
	b, err := os.ReadFile("../../testdata/layouts/layouts_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref layoutsRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat("/usr/bin/python3"); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatal("CI: /usr/bin/python3 (python3-netcdf4, numpy, scipy) missing; the layout references cannot be rerun")
		}
		t.Log("python3 missing: using the stored layout references without rerunning them")
		return ref
	}
	tmp := filepath.Join(t.TempDir(), "ref.json")
	cmd := exec.Command("/usr/bin/python3", "testdata/layouts/make_layouts_ref.py", tmp)
	cmd.Dir = "../.."
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("make_layouts_ref.py: %v\n%s", err, out)
	}
	b2, _ := os.ReadFile(tmp)
	var again layoutsRef
	if err := json.Unmarshal(b2, &again); err != nil {
		t.Fatal(err)
	}
	for k, v := range ref {
		w := again[k]
		if len(w.PowerMeanKWm) != len(v.PowerMeanKWm) {
			t.Fatalf("rerun reference %s: %d cells, stored %d", k, len(w.PowerMeanKWm), len(v.PowerMeanKWm))
		}
		for i := range v.PowerMeanKWm {
			a, b := v.PowerMeanKWm[i], w.PowerMeanKWm[i]
			if (a == nil) != (b == nil) || a != nil && math.Abs(*a-*b) > 1e-9*math.Abs(*a) {
				t.Fatalf("rerun reference %s cell %d differs from the stored one; rerun make_layouts_ref.py and commit", k, i)
			}
		}
	}
	return ref
}

func runLayout(t *testing.T, input, out string, mod func(*runspec.Spec)) {
	t.Helper()
	s := testSpec(t, input, out)
	if mod != nil {
		mod(s)
	}
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatalf("run %s: %v", input, err)
	}
}

// comparePower checks cells.parquet's power_mean_kw_m against a reference
// within 0.5% per cell (null where the reference has no value) and returns
// the largest relative difference.
func comparePower(t *testing.T, what, dir string, ref []*float64) float64 {
	t.Helper()
	got := runcheck.ReadColumn(t, filepath.Join(dir, "cells.parquet"), "power_mean_kw_m")
	if len(got) != len(ref) || len(got) == 0 {
		t.Fatalf("%s: %d cells, reference %d", what, len(got), len(ref))
	}
	worst := 0.0
	for i, r := range ref {
		if r == nil {
			if !math.IsNaN(got[i]) {
				t.Errorf("%s cell %d: %v kW/m where the reference has no value", what, i, got[i])
			}
			continue
		}
		rel := math.Abs(got[i]-*r) / *r
		worst = math.Max(worst, rel)
		if !(rel <= 0.005) {
			t.Errorf("%s cell %d: %.4f kW/m vs numpy %.4f (%.3f%%)", what, i, got[i], *r, 100*rel)
		}
	}
	t.Logf("%s: %d cells, largest difference from numpy %.4f%%", what, len(got), 100*worst)
	return worst
}

// Every input layout of testdata/layouts (written by python3-xarray and
// python3-netcdf4) gives the per-cell mean power of an independent numpy
// computation from the same files (make_layouts_ref.py) within 0.5%.
func TestLayoutsPowerAgainstNumpy(t *testing.T) {
	ref := loadLayoutsRef(t)
	cases := []struct {
		name, input string
		mod         func(*runspec.Spec)
	}{
		{"split", "testdata/layouts/split", nil},
		{"combined", "testdata/layouts/combined", nil},
		{"tstation", "testdata/layouts/tstation", nil},
		{"tidal_pts", "testdata/layouts/tidal_pts", nil},
		{"tidal_grid", "testdata/layouts/tidal_grid", func(s *runspec.Spec) { s.Roles = map[string]string{"depth": "bed_elev"} }},
		{"shortnames_deep", "testdata/layouts/shortnames", func(s *runspec.Spec) {
			s.Roles = map[string]string{"hm0": "hsig", "te": "tm10", "dir": "thm"}
			s.Units = map[string]string{"dir": "degree"}
			s.Depth.Source = "deep-water"
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := t.TempDir()
			runLayout(t, c.input, out, c.mod)
			comparePower(t, c.name, out, ref[c.name].PowerMeanKWm)
			if c.name == "tidal_pts" {
				// The time-varying depth matters: with the first step's depth
				// the shallowest node is off by more than the tolerance.
				got := runcheck.ReadColumn(t, filepath.Join(out, "cells.parquet"), "power_mean_kw_m")
				st := *ref[c.name].StaticDepth[0]
				if math.Abs(got[0]-st)/st < 0.01 {
					t.Errorf("node 0: %.4f kW/m is within 1%% of the first-step-depth value %.4f; the step depths were not used", got[0], st)
				}
			}
		})
	}
}

// One variable per file (with the depth in a file of its own) gives tables
// byte-identical to the same data in combined files.
func TestSplitFilesSameTablesAsCombined(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	runLayout(t, "testdata/layouts/split", a, nil)
	runLayout(t, "testdata/layouts/combined", b, nil)
	pa, pb := runcheck.ParquetFiles(t, a), runcheck.ParquetFiles(t, b)
	runcheck.SameBytes(t, "split vs combined", pa, pb)
	// The manifest records te's per-role gap for the split set.
	var m struct {
		RoleGaps []struct {
			Role    string `json:"role"`
			First   string `json:"first_missing"`
			Missing int    `json:"missing_steps"`
		} `json:"role_gaps"`
	}
	raw, _ := os.ReadFile(filepath.Join(a, "manifest.json"))
	if err := json.Unmarshal(raw, &m); err != nil {
		t.Fatal(err)
	}
	if len(m.RoleGaps) != 1 || m.RoleGaps[0].Role != "te" || m.RoleGaps[0].Missing != 64 || m.RoleGaps[0].First != "2001-02-21 00:00:00" {
		t.Errorf("manifest role_gaps = %+v, want te missing 64 steps from 2001-02-21", m.RoleGaps)
	}
}

// xarray's default float encoding (_FillValue = NaN) gives a valid
// manifest and inspect JSON.
func TestXarrayNaNAttributesManifest(t *testing.T) {
	out := t.TempDir()
	runLayout(t, "testdata/layouts/combined", out, nil)
	raw, err := os.ReadFile(filepath.Join(out, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m struct {
		Roles map[string]struct {
			Fill     []*float64 `json:"fill_values"`
			ValidMax *float64   `json:"valid_max"`
		} `json:"roles"`
	}
	if err := json.Unmarshal(raw, &m); err != nil {
		t.Fatalf("manifest is not valid JSON: %v", err)
	}
	// A NaN _FillValue needs no entry (a NaN value is missing anyway); what
	// is written must be a number or null, never NaN.
	hs := m.Roles["hm0"]
	for _, f := range hs.Fill {
		if f != nil && math.IsNaN(*f) {
			t.Errorf("hm0 fill_values %v", hs.Fill)
		}
	}
	if !bytes.Contains(raw, []byte(`"hm0"`)) {
		t.Error("manifest lacks the hm0 role")
	}
	r, err := inspect.Inspect([]string{"../../testdata/layouts/combined"}, runspec.DefaultSpec().IngestOptions())
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := r.WriteJSON(&buf); err != nil {
		t.Fatalf("inspect --json: %v", err)
	}
	if !json.Valid(buf.Bytes()) {
		t.Errorf("inspect JSON invalid: %.300s", buf.String())
	}
}

// Points whose coordinates move in time are refused, saying so.
func TestMovingPointsRefused(t *testing.T) {
	_, err := inspect.Inspect([]string{"../../testdata/layouts/moving.nc"}, runspec.DefaultSpec().IngestOptions())
	if err == nil || !strings.Contains(err.Error(), "moves") || !strings.Contains(err.Error(), "longitude") {
		t.Fatalf("moving stations: %v", err)
	}
}

var _ = parquetread.Float64s

// Station names (cf_role = "timeseries_id": a char array in tstation/, NetCDF-4
// strings in tidal_pts/, both written by python3-netcdf4) are the name column
// of cells.parquet and of every long table, row by row with the cell id.
func TestStationNamesInEveryTable(t *testing.T) {
	for _, c := range []struct {
		input string
		want  []string
		dirs  bool // the files carry a direction, so directions.parquet has rows
	}{
		{"testdata/layouts/tstation", []string{"SYN-NORTH", "SYN-MID", "SYN-SOUTH"}, true},
		{"testdata/layouts/tidal_pts", []string{"SYN-T1", "SYN-T2", "SYN-T3", "SYN-T4"}, false},
	} {
		out := t.TempDir()
		// a device, so that aep_bands.parquet and the device rows of
		// annual.parquet have rows too
		dev, err := filepath.Abs("../../testdata/e2e/device_a.csv")
		if err != nil {
			t.Fatal(err)
		}
		runLayout(t, c.input, out, func(s *runspec.Spec) {
			s.Devices = []runspec.DeviceSpec{{Name: "wec_a", PowerMatrix: dev, Lookup: "bin"}}
		})
		for _, table := range append(runcheck.AllTables[:6:6], "directions.parquet", "annual.parquet", "annual_maxima.parquet", "monthly_yield.parquet", "aep_bands.parquet") {
			cols, err := parquetread.Columns(filepath.Join(out, table), "cell_id", "name")
			if err != nil {
				t.Fatalf("%s %s: %v", c.input, table, err)
			}
			ids, names := cols["cell_id"], cols["name"]
			if len(ids) == 0 && table != "extremes.parquet" && (table != "directions.parquet" || c.dirs) {
				t.Errorf("%s %s: no rows", c.input, table)
			}
			for i := range ids {
				id := int(ids[i].(int64))
				if names[i] != c.want[id] {
					t.Fatalf("%s %s row %d: cell %d named %v, want %q", c.input, table, i, id, names[i], c.want[id])
				}
			}
		}
	}
}

// A cell whose every value is missing is flagged masked,no_data when the
// files give no depth (split/ without depth.nc), as when they do.
func TestAllMissingCellMaskedWithoutDepth(t *testing.T) {
	for _, c := range []struct {
		what  string
		paths []string
	}{
		{"without depth", []string{"../../testdata/layouts/split/hs_*.nc", "../../testdata/layouts/split/te_*.nc"}},
		{"with depth", []string{"../../testdata/layouts/split"}},
	} {
		out := t.TempDir()
		s := runspec.DefaultSpec()
		s.Input.Paths, s.Output.Dir = c.paths, out
		if c.what == "without depth" {
			s.Depth.Source = "deep-water" // the run needs a depth choice; the files give none
		}
		if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
			t.Fatal(err)
		}
		cols, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), "qc_flags")
		if err != nil {
			t.Fatal(err)
		}
		flags := cols["qc_flags"]
		// Cell 11: lat 52, lon -2.5, every value NaN (make_layouts.py).
		if flags[11] != "masked,no_data" {
			t.Errorf("%s: land cell flags %q, want masked,no_data", c.what, flags[11])
		}
		for i := 0; i < 11; i++ {
			if f, _ := flags[i].(string); strings.Contains(f, "masked") {
				t.Errorf("%s: sea cell %d flagged %q", c.what, i, f)
			}
		}
	}
}
