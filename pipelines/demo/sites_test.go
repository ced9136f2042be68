package demo

import (
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/synth"
)

// The demo's report sites are named by where they are: the inner-shelf
// site by the coast, the outer-shelf one offshore in deep water (issue 33:
// "Outer shelf mooring" sat in 20 m by the coast, "Inner shelf" in 180 m).
// The depths are the demo grid's own (cells.parquet's depth_m at each
// site's report cell), from one month of the demo's bulk hindcast (the
// depths do not change with time); the shelf runs from 15 m at the coast to
// 200 m offshore (synth.shelfDepth), so an inner-shelf site lies in less
// than 50 m and an outer-shelf one in more than 100 m.
func TestDemoSiteNamesMatchDepths(t *testing.T) {
	dir := t.TempDir()
	sc := synth.Demo()
	sc.Months = 1
	if _, err := sc.Write(filepath.Join(dir, "hindcast")); err != nil {
		t.Fatal(err)
	}
	s := Specs(dir)[0]
	s.Devices, s.Screening, s.Contours.Columns = nil, nil, nil
	s.Uncertainty.Validation, s.Uncertainty.Correct = "", "" // no validation of this one-month record
	s.Output.Report, s.Output.NetCDF, s.Output.GeoPackage = false, false, false
	mustRun(t, s)
	r, err := rundir.Open(s.Output.Dir, nil)
	if err != nil {
		t.Fatal(err)
	}
	sites, warns := report.Sites(r)
	if len(sites) != len(s.Sites) || len(warns) > 0 {
		t.Fatalf("%d report sites of %d (%v)", len(sites), len(s.Sites), warns)
	}
	depth := r.Cells.Col("depth_m")
	inner, outer := 0, 0
	for _, st := range sites {
		d := depth.Value(st.Cell)
		switch {
		case strings.Contains(st.Name, "Inner"):
			inner++
			if !(d < 50) {
				t.Errorf("site %q at (%g, %g): depth %.1f m, not on the inner shelf (< 50 m)", st.Name, st.Lon, st.Lat, d)
			}
		case strings.Contains(st.Name, "Outer"):
			outer++
			if !(d > 100) {
				t.Errorf("site %q at (%g, %g): depth %.1f m, not on the outer shelf (> 100 m)", st.Name, st.Lon, st.Lat, d)
			}
		}
		t.Logf("site %q: cell %d, depth %.1f m", st.Name, st.Cell, d)
	}
	if inner != 1 || outer != 1 {
		t.Errorf("%d inner-shelf and %d outer-shelf sites, want one of each", inner, outer)
	}
}
