package pipelines

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"swellgrid/export/parquetread"
	"swellgrid/internal/testtool"
)

// qcRef is testdata/qc/reference.json, computed independently of swellgrid
// by testdata/qc/reference.py (Debian python3-netcdf4, numpy, scipy) from
// testdata/qc/qc_bulk.nc, which testdata/qc/make_fixture.py writes with
// python3-netcdf4 (invented, synthetic data with invalid values injected).
type qcRef struct {
	Cells []map[string]any `json:"cells"`
}

// qcTolerances: the reference's columns; the state's fixed-point quanta and
// the two GEV optimisers as in e2eCellTolerances.
var qcTolerances = map[string]tol{
	"invalid_values":  exact,
	"coverage":        tolShare,
	"hm0_mean_m":      tolHm0,
	"hm0_max_m":       tolHm0,
	"te_mean_s":       tolHm0,
	"tp_mean_s":       tolHm0,
	"power_mean_kw_m": tolPower,
	"gev_loc_m":       {0, 2e-3},
	"gev_scale_m":     {0, 5e-3},
	"gev_shape":       {5e-3, 0},
}

// TestInvalidValuesAgainstNumpy runs the fixture with injected unusable
// values (negative, infinite, and 64 m or s and more; an infinite direction)
// and compares invalid_values, and the statistics they must be left out of,
// with the numpy/scipy reference: a value present but unusable is counted
// and left out everywhere, a step whose Hm0 or Te is unusable has no power,
// and the 70 m height of cell 1 is no annual maximum of its GEV fit.
func TestInvalidValuesAgainstNumpy(t *testing.T) {
	var ref qcRef
	readRef(t, "../testdata/qc/reference.json", &ref)
	out := t.TempDir()
	mustRun(t, testSpec(t, "testdata/qc/qc_bulk.nc", out))
	cols := []string{"cell_id"}
	for c := range qcTolerances {
		cols = append(cols, c)
	}
	got, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), cols...)
	if err != nil {
		t.Fatal(err)
	}
	if len(got["cell_id"]) != len(ref.Cells) {
		t.Fatalf("cells.parquet has %d rows, the reference %d", len(got["cell_id"]), len(ref.Cells))
	}
	for i, r := range ref.Cells {
		for c, tl := range qcTolerances {
			if g, w := asFloat(got[c][i]), asFloat(r[c]); !near(g, w, tl) {
				t.Errorf("cell %d: %s = %.9g, numpy %.9g", i, c, g, w)
			}
		}
	}
}

// TestInvalidValuesReferenceReproduced reruns testdata/qc/reference.py
// (Debian's python3 with numpy, scipy and netCDF4; required under CI) and
// checks that it gives the committed reference.json.
func TestInvalidValuesReferenceReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy", "netCDF4")
	tmp := filepath.Join(t.TempDir(), "reference.json")
	if out, err := exec.Command(py, "../testdata/qc/reference.py", tmp).CombinedOutput(); err != nil {
		t.Fatalf("reference.py: %v\n%s", err, out)
	}
	var a, b qcRef
	for p, v := range map[string]*qcRef{"../testdata/qc/reference.json": &a, tmp: &b} {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(data, v); err != nil {
			t.Fatal(err)
		}
	}
	if len(a.Cells) != len(b.Cells) {
		t.Fatalf("%d cells committed, %d recomputed", len(a.Cells), len(b.Cells))
	}
	for i := range a.Cells {
		for k, va := range a.Cells[i] {
			if fa, fb := asFloat(va), asFloat(b.Cells[i][k]); !near(fb, fa, tol{1e-12, 1e-9}) {
				t.Errorf("cell %d %s: committed %v, recomputed %v", i, k, fa, fb)
			}
		}
	}
}
