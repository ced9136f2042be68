package pipelines

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"swellgrid/export/parquetread"
)

// readStrings reads one string column of a Parquet file with the Arrow reader.
func readStrings(t *testing.T, path, col string) []string {
	t.Helper()
	m, err := parquetread.Columns(path, col)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]string, len(m[col]))
	for i, v := range m[col] {
		s, _ := v.(string)
		out[i] = s
	}
	return out
}

func hasFlag(list, flag string) bool {
	for _, f := range strings.Split(list, ",") {
		if f == flag {
			return true
		}
	}
	return false
}

// evdRow is one row of testdata/extremes_points/evd_refs.csv.
type evdRow struct {
	station                                       string
	T, loc, scale, shape, level, lo, hi, dlo, dhi float64
}

func readEvdRefs(t *testing.T) []evdRow {
	t.Helper()
	f, err := os.Open("../testdata/extremes_points/evd_refs.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var out []evdRow
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		l := sc.Text()
		if strings.HasPrefix(l, "#") || strings.HasPrefix(l, "station") {
			continue
		}
		p := strings.Split(l, ",")
		v := make([]float64, len(p))
		for i := 1; i < len(p); i++ {
			if v[i], err = strconv.ParseFloat(strings.TrimSpace(p[i]), 64); err != nil {
				t.Fatal(err)
			}
		}
		out = append(out, evdRow{strings.TrimSpace(p[0]), v[1], v[2], v[3], v[4], v[5], v[6], v[7], v[8], v[9]})
	}
	return out
}

// extremesPointsRun runs the three-station, 30-year fixture written by
// Debian's python3-netcdf4 (testdata/extremes_points/make_extremes_points.py)
// with return periods 10 and 100 years.
func extremesPointsRun(t *testing.T) string {
	t.Helper()
	out := t.TempDir()
	s := testSpec(t, "testdata/extremes_points/extremes_points.nc", out)
	s.Extremes.ReturnPeriodsY = []float64{10, 100}
	mustRun(t, s)
	return out
}

// End to end, the GEV columns of cells.parquet and extremes.parquet equal
// R's evd 2.3.6.1 (fgev, profile, confint; make_evd_refs.R) on the stored
// annual maxima: parameters, levels, profile-likelihood intervals (cells) and
// the delta-method pair (extremes.parquet); a flat record (identical annual
// maxima) reaches the convergence check and publishes nothing; the shallow
// station carries its depth limit (0.6 x 8 m) and the depth_limited flag.
// This replaces the check that a 2-year record publishes no level, which
// never reached the convergence guard.
func TestNoReturnLevelsFromDegenerateFits(t *testing.T) {
	out := extremesPointsRun(t)
	cellsPath := filepath.Join(out, "cells.parquet")
	col := func(n string) []float64 { return readColumn(t, cellsPath, n) }
	flags := readStrings(t, cellsPath, "qc_flags")
	// Station 0: thirty identical maxima.
	if !hasFlag(flags[0], "gev_no_convergence") {
		t.Errorf("flat station: flags %q, want gev_no_convergence", flags[0])
	}
	for _, n := range []string{"hm0_rl10y_m", "hm0_rl10y_lo_m", "hm0_rl10y_hi_m", "hm0_rl100y_m", "gev_loc_m", "gev_shape"} {
		if v := col(n)[0]; !math.IsNaN(v) {
			t.Errorf("flat station: %s = %v from a fit that did not converge", n, v)
		}
	}
	// Stations 1 and 2 against evd.
	idx := map[string]int{"offshore": 1, "shallow": 2}
	for _, r := range readEvdRefs(t) {
		i := idx[r.station]
		tag := strconv.FormatFloat(r.T, 'f', -1, 64)
		near := func(name string, got, want, tol float64) {
			if !(math.Abs(got-want) <= tol) {
				t.Errorf("%s T=%s %s = %.6f, evd %.6f (tol %.2g)", r.station, tag, name, got, want, tol)
			}
		}
		near("gev_loc_m", col("gev_loc_m")[i], r.loc, 2e-4)
		near("gev_scale_m", col("gev_scale_m")[i], r.scale, 2e-4)
		near("gev_shape", col("gev_shape")[i], r.shape, 5e-4)
		near("level", col("hm0_rl"+tag+"y_m")[i], r.level, 5e-4*r.level)
		// evd interpolates the profile on a mesh of level/4000.
		near("profile lower", col("hm0_rl"+tag+"y_lo_m")[i], r.lo, 1e-3*r.level)
		near("profile upper", col("hm0_rl"+tag+"y_hi_m")[i], r.hi, 1e-3*r.level)
	}
	lim := col("hm0_depth_limit_m")
	if lim[0] != 0.6*60 || lim[1] != 0.6*80 || math.Abs(lim[2]-4.8) > 1e-12 {
		t.Errorf("hm0_depth_limit_m = %v, want 0.6 x (60, 80, 8)", lim)
	}
	if !hasFlag(flags[2], "gev_depth_limited") || hasFlag(flags[1], "gev_depth_limited") {
		t.Errorf("depth_limited: offshore %q, shallow %q", flags[1], flags[2])
	}
	// extremes.parquet: the delta-method pair and the default (profile) pair.
	ep := filepath.Join(out, "extremes.parquet")
	m, err := parquetread.Columns(ep, "cell_id", "method", "return_period_y", "hm0_m", "hm0_lo_m", "hm0_hi_m", "hm0_delta_lo_m", "hm0_delta_hi_m", "qc_flags")
	if err != nil {
		t.Fatal(err)
	}
	found := 0
	for _, r := range readEvdRefs(t) {
		for k := range m["cell_id"] {
			if m["cell_id"][k].(int64) != int64(idx[r.station]) || m["method"][k].(string) != "gev_annual_maxima" || m["return_period_y"][k].(float64) != r.T {
				continue
			}
			found++
			f := func(n string) float64 { return m[n][k].(float64) }
			if math.Abs(f("hm0_delta_lo_m")-r.dlo) > 1e-3 || math.Abs(f("hm0_delta_hi_m")-r.dhi) > 1e-3 {
				t.Errorf("%s T=%g delta [%.4f, %.4f], evd [%.4f, %.4f]", r.station, r.T, f("hm0_delta_lo_m"), f("hm0_delta_hi_m"), r.dlo, r.dhi)
			}
			if math.Abs(f("hm0_lo_m")-r.lo) > 1e-3*r.level || math.Abs(f("hm0_hi_m")-r.hi) > 1e-3*r.level || math.Abs(f("hm0_m")-r.level) > 5e-4*r.level {
				t.Errorf("%s T=%g extremes.parquet %.4f [%.4f, %.4f], evd %.4f [%.4f, %.4f]", r.station, r.T, f("hm0_m"), f("hm0_lo_m"), f("hm0_hi_m"), r.level, r.lo, r.hi)
			}
			if r.station == "shallow" && !hasFlag(m["qc_flags"][k].(string), "depth_limited") {
				t.Errorf("shallow T=%g: extremes.parquet flags %q", r.T, m["qc_flags"][k])
			}
		}
	}
	if found != 4 {
		t.Errorf("%d of 4 GEV rows found in extremes.parquet", found)
	}
}

// checkDemoExtremes looks at the demo's extremes as a user would: no published
// Hm0 level (GEV or GPD, any return period, level or interval end) above 3
// times the largest Hm0 of its cell (common sense: the 1,214.7 m level of an
// earlier demo came from a cell whose largest Hm0 was 7.98 m), none above the
// cell's depth limit without the depth_limited flag, and the demo does
// publish 100-year levels and design contours (a 30-year record).
func checkDemoExtremes(t *testing.T, dir string) {
	t.Helper()
	cp := filepath.Join(dir, "cells.parquet")
	hmax := readColumn(t, cp, "hm0_max_m")
	lim := readColumn(t, cp, "hm0_depth_limit_m")
	flags := readStrings(t, cp, "qc_flags")
	s := DefaultSpec()
	published := 0
	best, bestCell := math.Inf(-1), -1
	for _, T := range s.Extremes.ReturnPeriodsY {
		tag := periodTag(T)
		for _, m := range []struct{ prefix, flag string }{{"hm0_rl", "gev_depth_limited"}, {"hm0_pot_rl", "gpd_depth_limited"}} {
			lv := readColumn(t, cp, m.prefix+tag+"y_m")
			hi := readColumn(t, cp, m.prefix+tag+"y_hi_m")
			for i, v := range lv {
				if math.IsNaN(v) {
					continue
				}
				published++
				if T == 100 && m.prefix == "hm0_rl" && v > best {
					best, bestCell = v, i
				}
				for _, x := range []float64{v, hi[i]} {
					if x > 3*hmax[i] {
						t.Errorf("cell %d: %s%sy level or upper end %.2f m above 3 x its largest Hm0 %.2f m", i, m.prefix, tag, x, hmax[i])
					}
					if x > lim[i] && !hasFlag(flags[i], m.flag) {
						t.Errorf("cell %d: %s%sy %.2f m above the depth limit %.2f m without %s (%q)", i, m.prefix, tag, x, lim[i], m.flag, flags[i])
					}
				}
			}
		}
	}
	if bestCell < 0 {
		t.Fatal("the demo publishes no GEV 100-year level")
	}
	t.Logf("demo: %d published levels; largest published GEV 100-year Hm0 %.2f m in cell %d, whose largest Hm0 is %.2f m", published, best, bestCell, hmax[bestCell])
	pot := readColumn(t, cp, "hm0_pot_rl100y_m")
	pbest, pcell := math.Inf(-1), -1
	for i, v := range pot {
		if v > pbest {
			pbest, pcell = v, i
		}
	}
	if pcell >= 0 {
		t.Logf("demo: largest published GPD 100-year Hm0 %.2f m in cell %d, whose largest Hm0 is %.2f m", pbest, pcell, hmax[pcell])
	}
	dh := readColumn(t, cp, "design_hm0_100y_m")
	n := 0
	for i, v := range dh {
		if !math.IsNaN(v) {
			n++
			if v > 3*hmax[i] {
				t.Errorf("cell %d: 100-year contour Hm0 %.2f m above 3 x its largest Hm0 %.2f m", i, v, hmax[i])
			}
		}
	}
	if n == 0 {
		t.Error("the demo has no design contour")
	}
	rows, err := parquetread.Columns(filepath.Join(dir, "design.parquet"), "cell_id")
	if err != nil || len(rows["cell_id"]) == 0 {
		t.Errorf("design.parquet: %v, %d rows", err, len(rows["cell_id"]))
	}
}
