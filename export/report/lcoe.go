package report

// The report's figures of energy delivered ashore (issue 32): a map of the
// levelised cost per cell for every screening scenario with costs, and per
// site and scenario a waterfall from the open-water AEP to the energy
// delivered at the connection point. Both read screening.parquet; they draw
// values, the products of the factors are stats/delivery's.

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/stats/delivery"
)

// lcoeMaps draws the levelised cost of energy per cell of every screening
// scenario with one (rundir.LCOEFields), with isolines at the levels of its
// band layer in atlas.gpkg (grid.NiceLevels over its range), into dir.
func lcoeMaps(r *rundir.Run, dir string) ([]pageFigure, []string, error) {
	fs, err := r.LCOEFields()
	if err != nil {
		return nil, nil, fmt.Errorf("report: %w", err)
	}
	var figs []pageFigure
	var files []string
	for _, lf := range fs {
		c := lf.Column
		f := &Field{NX: r.NX, NY: r.NY, Points: !r.Structured(), Lon: r.Lon(), Lat: r.Lat(), Value: c.Float, Land: r.Land, Name: c.Name, Unit: c.Unit, Marks: mapMarks(r)}
		meshField(r, f)
		lo, hi, n := f.Range()
		if n == 0 {
			continue
		}
		if (r.Structured() || f.Isolines != nil) && hi > lo {
			f.Levels = grid.NiceLevels(lo, hi, 8)
		}
		title := "Levelised cost of energy, screening scenario " + lf.Scenario + unitSuffix(c.Unit)
		fig, info, err := Map("map_"+c.Name, title, f)
		if err != nil {
			continue // no sea cell: nothing to draw
		}
		names, err := save(dir, fig)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, names...)
		caption := fmt.Sprintf("Levelised cost of energy of each cell's layout under scenario %s (screening.parquet lcoe_per_mwh; every cell with a delivered energy and an area, passing or not): "+
			"LCOE = (capital x CRF + operating cost per year) / delivered energy per year, with the capital recovery factor CRF = r (1+r)^n / ((1+r)^n - 1) (the standard annuity formula; r the discount rate, n the lifetime in years). "+
			"Range %s to %s %s; isolines and the bands of atlas.gpkg (bands_%s) at %s. %s",
			lf.Scenario, fmtNum(lo), fmtNum(hi), c.Unit, c.Name, levelsText(f.Levels), contract.LCOENote)
		caption += marksCaption(info.Marks)
		figs = append(figs, pageFigure{Title: title, Caption: caption, PNG: names[0], SVG: names[1], Map: info})
	}
	return figs, files, nil
}

func levelsText(lv []float64) string {
	if len(lv) == 0 {
		return "no levels (one value)"
	}
	s := ""
	for i, x := range lv {
		if i > 0 {
			s += ", "
		}
		s += fmtNum(x)
	}
	return s
}

// WaterfallStep is one bar of a waterfall: from Low to High (MWh/yr of one
// device), a whole bar (Total) or the share a factor takes away.
type WaterfallStep struct {
	Label     string
	Low, High float64
	Total     bool
}

// Waterfall returns the steps from the open-water AEP to the delivered
// energy of one device:
//
//	AEP -> AEP x array factor -> x availability -> x (1 - loss) = delivered
//
// (stats/delivery.Delivered, the factors as screening.parquet holds them):
// the AEP, the three losses (each from the energy after it to the energy
// before it) and the delivered energy.
func Waterfall(aep, arrayFactor, availability, loss float64) []WaterfallStep {
	a := delivery.Delivered(aep, arrayFactor, 1, 0)
	b := delivery.Delivered(aep, arrayFactor, availability, 0)
	d := delivery.Delivered(aep, arrayFactor, availability, loss)
	return []WaterfallStep{
		{"open-water AEP", 0, aep, true},
		{"array factor\n" + fmtNum(arrayFactor), a, aep, false},
		{"availability\n" + fmtNum(availability), b, a, false},
		{"export loss\n" + fmtNum(100*loss) + " %", d, b, false},
		{"delivered", 0, d, true},
	}
}

var (
	waterfallTotal = color.NRGBA{0x3b, 0x52, 0x8b, 0xff} // viridis blue: energies
	waterfallLoss  = color.NRGBA{0xd6, 0x27, 0x28, 0xff} // red: what a factor takes away
)

// waterfallFigures draws, for every screening scenario with a delivered
// energy at the site's cell, the waterfall of one device's energy
// (Waterfall) from screening.parquet's aep_mwh, array_factor, availability,
// loss_frac and delivered_mwh, each bar labelled with its energy.
func waterfallFigures(r *rundir.Run, s Site) ([]*figure, error) {
	t, err := r.CellTable(contract.TableScreening, int64(s.Cell))
	if err != nil || t == nil {
		return nil, err
	}
	sc := t.Col("scenario")
	cols := map[string]*rundir.Column{}
	for _, n := range []string{"aep_mwh", "array_factor", "availability", "loss_frac", "delivered_mwh", "route_km"} {
		if cols[n] = t.Col(n); cols[n] == nil {
			return nil, nil // a screening from before the delivered energy
		}
	}
	if sc == nil {
		return nil, nil
	}
	var figs []*figure
	for k, i := range t.RowsOf(contract.ColCellID, int64(s.Cell)) {
		del := cols["delivered_mwh"].Value(i)
		if math.IsNaN(del) {
			continue
		}
		steps := Waterfall(cols["aep_mwh"].Value(i), cols["array_factor"].Value(i), cols["availability"].Value(i), cols["loss_frac"].Value(i))
		title := "From open-water AEP to delivered energy, scenario " + sc.Str[i]
		name := "site_" + s.Slug + "_waterfall_" + strconv.Itoa(k+1)
		caption := fmt.Sprintf("One device's energy at this cell under screening scenario %s (screening.parquet): the open-water AEP %s MWh/yr, times the array factor %s, the availability from repair access %s and one minus the export loss %s %% over a route of %s km, gives %s MWh/yr delivered at the connection point (blue: energies; red: what each factor takes away). Screening estimates; see the caution.",
			sc.Str[i], fmtNum(steps[0].High), fmtNum(cols["array_factor"].Value(i)), fmtNum(cols["availability"].Value(i)), fmtNum(100*cols["loss_frac"].Value(i)), fmtNum(cols["route_km"].Value(i)), fmtNum(del))
		figs = append(figs, waterfallFigure(name, title, caption, steps))
	}
	return figs, nil
}

// waterfallPlot draws the steps as floating bars.
type waterfallPlot struct{ steps []WaterfallStep }

func (w waterfallPlot) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	half := 0.35
	for k, s := range w.steps {
		x := float64(k)
		col := waterfallLoss
		if s.Total {
			col = waterfallTotal
		}
		c.SetColor(col)
		lo, hi := math.Min(s.Low, s.High), math.Max(s.Low, s.High)
		if math.IsNaN(lo) || math.IsNaN(hi) {
			continue
		}
		var path vg.Path
		path.Move(vg.Point{X: tx(x - half), Y: ty(lo)})
		path.Line(vg.Point{X: tx(x + half), Y: ty(lo)})
		path.Line(vg.Point{X: tx(x + half), Y: ty(hi)})
		path.Line(vg.Point{X: tx(x - half), Y: ty(hi)})
		path.Close()
		c.Fill(path)
		label := fmtNum(s.High)
		if !s.Total {
			label = "-" + fmtNum(s.High-s.Low)
		}
		sty := draw.TextStyle{Color: lineColor, Font: p.X.Tick.Label.Font, Handler: p.X.Tick.Label.Handler, XAlign: draw.XCenter}
		c.FillText(sty, vg.Point{X: tx(x), Y: ty(hi) + vg.Points(3)}, label)
	}
}

func (w waterfallPlot) DataRange() (xmin, xmax, ymin, ymax float64) {
	ymax = 0
	for _, s := range w.steps {
		ymax = math.Max(ymax, math.Max(s.Low, s.High))
	}
	return -0.6, float64(len(w.steps)) - 0.4, 0, ymax * 1.1
}

func waterfallFigure(name, title, caption string, steps []WaterfallStep) *figure {
	p := newPlot(title, "", "energy of one device (MWh/yr)")
	p.Add(waterfallPlot{steps})
	labels := make([]string, len(steps))
	for k, s := range steps {
		labels[k] = s.Label
	}
	p.NominalX(labels...)
	p.Y.Min = 0
	f := &figure{Name: name, Title: title, Caption: caption, W: 6.5 * vg.Inch, H: 4 * vg.Inch, data: steps}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(dc)
	}
	return f
}
