package engine

import (
	"math"
	"path/filepath"
	"reflect"
	"testing"

	"swellgrid/internal/parquetread"
)

// qcRef is testdata/qc/reference.json, computed independently of swellgrid
// by testdata/qc/reference.py (Debian python3-netcdf4, numpy, scipy) from
// testdata/qc/qc_bulk.nc, which testdata/qc/make_fixture.py writes with
// python3-netcdf4 (invented, synthetic data with invalid values injected).
type qcRef struct {
	Cells     []map[string]any `json:"cells"`
	Bootstrap struct {
		B      int `json:"B"`
		Levels []struct {
			Cell   int64   `json:"cell_id"`
			Period float64 `json:"return_period_y"`
			Ends   []struct {
				Value float64    `json:"value"`
				Band  [2]float64 `json:"band"`
			} `json:"ends"`
		} `json:"levels"`
	} `json:"bootstrap"`
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
	"gev_loc_m":       e2eCellTolerances["gev_loc_m"],
	"gev_scale_m":     e2eCellTolerances["gev_scale_m"],
	"gev_shape":       e2eCellTolerances["gev_shape"],
}

// TestInvalidValuesAgainstNumpy runs the fixture with injected unusable
// values (negative, infinite, and 64 m or s and more; an infinite direction)
// and compares invalid_values, and the statistics they must be left out of,
// with the numpy/scipy reference: a value present but unusable is counted
// and left out everywhere, a step whose Hm0 or Te is unusable has no power,
// and the 70 m height of cell 1 is no annual maximum of its GEV fit.
func TestInvalidValuesAgainstNumpy(t *testing.T) {
	var ref qcRef
	readRef(t, "../../testdata/qc/reference.json", &ref)
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

// TestBootstrapColumnsAgainstScipy runs the fixture with extremes.bootstrap
// and compares extremes.parquet's hm0_boot_lo_m and hm0_boot_hi_m of cell
// 0's GEV levels with scipy's parametric bootstrap of the same size (two
// Monte Carlo estimates: each end within sqrt 2 x the reference's 99.9 %
// band half-width, as stats/extremes TestBootstrapAgainstScipy), so that
// the asked interval reaches its columns, lower in lo and upper in hi.
func TestBootstrapColumnsAgainstScipy(t *testing.T) {
	var ref qcRef
	readRef(t, "../../testdata/qc/reference.json", &ref)
	out := t.TempDir()
	s := testSpec(t, "testdata/qc/qc_bulk.nc", out)
	s.Extremes.Bootstrap, s.Extremes.Seed = ref.Bootstrap.B, 7
	mustRun(t, s)
	e, err := parquetread.Columns(filepath.Join(out, "extremes.parquet"), "cell_id", "method", "return_period_y", "hm0_boot_lo_m", "hm0_boot_hi_m")
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range ref.Bootstrap.Levels {
		found := false
		for i := range e["cell_id"] {
			if e["cell_id"][i].(int64) != w.Cell || e["method"][i].(string) != "gev_annual_maxima" || asFloat(e["return_period_y"][i]) != w.Period {
				continue
			}
			found = true
			for k, c := range []string{"hm0_boot_lo_m", "hm0_boot_hi_m"} {
				got, end := asFloat(e[c][i]), w.Ends[k]
				half := math.Sqrt2 * math.Max(end.Value-end.Band[0], end.Band[1]-end.Value)
				t.Logf("cell %d T=%g %s = %.4f, scipy %.4f +- %.4f", w.Cell, w.Period, c, got, end.Value, half)
				if !(math.Abs(got-end.Value) <= half) {
					t.Errorf("cell %d T=%g: %s = %.5f, scipy's bootstrap %.5f +- %.5f", w.Cell, w.Period, c, got, end.Value, half)
				}
			}
		}
		if !found {
			t.Errorf("extremes.parquet has no GEV row for cell %d, T = %g", w.Cell, w.Period)
		}
	}
}

// TestInvalidValuesReferenceReproduced reruns testdata/qc/reference.py
// (Debian's python3 with numpy, scipy and netCDF4; required under CI) and
// checks that it gives the committed reference.json.
func TestInvalidValuesReferenceReproduced(t *testing.T) {
	var a, b qcRef
	rerunReference(t, "../../testdata/qc/reference.py", "../../testdata/qc/reference.json", &a, &b, "numpy", "scipy", "netCDF4")
	if !reflect.DeepEqual(a.Bootstrap, b.Bootstrap) {
		t.Errorf("bootstrap reference: committed %+v, recomputed %+v", a.Bootstrap, b.Bootstrap)
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
