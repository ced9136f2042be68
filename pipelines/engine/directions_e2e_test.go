package engine

import (
	"math"
	"path/filepath"
	"testing"

	"swellgrid/internal/parquetread"
)

// dirRef is testdata/directions/reference.json, computed independently of
// swellgrid by testdata/directions/reference.py (Debian python3-numpy,
// python3-scipy, python3-netcdf4) from the e2e bulk fixture and the spectral
// fixture testdata/directions/spectral_dirs.nc (written by make_fixture.py
// with python3-netcdf4; invented, synthetic data).
type dirRef struct {
	Sectors  int              `json:"sectors"`
	Bulk     []map[string]any `json:"bulk"`
	Spectral []map[string]any `json:"spectral"`
}

// Tolerances of directions.parquet against the reference: the state sums
// power in quanta of 1/16 W/m per step and sector (stats/climate/fixed.go),
// so a sector's mean power is within 1/32 W/m = 3.2e-5 kW/m and a power
// share within 1/32 W/m over the cell's mean power (at least 3 kW/m in both
// fixtures: 1e-5); the spectral input is float32, read alike by both.
var dirTolerances = map[string]tol{
	"sector_centre_deg": {0, 0},
	"power_share":       {1e-5, 0},
	"occurrence_share":  {1e-12, 0},
	"occurrence_hours":  {1e-9, 0},
	"power_mean_kw_m":   {4e-5, 1e-9},
}

// checkDirections compares directions.parquet of the run in out with rows.
func checkDirections(t *testing.T, what, out string, rows []map[string]any, sectors int) {
	t.Helper()
	d, err := parquetread.Columns(filepath.Join(out, "directions.parquet"), "cell_id", "sector", "sector_centre_deg",
		"sector_from_deg", "sector_to_deg", "power_share", "occurrence_share", "occurrence_hours", "power_mean_kw_m")
	if err != nil {
		t.Fatal(err)
	}
	type key struct{ id, k int64 }
	at := map[key]int{}
	for i := range d["cell_id"] {
		at[key{d["cell_id"][i].(int64), d["sector"][i].(int64)}] = i
	}
	if len(at) != len(rows) || len(d["cell_id"]) != len(rows) {
		t.Fatalf("%s: directions.parquet has %d rows, the reference %d", what, len(d["cell_id"]), len(rows))
	}
	bad := 0
	for _, r := range rows {
		k := key{int64(asFloat(r["cell_id"])), int64(asFloat(r["sector"]))}
		i, ok := at[k]
		if !ok {
			t.Errorf("%s: no row for cell %d sector %d", what, k.id, k.k)
			continue
		}
		for c, tl := range dirTolerances {
			if got, want := asFloat(d[c][i]), asFloat(r[c]); !near(got, want, tl) && bad < 20 {
				bad++
				t.Errorf("%s cell %d sector %d: %s = %.9g, numpy %.9g", what, k.id, k.k, c, got, want)
			}
		}
		w := 360 / float64(sectors)
		c := asFloat(d["sector_centre_deg"][i])
		if from, to := asFloat(d["sector_from_deg"][i]), asFloat(d["sector_to_deg"][i]); math.Abs(math.Mod(to-from+360, 360)-w) > 1e-9 ||
			math.Abs(math.Mod(c-from+360, 360)-w/2) > 1e-9 {
			t.Errorf("%s cell %d sector %d: edges %g..%g around %g, want %g-degree sectors", what, k.id, k.k, from, to, c, w)
		}
	}
}

// TestDirectionsAgainstNumpy runs the bulk e2e fixture (mean direction
// role) and the spectral fixture (descending, offset direction bins, finite
// depths, one station with all its energy in one bin) and compares
// every row of directions.parquet with the numpy computation.
func TestDirectionsAgainstNumpy(t *testing.T) {
	var ref dirRef
	readRef(t, "../../testdata/directions/reference.json", &ref)
	checkDirections(t, "bulk", runE2E(t), ref.Bulk, ref.Sectors)

	out := t.TempDir()
	mustRun(t, testSpec(t, "testdata/directions/spectral_dirs.nc", out))
	checkDirections(t, "spectral", out, ref.Spectral, ref.Sectors)

	// The analytic case: station 3's energy is all in the bin centred on
	// 97.5 deg, whose arc 90..105 deg lies 11.25 deg in sector 4 (78.75 to
	// 101.25) and 3.75 deg in sector 5: shares 3/4 and 1/4.
	d, err := parquetread.Columns(filepath.Join(out, "directions.parquet"), "cell_id", "sector", "power_share", "occurrence_share")
	if err != nil {
		t.Fatal(err)
	}
	for i := range d["cell_id"] {
		if d["cell_id"][i].(int64) != 3 {
			continue
		}
		k := d["sector"][i].(int64)
		want := map[int64]float64{4: 0.75, 5: 0.25}[k]
		if got := d["power_share"][i].(float64); math.Abs(got-want) > 1e-6 {
			t.Errorf("single-bin station, sector %d: power share %g, want %g", k, got, want)
		}
		if got, want := d["occurrence_share"][i].(float64), map[int64]float64{4: 1}[k]; got != want {
			t.Errorf("single-bin station, sector %d: occurrence share %g, want %g", k, got, want)
		}
	}
}

// TestDirectionsReferenceReproduced reruns testdata/directions/reference.py
// (Debian's python3 with numpy, scipy and netCDF4; required under CI) and
// checks that it gives the committed reference.json.
func TestDirectionsReferenceReproduced(t *testing.T) {
	var a, b dirRef
	rerunReference(t, "../../testdata/directions/reference.py", "../../testdata/directions/reference.json", &a, &b, "numpy", "scipy", "netCDF4")
	for name, pair := range map[string][2][]map[string]any{"bulk": {a.Bulk, b.Bulk}, "spectral": {a.Spectral, b.Spectral}} {
		if len(pair[0]) != len(pair[1]) {
			t.Fatalf("%s: %d rows committed, %d recomputed", name, len(pair[0]), len(pair[1]))
		}
		for i := range pair[0] {
			for k, va := range pair[0][i] {
				if fa, fb := asFloat(va), asFloat(pair[1][i][k]); !near(fb, fa, tol{1e-12, 1e-9}) {
					t.Errorf("%s row %d %s: committed %v, recomputed %v", name, i, k, fa, fb)
				}
			}
		}
	}
}
