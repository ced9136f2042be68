package engine

import (
	"math"
	"path/filepath"
	"testing"

	"swellgrid/internal/parquetread"
)

// spectralRef is testdata/spectral_cols/reference.json, computed
// independently of swellgrid by testdata/spectral_cols/reference.py (Debian
// python3-numpy, python3-scipy, python3-netcdf4: its own moment integration,
// parabola fit and directional maximum; definitions in its docstring) from
// three spectral files written by python3-netcdf4 (invented, synthetic data).
type spectralRef struct {
	Fixtures []struct {
		Name  string           `json:"name"`
		Path  string           `json:"path"`
		Cells []map[string]any `json:"cells"`
	} `json:"fixtures"`
}

// spectralTolerances: cells.parquet columns of a spectral run against the
// reference, and why each tolerance is what it is. The spectra are float32
// in the files, read alike by both; what differs is summation order and
// swellgrid's fixed-point record sums (stats/climate/fixed.go).
var spectralTolerances = map[string]tol{
	// Te and Tp are summed in quanta of 2^-20 s per step: the mean is within
	// 2^-21 s = 4.8e-7 s
	"te_mean_s": {1e-6, 0},
	"tp_mean_s": {1e-6, 0},
	// eps0 and the directionality are plain float64 means (seastate.RecordMeans)
	"width_mean":     {1e-10, 0},
	"directionality": {1e-9, 0},
	// power-weighted circular mean of the exact maximum (swellgrid) and of a
	// grid search refined by scipy's bounded Brent (numpy): 1e-4 deg
	"dir_max_power_deg": {1e-4, 0},
	// Hm0 in quanta of 2^-20 m; J of 1/16 W/m per step (1/32 W/m on the mean)
	"hm0_mean_m":      {1e-6, 0},
	"power_mean_kw_m": {4e-5, 1e-9},
	"bad_bins":        {0, 0},
}

// TestSpectralColumnsAgainstNumpy runs three spectral files written by
// python3-netcdf4 (2-D with descending, offset directions and depths 15 to
// 4000 m; 2-D two-peaked seas with missing, NaN, +Inf and negative bins and
// whole steps missing; 1-D with descending frequencies, end-bin peaks and bad
// bins) and compares the cells.parquet columns that only a spectral run
// fills (te_mean_s and tp_mean_s from the spectra, width_mean,
// directionality, dir_max_power_deg; with hm0_mean_m, power_mean_kw_m and
// dir_mean_deg) with numpy's record means (testdata/spectral_cols). On 1-D
// input the directional columns are null. Logs the largest difference per
// column (-v).
func TestSpectralColumnsAgainstNumpy(t *testing.T) {
	var ref spectralRef
	readRef(t, "../../testdata/spectral_cols/reference.json", &ref)
	if len(ref.Fixtures) != 3 {
		t.Fatalf("reference.json has %d fixtures, want 3", len(ref.Fixtures))
	}
	cols := []string{"te_mean_s", "tp_mean_s", "width_mean", "directionality", "dir_max_power_deg", "dir_mean_deg",
		"hm0_mean_m", "power_mean_kw_m", "bad_bins"}
	for _, fx := range ref.Fixtures {
		out := t.TempDir()
		mustRun(t, testSpec(t, fx.Path, out))
		d, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), append([]string{"cell_id"}, cols...)...)
		if err != nil {
			t.Fatal(err)
		}
		if len(d["cell_id"]) != len(fx.Cells) {
			t.Fatalf("%s: cells.parquet has %d rows, the reference %d", fx.Name, len(d["cell_id"]), len(fx.Cells))
		}
		at := map[int64]int{}
		for i, v := range d["cell_id"] {
			at[v.(int64)] = i
		}
		worst := map[string]float64{}
		for _, r := range fx.Cells {
			id := int64(asFloat(r["cell_id"]))
			i, ok := at[id]
			if !ok {
				t.Errorf("%s: no row for cell %d", fx.Name, id)
				continue
			}
			for _, c := range cols {
				got, want := asFloat(d[c][i]), asFloat(r[c])
				tl := spectralTolerances[c]
				diff := math.Abs(got - want)
				if c == "dir_mean_deg" || c == "dir_max_power_deg" {
					diff = math.Abs(angleDiff(got, want)) // across 0/360
				}
				if c == "dir_mean_deg" && want == want {
					// each step's direction is rounded to DirResDeg = 0.1 deg
					// before its sine and cosine are summed (stats/climate):
					// each unit vector moves by at most 0.05 deg of arc,
					// so the mean vector of length R turns by at most 0.05/R deg
					tl = tol{0.05/asFloat(r["dir_resultant"]) + 1e-9, 0}
				}
				if math.IsNaN(want) != math.IsNaN(got) || want == want && !(diff <= tl.abs+tl.rel*math.Abs(want)) {
					t.Errorf("%s cell %d: %s = %.12g, numpy %.12g (tolerance %g + %g relative)", fx.Name, id, c, got, want, tl.abs, tl.rel)
				}
				if diff == diff {
					worst[c] = math.Max(worst[c], diff)
				}
			}
		}
		for _, c := range cols {
			t.Logf("%s: largest |swellgrid - numpy| of %s: %.3g", fx.Name, c, worst[c])
		}
		// the analytic case: station 3 of spectral_dirs has all its energy in
		// one direction bin (97.5 deg), so J(theta) = J cos(theta - 97.5 deg)
		// for |theta - 97.5 deg| <= 90 deg: directionality 1, maximum at 97.5 deg
		if fx.Name == "spectral_dirs" {
			i := at[3]
			if got := asFloat(d["directionality"][i]); math.Abs(got-1) > 1e-12 {
				t.Errorf("single-direction station: directionality %.15g, want 1", got)
			}
			if got := asFloat(d["dir_max_power_deg"][i]); math.Abs(got-97.5) > 1e-9 {
				t.Errorf("single-direction station: dir_max_power_deg %.12g, want 97.5", got)
			}
		}
	}
}

// TestSpectralColumnsReferenceReproduced reruns
// testdata/spectral_cols/reference.py (Debian's python3 with numpy, scipy
// and netCDF4; required under CI) and checks that it gives the committed
// reference.json.
func TestSpectralColumnsReferenceReproduced(t *testing.T) {
	var a, b spectralRef
	rerunReference(t, "../../testdata/spectral_cols/reference.py", "../../testdata/spectral_cols/reference.json", &a, &b, "numpy", "scipy", "netCDF4")
	if len(a.Fixtures) != len(b.Fixtures) {
		t.Fatalf("%d fixtures committed, %d recomputed", len(a.Fixtures), len(b.Fixtures))
	}
	for k := range a.Fixtures {
		fa, fb := a.Fixtures[k], b.Fixtures[k]
		if fa.Name != fb.Name || len(fa.Cells) != len(fb.Cells) {
			t.Fatalf("fixture %d: committed %s with %d cells, recomputed %s with %d", k, fa.Name, len(fa.Cells), fb.Name, len(fb.Cells))
		}
		for i := range fa.Cells {
			for c, va := range fa.Cells[i] {
				if x, y := asFloat(va), asFloat(fb.Cells[i][c]); !near(y, x, tol{1e-12, 1e-9}) {
					t.Errorf("%s cell %d %s: committed %v, recomputed %v", fa.Name, i, c, x, y)
				}
			}
		}
	}
}
