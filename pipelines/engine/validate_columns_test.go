package engine

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"testing"

	"swellgrid/export/rundir"
)

// valColumnsRef is testdata/validate/columns_expected.json, made by
// testdata/validate/make_columns.py from the station files and the bulk
// fixture with Debian's python3-netcdf4, numpy, scipy and pyproj: for each
// run ("nearest": station_synth.csv with the default validation settings,
// "bilinear": station_mid.csv with bilinear location), every row of
// validation.parquet and validation_qq.parquet and every matched pair.
// Numbers are null where the value is missing (null in Parquet).
type valColumnsRef struct {
	Source string               `json:"source"`
	Runs   map[string]valRefRun `json:"runs"`
}

type valRefRun struct {
	Stations map[string]valRefStation `json:"stations"`
	Rows     []map[string]any         `json:"rows"`
	QQ       []map[string]any         `json:"qq"`
	// Pairs holds per station the columns of validation_pairs.parquet,
	// one value per matched time in record order.
	Pairs map[string]map[string][]any `json:"pairs"`
}

type valRefStation struct {
	Lon        float64 `json:"lon"`
	Lat        float64 `json:"lat"`
	CellID     int     `json:"cell_id"`
	DistanceKm float64 `json:"distance_km_wgs84"`
	// SphereKm is pyproj's geodesic on the sphere of radius 6371.0088 km.
	SphereKm float64 `json:"distance_km_sphere"`
	Location string  `json:"location"`
	Matched  int     `json:"matched"`
}

func loadValColumnsRef(t *testing.T, path string) *valColumnsRef {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%s: %v (run testdata/validate/make_columns.py)", path, err)
	}
	r := &valColumnsRef{}
	if err := json.Unmarshal(b, r); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return r
}

// refNum is a reference number, NaN for null.
func refNum(v any) float64 {
	if x, ok := v.(float64); ok {
		return x
	}
	return math.NaN()
}

// Tolerances of the comparison with make_columns.py, per column:
//   - the CSV's values are the same decimal text parsed by Go and Python
//     (equal doubles), the hindcast's float32 values widen exactly: equal
//     (exact); station coordinates and directions are wrapped (to
//     [-180, 180) and [0, 360)), which moves their last bits: 1e-9 degrees;
//   - distance_km is swellgrid's great circle on the sphere of the IUGG
//     mean radius R1 = 6371.0088 km (export/rundir.Haversine): against
//     pyproj's geodesic on that sphere, 1e-9 relative; against pyproj's
//     WGS 84 geodesic, 0.3 %: at 44-46 deg N the ellipsoid's radii of
//     curvature (meridian M, prime vertical N, from WGS 84's a and f) are
//     -0.075 % to +0.286 % of R1, and a short line's length scales with a
//     radius between them (here up to 0.28 %, the east-west line of SYN-B);
//   - statistics and quantiles: compensated sums against numpy's pairwise
//     sums and interpolation, 1e-10 relative (rounding);
//   - power: swellgrid's wavenumber (its own root solve) against scipy's
//     brentq, 1e-9 relative;
//   - directions: atan2 of sines and cosines on each side, 1e-9 degrees.
var (
	valTolSphere = tol{0, 1e-9}
	valTolWGS84  = tol{0, 3e-3}
	valTolStat   = tol{1e-12, 1e-10}
	valTolPower  = tol{1e-9, 1e-9}
	valTolDeg    = tol{1e-9, 0}
)

// valStatTol is the tolerance of a statistic of a variable.
func valStatTol(variable, col string) tol {
	switch {
	case variable == "dir" && (col == "obs_mean" || col == "model_mean" || col == "bias" || col == "rmse"):
		return valTolDeg
	case variable == "power":
		return valTolPower
	}
	return valTolStat
}

// maxDiff records the largest difference seen per column.
type maxDiff map[string]float64

func (m maxDiff) see(col string, got, want float64) {
	if d := math.Abs(got - want); !math.IsNaN(d) && d > m[col] {
		m[col] = d
	} else if _, ok := m[col]; !ok {
		m[col] = 0
	}
}

func (m maxDiff) log(t *testing.T, what string) {
	t.Helper()
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		t.Logf("%s %s: largest difference from make_columns.py %.3g", what, k, m[k])
	}
}

// compareValidationColumns compares the three tables of a validation in
// out with run of make_columns.py: every row of validation.parquet and
// validation_qq.parquet (looked up by station, variable, period and
// percentile; the same rows on both sides) and every pair.
func compareValidationColumns(t *testing.T, out string, run valRefRun) {
	t.Helper()
	// the first three differences of each table column, then a count
	bad := map[string]int{}
	differ := func(key, format string, args ...any) {
		t.Helper()
		if bad[key]++; bad[key] <= 3 {
			t.Errorf(format, args...)
		}
	}
	defer func() {
		t.Helper()
		for k, n := range bad {
			if n > 3 {
				t.Errorf("%s: %d differences in all", k, n)
			}
		}
	}()
	read := func(name string) *rundir.Table {
		tb, err := rundir.ReadTable(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		return tb
	}
	// validation.parquet
	tb := read("validation.parquet")
	if tb.Rows != len(run.Rows) {
		t.Errorf("validation.parquet: %d rows, make_columns.py %d", tb.Rows, len(run.Rows))
	}
	md := maxDiff{}
	for _, ref := range run.Rows {
		st, va := ref["station"].(string), ref["variable"].(string)
		i := valRowOf(t, tb, st, va, ref["period"].(string))
		if got := tb.Col("unit").Str[i]; got != ref["unit"] {
			differ("validation.parquet unit", "validation.parquet %s %s: unit %q, want %q", st, va, got, ref["unit"])
		}
		for _, c := range []string{"n", "obs_mean", "model_mean", "bias", "rmse", "scatter_index", "r", "slope_origin", "slope_symmetric"} {
			got, want := tb.Col(c).Value(i), refNum(ref[c])
			tl := valStatTol(va, c)
			if c == "n" {
				tl = exact
			}
			md.see(va+" "+c, got, want)
			if !near(got, want, tl) {
				differ("validation.parquet "+c, "validation.parquet %s %s %s: %s = %.15g, make_columns.py %.15g", st, va, ref["period"], c, got, want)
			}
		}
		p := run.Stations[st]
		for c, want := range map[string]float64{"station_lon": p.Lon, "station_lat": p.Lat, "cell_id": float64(p.CellID)} {
			tl := valTolDeg // the station's coordinates pass through longitude wrapping
			if c == "cell_id" {
				tl = exact
			}
			md.see(c, tb.Col(c).Value(i), want)
			if got := tb.Col(c).Value(i); !near(got, want, tl) {
				differ("validation.parquet "+c, "validation.parquet %s: %s = %.15g, want %.15g", st, c, got, want)
			}
		}
		got := tb.Col("distance_km").Value(i)
		md.see("distance_km (relative to the sphere's)", got/p.SphereKm-1, 0)
		md.see("distance_km (relative to WGS 84's)", got/p.DistanceKm-1, 0)
		if !near(got, p.SphereKm, valTolSphere) || !near(got, p.DistanceKm, valTolWGS84) {
			differ("validation.parquet distance_km", "validation.parquet %s: distance_km = %.9f; pyproj's geodesic on the 6371.0088 km sphere %.9f km, on WGS 84 %.9f km", st, got, p.SphereKm, p.DistanceKm)
		}
		if got := tb.Col("location").Str[i]; got != p.Location {
			differ("validation.parquet location", "validation.parquet %s: location %q, want %q", st, got, p.Location)
		}
	}
	md.log(t, "validation.parquet")

	// validation_qq.parquet: the same rows, in any order.
	qq := read("validation_qq.parquet")
	if qq.Rows != len(run.QQ) {
		t.Errorf("validation_qq.parquet: %d rows, make_columns.py %d", qq.Rows, len(run.QQ))
	}
	type qqKey struct {
		st, va, pe string
		pct        float64
	}
	rowOf := map[qqKey]int{}
	for i := 0; i < qq.Rows; i++ {
		rowOf[qqKey{qq.Col("station").Str[i], qq.Col("variable").Str[i], qq.Col("period").Str[i], qq.Col("percentile").Value(i)}] = i
	}
	md = maxDiff{}
	for _, ref := range run.QQ {
		k := qqKey{ref["station"].(string), ref["variable"].(string), ref["period"].(string), refNum(ref["percentile"])}
		i, ok := rowOf[k]
		if !ok {
			differ("validation_qq.parquet rows", "validation_qq.parquet has no row %v", k)
			continue
		}
		tl := valTolStat
		if k.va == "power" {
			tl = valTolPower
		}
		for _, c := range []string{"obs", "model"} {
			got, want := qq.Col(c).Value(i), refNum(ref[c])
			md.see(k.va+" "+c, got, want)
			if !near(got, want, tl) {
				differ("validation_qq.parquet "+c, "validation_qq.parquet %v: %s = %.15g, numpy.percentile %.15g", k, c, got, want)
			}
		}
	}
	md.log(t, "validation_qq.parquet")

	// validation_pairs.parquet: per station, the matched times in order.
	pairs := read("validation_pairs.parquet")
	n := 0
	md = maxDiff{}
	for st, cols := range run.Pairs {
		rows := pairs.RowsOfStr("station", st)
		n += len(rows)
		want := cols["time"]
		if len(rows) != len(want) || len(rows) != run.Stations[st].Matched {
			t.Errorf("validation_pairs.parquet: %d rows of %s, make_columns.py %d", len(rows), st, len(want))
			continue
		}
		for k, i := range rows {
			if got := pairs.Col("time").Str[i]; got != want[k] {
				differ("validation_pairs.parquet time", "validation_pairs.parquet %s pair %d: time %q, want %q", st, k, got, want[k])
			}
		}
		for c, vals := range cols {
			if c == "time" {
				continue
			}
			tl := exact
			switch {
			case c == "power_obs_kw_m" || c == "power_model_kw_m":
				tl = valTolPower
			case c == "dir_model_deg" || c == "dir_obs_deg": // directions pass through mod 360 (and atan2)
				tl = valTolDeg
			case run.Stations[st].Location == "bilinear" && c != "time_diff_min":
				tl = valTolStat // a weighted mean of four cells
			}
			col := pairs.Col(c)
			if col == nil {
				t.Errorf("validation_pairs.parquet has no column %s", c)
				continue
			}
			for k, i := range rows {
				got, w := col.Value(i), refNum(vals[k])
				md.see(c, got, w)
				if !near(got, w, tl) {
					differ("validation_pairs.parquet "+c, "validation_pairs.parquet %s pair %d (%s): %s = %.15g, make_columns.py %.15g", st, k, want[k], c, got, w)
				}
			}
		}
	}
	if n != pairs.Rows {
		t.Errorf("validation_pairs.parquet: %d rows, make_columns.py %d", pairs.Rows, n)
	}
	md.log(t, "validation_pairs.parquet")
}

// TestValidateColumnsReproduced reruns testdata/validate/make_columns.py
// (Debian's python3 with numpy, scipy, netCDF4 and pyproj; required under
// CI) and checks that it gives the committed columns_expected.json, so the
// reference the validation tests compare with is the script's.
func TestValidateColumnsReproduced(t *testing.T) {
	var a, b any
	rerunReference(t, "../../testdata/validate/make_columns.py", "../../testdata/validate/columns_expected.json", &a, &b, "numpy", "scipy", "netCDF4", "pyproj")
	ra, rb := a.(map[string]any)["runs"], b.(map[string]any)["runs"]
	bad := 0
	sameJSON("runs", ra, rb, func(where string, x, y any) {
		if bad++; bad <= 5 {
			t.Errorf("%s: committed %v, make_columns.py now %v (rerun it and review the change)", where, x, y)
		}
	})
}

// sameJSON walks two decoded JSON values, reporting where they differ
// (numbers by 1e-12 relative: the last bits of scipy's root may move
// between versions).
func sameJSON(where string, a, b any, differ func(string, any, any)) {
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			differ(where, a, b)
			return
		}
		for k := range x {
			sameJSON(where+"."+k, x[k], y[k], differ)
		}
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			differ(where+" (length)", len(x), b)
			return
		}
		for i := range x {
			sameJSON(where+"["+strconv.Itoa(i)+"]", x[i], y[i], differ)
		}
	case float64:
		y, ok := b.(float64)
		if !ok || !near(y, x, tol{0, 1e-12}) {
			differ(where, a, b)
		}
	default:
		if a != b {
			differ(where, a, b)
		}
	}
}
