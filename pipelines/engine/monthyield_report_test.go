package engine

import (
	"context"
	"encoding/xml"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/runspec"
)

// TestMonthlyYieldFigureAgainstNumpy: the site page's monthly device yield
// figure, as the report writes it and as `swellgrid serve` builds a cell's
// page on demand (report.BuildCellPage), draws the calendar-month energies
// of testdata/e2e/reference.py (numpy on the python3-netcdf4 fixture, the
// same numbers TestE2EColumnsAgainstNumpy compares with
// monthly_yield.parquet). The values are read back from the SVG: the bars
// are the paths filled with report.BarFill, one panel per device (top to
// bottom in the spec's order), bars on the panel's baseline at y = 0, so
// their heights are proportional to the energies.
func TestMonthlyYieldFigureAgainstNumpy(t *testing.T) {
	s, err := runspec.LoadSpec("../../testdata/e2e/spec.toml")
	if err != nil {
		t.Fatal(err)
	}
	s.Output.Dir = t.TempDir()
	// cell 0 (2 % of its Hm0 missing) and cell 4 of the 3 x 2 fixture
	s.Sites = []runspec.SiteSpec{{Name: "corner", Lon: 10, Lat: 50}, {Name: "middle", Lon: 10.5, Lat: 50.5}}
	if _, err := Run(context.Background(), s, Options{Version: "test"}); err != nil {
		t.Fatal(err)
	}
	ref := readE2ERef(t)["monthly_yield"]
	want := func(cell int) [][]float64 { // per device in reference order, January first
		var out [][]float64
		var last string
		for _, r := range ref {
			if int(r["cell_id"].(float64)) != cell || r["period"] != "calendar_month" {
				continue
			}
			if d := r["device"].(string); d != last {
				out, last = append(out, nil), d
			}
			out[len(out)-1] = append(out[len(out)-1], r["energy_mwh"].(float64))
		}
		return out
	}
	r, err := rundir.Open(s.Output.Dir, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		cell int
		slug string
	}{{0, report.Slug("corner")}, {4, report.Slug("middle")}} {
		w := want(c.cell)
		if len(w) != 2 || len(w[0]) != 12 {
			t.Fatalf("cell %d: the reference has %d devices", c.cell, len(w))
		}
		disk, err := os.ReadFile(filepath.Join(s.Output.Dir, "report", "site_"+c.slug+"_monthly_yield.svg"))
		if err != nil {
			t.Fatal(err)
		}
		page, err := report.BuildCellPage(r, c.cell)
		if err != nil {
			t.Fatal(err)
		}
		name := fmt.Sprintf("site_cell_%d_monthly_yield.svg", c.cell)
		served, ok, err := page.File(name)
		if err != nil || !ok {
			t.Fatalf("cell %d: the served page has no %s (%v)", c.cell, name, err)
		}
		if !strings.Contains(string(page.HTML), name) {
			t.Errorf("cell %d: the served page does not show %s", c.cell, name)
		}
		for _, f := range []struct {
			what string
			svg  []byte
		}{{"report " + c.slug, disk}, {"served cell page", served}} {
			got := barsOf(t, f.svg)
			if len(got) != len(w) {
				t.Errorf("cell %d %s: %d panels of 12 bars, want %d devices", c.cell, f.what, len(got), len(w))
				continue
			}
			for d := range w {
				top, gtop := 0.0, 0.0
				for m := range w[d] {
					top, gtop = math.Max(top, w[d][m]), math.Max(gtop, got[d][m])
				}
				for m := range w[d] {
					// heights printed with 5 significant digits (vgsvg)
					if g, e := got[d][m]/gtop, w[d][m]/top; math.Abs(g-e) > 2e-4 {
						t.Errorf("cell %d %s device %d month %d: bar at %.5f of the tallest, numpy %.5f (%g of %g MWh)", c.cell, f.what, d, m+1, g, e, w[d][m], top)
					}
				}
			}
		}
	}
}

// barsOf returns the heights of the bars of a monthly-yield SVG: the paths
// filled with report.BarFill, grouped by their baseline (those with 12 on
// one baseline are a panel; the legend's swatch is alone on its own),
// panels from the top of the figure down, bars from left to right.
func barsOf(t *testing.T, svg []byte) [][]float64 {
	t.Helper()
	r, g, b, _ := report.BarFill.RGBA()
	fill := fmt.Sprintf("fill:#%02X%02X%02X", r>>8, g>>8, b>>8)
	type bar struct{ x, lo, h float64 }
	byBase := map[string][]bar{}
	num := regexp.MustCompile(`-?[0-9.]+(?:e[-+]?[0-9]+)?`)
	dec := xml.NewDecoder(strings.NewReader(string(svg)))
	for {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		se, ok := tok.(xml.StartElement)
		if !ok || se.Name.Local != "path" {
			continue
		}
		var d, style string
		for _, a := range se.Attr {
			switch a.Name.Local {
			case "d":
				d = a.Value
			case "style":
				style = a.Value
			}
		}
		if !strings.Contains(style, fill) {
			continue
		}
		xs, ys := []float64{}, []float64{}
		for k, s := range num.FindAllString(d, -1) {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("path %q: %v", d, err)
			}
			if k%2 == 0 {
				xs = append(xs, v)
			} else {
				ys = append(ys, v)
			}
		}
		sort.Float64s(xs)
		sort.Float64s(ys)
		if len(xs) < 4 || len(ys) < 4 {
			continue
		}
		base := strconv.FormatFloat(ys[0], 'f', 3, 64)
		byBase[base] = append(byBase[base], bar{xs[0], ys[0], ys[len(ys)-1] - ys[0]})
	}
	type panel struct {
		lo   float64
		bars []bar
	}
	var panels []panel
	for _, bs := range byBase {
		if len(bs) == 12 {
			sort.Slice(bs, func(i, j int) bool { return bs[i].x < bs[j].x })
			panels = append(panels, panel{bs[0].lo, bs})
		}
	}
	// the SVG's y axis points up (vgsvg's scale(1, -1)): the top panel has
	// the highest baseline
	sort.Slice(panels, func(i, j int) bool { return panels[i].lo > panels[j].lo })
	var out [][]float64
	for _, p := range panels {
		var hs []float64
		for _, b := range p.bars {
			hs = append(hs, b.h)
		}
		out = append(out, hs)
	}
	return out
}
