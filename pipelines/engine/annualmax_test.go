package engine

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	sgreport "swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
)

// annual_maxima.parquet (issue 33) equals numpy's annual maxima of the
// python3-netcdf4 fixture testdata/extremes_points/extremes_points.nc run
// with analysis years from 1 July (reference:
// testdata/extremes_points/make_annual_maxima_refs.py, Debian's numpy and
// netCDF4, no swellgrid code): every year with data, its largest Hm0 (the
// earliest on ties: the flat station's maxima are the first step of each
// year), its time, Te and Tp of that step (float32 as stored: exact), the
// valid hours, the full year (366 days, the longest analysis year of the
// record) and the coverage (exact ratios), and the two half years at either
// end left out of the GEV. The GEV's year count in cells.parquet and the n of
// extremes.parquet's GEV rows are the rows not excluded.
func TestAnnualMaximaAgainstNumpy(t *testing.T) {
	out := t.TempDir()
	s := testSpec(t, "testdata/extremes_points/extremes_points.nc", out)
	s.Extremes.ReturnPeriodsY = []float64{10, 100}
	s.Extremes.YearStartMonth = 7
	mustRun(t, s)

	ref := readAnnualMaximaRefs(t)
	got, err := parquetread.Columns(filepath.Join(out, "annual_maxima.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	n := len(got["cell_id"])
	if n != len(ref) {
		t.Fatalf("annual_maxima.parquet has %d rows, numpy %d", n, len(ref))
	}
	f32 := func(v any) float32 { return float32(runcheck.Num(v)) }
	excluded := map[int64]int{}
	for i, r := range ref {
		id, _ := got["cell_id"][i].(int64)
		year, _ := got["year"][i].(int64)
		tm, _ := got["time"][i].(string)
		ex, _ := got["excluded"][i].(bool)
		if id != r.cell || year != r.year || tm != r.time || ex != r.excluded {
			t.Errorf("row %d: cell %d year %d time %q excluded %v; numpy: %d %d %q %v", i, id, year, tm, ex, r.cell, r.year, r.time, r.excluded)
		}
		// float32 values as stored: the same float32 exactly.
		if f32(got["hm0_m"][i]) != float32(r.hm0) || f32(got["te_s"][i]) != float32(r.te) || f32(got["tp_s"][i]) != float32(r.tp) {
			t.Errorf("row %d (cell %d, %d): hm0 %v te %v tp %v; numpy %v %v %v", i, r.cell, r.year, got["hm0_m"][i], got["te_s"][i], got["tp_s"][i], r.hm0, r.te, r.tp)
		}
		for _, c := range []struct {
			name string
			want float64
		}{{"valid_hours", r.valid}, {"full_year_hours", r.full}, {"coverage_frac", r.cov}} {
			if g := runcheck.Num(got[c.name][i]); !runcheck.SameNum(g, c.want) {
				t.Errorf("row %d (cell %d, %d): %s = %v, numpy %v", i, r.cell, r.year, c.name, g, c.want)
			}
		}
		if r.excluded {
			excluded[r.cell]++
		}
	}
	cells, err := parquetread.Columns(filepath.Join(out, "cells.parquet"), "gev_years")
	if err != nil {
		t.Fatal(err)
	}
	years := cells["gev_years"]
	perCell := map[int64]int{}
	for _, r := range ref {
		perCell[r.cell]++
	}
	for c, k := range perCell {
		if want := float64(k - excluded[c]); runcheck.Num(years[c]) != want {
			t.Errorf("cell %d: gev_years %v, annual_maxima.parquet has %v years not excluded", c, years[c], want)
		}
	}
	// The report's year-by-year figure draws these maxima, the two half
	// years hollow (excluded), at every point of the set.
	run, err := rundir.Open(out, nil)
	if err != nil {
		t.Fatal(err)
	}
	sites, _ := sgreport.Sites(run)
	if len(sites) != len(perCell) {
		t.Fatalf("%d site pages, %d cells", len(sites), len(perCell))
	}
	for _, st := range sites {
		vals, err := sgreport.PlottedValues(run, st)
		if err != nil {
			t.Fatal(err)
		}
		ys, ok := vals["site_"+st.Slug+"_year_by_year"].(*sgreport.AnnualSeries)
		if !ok {
			t.Errorf("site %s: no year-by-year figure", st.Name)
			continue
		}
		var want []annualMaxRef
		for _, r := range ref {
			if r.cell == int64(st.Cell) {
				want = append(want, r)
			}
		}
		if len(ys.MaxHm0) != len(want) {
			t.Errorf("site %s: %d annual maxima drawn, numpy %d", st.Name, len(ys.MaxHm0), len(want))
			continue
		}
		for k, w := range want {
			g := ys.MaxHm0[k]
			if g.Year != w.year || g.Excluded != w.excluded || float32(g.Value) != float32(w.hm0) {
				t.Errorf("site %s year %d: drawn %+v, numpy %d %v excluded %v", st.Name, k, g, w.year, w.hm0, w.excluded)
			}
		}
	}

	ext, err := parquetread.Columns(filepath.Join(out, "extremes.parquet"), "cell_id", "method", "n")
	if err != nil {
		t.Fatal(err)
	}
	for i := range ext["cell_id"] {
		c := ext["cell_id"][i].(int64)
		if ext["method"][i] == "gev_annual_maxima" && runcheck.Num(ext["n"][i]) != float64(perCell[c]-excluded[c]) {
			t.Errorf("cell %d: extremes.parquet GEV n = %v, annual_maxima.parquet has %d years not excluded", c, ext["n"][i], perCell[c]-excluded[c])
		}
	}
}

type annualMaxRef struct {
	cell, year       int64
	time             string
	hm0, te, tp      float64
	valid, full, cov float64
	excluded         bool
}

func readAnnualMaximaRefs(t *testing.T) []annualMaxRef {
	t.Helper()
	f, err := os.Open("../../testdata/extremes_points/annual_maxima_refs.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var out []annualMaxRef
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		l := sc.Text()
		if strings.HasPrefix(l, "#") || strings.HasPrefix(l, "cell_id") {
			continue
		}
		p := strings.Split(l, ",")
		if len(p) != 10 {
			t.Fatalf("annual_maxima_refs.csv: %q", l)
		}
		num := func(s string) float64 {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatal(err)
			}
			return v
		}
		out = append(out, annualMaxRef{int64(num(p[0])), int64(num(p[1])), p[2], num(p[3]), num(p[4]), num(p[5]),
			num(p[6]), num(p[7]), num(p[8]), p[9] == "true"})
	}
	if len(out) == 0 || math.IsNaN(out[0].hm0) {
		t.Fatal("annual_maxima_refs.csv: no rows")
	}
	return out
}
