package report

import (
	"fmt"
	"image/color"
	"math"
	"slices"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

// A site page's monthly device yield (monthly_yield.parquet): for each
// device its energy by calendar month, the climatology over the included
// year-months as bars and each included month of the record as a dot.

// MonthYield is what PlottedValues gives for the monthly-yield figure, one
// entry per device in the table's order: the calendar-month energies
// (index 0 = January; NaN where the table has none) and the included
// year-months' energies by calendar month.
type MonthYield struct {
	Device      string
	Climatology [12]float64
	Months      [12][]float64
}

// BarFill is the fill colour of the monthly-yield bars (viridis index 110),
// so that a check can find them in the figure's SVG.
var BarFill = NewViridis(0, 1).color(110)

// monthYieldFigure draws each device's energy by calendar month, when the
// run has monthly_yield.parquet rows for the site's cell: one panel per
// device (their scales may differ by orders of magnitude).
func monthYieldFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	cell := int64(s.Cell)
	t, err := r.CellTable(contract.TableMonthlyYield, cell, "device", "period", "month", "energy_mwh", "excluded")
	if err != nil || t == nil {
		return nil, err
	}
	dev, period, month, en, ex := t.Col("device"), t.Col("period"), t.Col("month"), t.Col("energy_mwh"), t.Col("excluded")
	if dev == nil || period == nil || month == nil || en == nil || ex == nil {
		return nil, nil
	}
	var data []*MonthYield
	for _, i := range t.RowsOf(contract.ColCellID, cell) {
		if len(data) == 0 || data[len(data)-1].Device != dev.Str[i] {
			d := &MonthYield{Device: dev.Str[i]}
			for m := range d.Climatology {
				d.Climatology[m] = math.NaN()
			}
			data = append(data, d)
		}
		d, m := data[len(data)-1], month.Int[i]-1
		if m < 0 || m > 11 {
			continue
		}
		switch {
		case period.Str[i] == "calendar_month":
			d.Climatology[m] = en.Float[i]
		case !ex.Bool[i] && !math.IsNaN(en.Float[i]):
			d.Months[m] = append(d.Months[m], en.Float[i])
		}
	}
	if len(data) == 0 {
		return nil, nil
	}
	var panels []*plot.Plot
	for _, d := range data {
		p := newPlot("Monthly energy of device "+d.Device, "calendar month", "MWh")
		vals := make(plotter.Values, 12)
		for m, v := range d.Climatology {
			if !math.IsNaN(v) {
				vals[m] = v
			}
		}
		bars, err := plotter.NewBarChart(vals, vg.Points(14))
		if err != nil {
			return nil, fmt.Errorf("report: monthly yield of %s: %w", d.Device, err)
		}
		bars.XMin, bars.Color, bars.LineStyle.Width = 1, BarFill, 0
		p.Add(bars)
		p.Legend.Add("climatology (included months pooled)", bars)
		var pts plotter.XYs
		for m, vs := range d.Months {
			for _, v := range vs {
				pts = append(pts, plotter.XY{X: float64(m + 1), Y: v})
			}
		}
		if len(pts) > 0 {
			sc, err := plotter.NewScatter(pts)
			if err == nil {
				sc.Color, sc.Shape, sc.Radius = color.Black, draw.CircleGlyph{}, vg.Points(1.4)
				p.Add(sc)
				p.Legend.Add("each included month of the record", sc)
			}
		}
		p.Add(plotter.NewGrid())
		p.Legend.Top = true
		p.Legend.TextStyle.Font.Size = vg.Points(7)
		p.X.Min, p.X.Max, p.Y.Min = 0.5, 12.5, 0
		var ticks []plot.Tick
		for m := 1; m <= 12; m++ {
			ticks = append(ticks, plot.Tick{Value: float64(m), Label: monthNames[m-1]})
		}
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		panels = append(panels, p)
	}
	f := &figure{Name: name, Title: "Monthly device yield",
		Caption: "Each device's energy by calendar month (monthly_yield.parquet): bars, the climatology (mean power over the months of the record with coverage of at least statistics.coverage_min, times the month's mean length); dots, each of those months. Months below the coverage threshold are left out.",
		W:       6.5 * vg.Inch, H: vg.Length(2.4*float64(len(panels))) * vg.Inch, data: slices.Clone(data)}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		tiles := draw.Tiles{Rows: len(panels), Cols: 1, PadY: vg.Points(8), PadX: vg.Points(4), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(4)}
		for k, p := range panels {
			p.Draw(tiles.At(dc, 0, k))
		}
	}
	return f, nil
}
