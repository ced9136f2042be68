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

// A site page's year-by-year and month-by-month figures: the annual maxima
// behind the GEV (annual_maxima.parquet), the annual mean wave power and
// each device's energy per year (annual.parquet), and the weather windows
// by calendar month (windows.parquet), with the windows' table.

// YearValue is one year's value on a year-by-year figure; Excluded marks a
// year its table leaves out (drawn hollow).
type YearValue struct {
	Year     int64
	Value    float64
	Excluded bool
}

// AnnualSeries is what PlottedValues gives for the year-by-year figure:
// the annual maxima of Hm0 (annual_maxima.parquet), the annual mean wave
// power (annual.parquet's resource rows) and each device's energy per year
// (its device rows), in year order.
type AnnualSeries struct {
	MaxHm0       []YearValue
	MeanPower    []YearValue
	DeviceEnergy map[string][]YearValue
	Devices      []string // in the table's order
}

// annualFigure draws the year-by-year figure of a site, when the run has
// annual_maxima.parquet or annual.parquet rows for its cell.
func annualFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	cell := int64(s.Cell)
	data := &AnnualSeries{DeviceEnergy: map[string][]YearValue{}}
	am, err := r.CellTable(contract.TableAnnualMaxima, cell)
	if err != nil {
		return nil, err
	}
	if am != nil {
		year, hm0, ex := am.Col("year"), am.Col("hm0_m"), am.Col("excluded")
		if year != nil && hm0 != nil && ex != nil {
			for _, i := range am.RowsOf(contract.ColCellID, cell) {
				if !math.IsNaN(hm0.Float[i]) {
					data.MaxHm0 = append(data.MaxHm0, YearValue{year.Int[i], hm0.Float[i], ex.Bool[i]})
				}
			}
		}
	}
	an, err := r.CellTable(contract.TableAnnual, cell)
	if err != nil {
		return nil, err
	}
	if an != nil {
		year, dev, pw, en, ex := an.Col("year"), an.Col("device"), an.Col(contract.ColPowerMean), an.Col("energy_mwh"), an.Col("excluded")
		if year != nil && dev != nil && pw != nil && en != nil && ex != nil {
			for _, i := range an.RowsOf(contract.ColCellID, cell) {
				d := dev.Str[i]
				if d == "" {
					if !math.IsNaN(pw.Float[i]) {
						data.MeanPower = append(data.MeanPower, YearValue{year.Int[i], pw.Float[i], ex.Bool[i]})
					}
					continue
				}
				if !slices.Contains(data.Devices, d) {
					data.Devices = append(data.Devices, d)
				}
				if !math.IsNaN(en.Float[i]) {
					data.DeviceEnergy[d] = append(data.DeviceEnergy[d], YearValue{year.Int[i], en.Float[i], ex.Bool[i]})
				}
			}
		}
	}
	var panels []*plot.Plot
	if len(data.MaxHm0) > 0 {
		p := newPlot("Annual maxima of Hm0 (the GEV's input)", "analysis year", "Hm0 (m)")
		yearPanel(p, []yearLine{{"annual maximum", data.MaxHm0, 40}})
		panels = append(panels, p)
	}
	if len(data.MeanPower) > 0 {
		p := newPlot("Annual mean wave power", "analysis year", "J (kW/m)")
		yearPanel(p, []yearLine{{"annual mean", data.MeanPower, 110}})
		panels = append(panels, p)
	}
	var lines []yearLine
	for k, d := range data.Devices {
		if len(data.DeviceEnergy[d]) > 0 {
			lines = append(lines, yearLine{"device " + d, data.DeviceEnergy[d], 40 + (180*k)/max(1, len(data.Devices)-1)})
		}
	}
	if len(lines) > 0 {
		p := newPlot("Device energy per year", "analysis year", "MWh")
		yearPanel(p, lines)
		panels = append(panels, p)
	}
	if len(panels) == 0 {
		return nil, nil
	}
	f := &figure{Name: name, Title: "Year by year",
		Caption: "Year by year, by analysis year (extremes.year_start_month): the annual maxima of Hm0 the GEV was fitted to (annual_maxima.parquet), the annual mean wave power and each device's energy in the year (annual.parquet). Hollow markers: years left out (of the GEV for low coverage; of the inter-annual statistics below statistics.coverage_min).",
		W:       6.5 * vg.Inch, H: vg.Length(2.4*float64(len(panels))) * vg.Inch, data: data}
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

// yearLine is one series of a year-by-year panel with its viridis index.
type yearLine struct {
	label  string
	values []YearValue
	colour int
}

// yearPanel draws each series as markers joined by a line over the
// included years, excluded years as hollow markers, with whole-year ticks.
func yearPanel(p *plot.Plot, lines []yearLine) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, l := range lines {
		c := NewViridis(0, 1).color(l.colour)
		var in, out plotter.XYs
		for _, v := range l.values {
			lo, hi = math.Min(lo, float64(v.Year)), math.Max(hi, float64(v.Year))
			if v.Excluded {
				out = append(out, plotter.XY{X: float64(v.Year), Y: v.Value})
			} else {
				in = append(in, plotter.XY{X: float64(v.Year), Y: v.Value})
			}
		}
		if len(in) > 0 {
			ln, sc, err := plotter.NewLinePoints(in)
			if err == nil {
				ln.Color, ln.Width = c, vg.Points(1)
				sc.Color, sc.Shape, sc.Radius = c, draw.CircleGlyph{}, vg.Points(2.5)
				p.Add(ln, sc)
				p.Legend.Add(l.label, ln, sc)
			}
		}
		if len(out) > 0 {
			sc, err := plotter.NewScatter(out)
			if err == nil {
				sc.Color, sc.Shape, sc.Radius = c, draw.RingGlyph{}, vg.Points(2.5)
				p.Add(sc)
				p.Legend.Add(l.label+", year left out", sc)
			}
		}
	}
	p.Add(plotter.NewGrid())
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(7)
	p.Y.Min = 0
	if hi >= lo {
		p.X.Min, p.X.Max = lo-0.5, hi+0.5
		p.X.Tick.Marker = yearTicks{}
	}
}

// yearTicks labels whole years, at most about ten of them.
type yearTicks struct{}

func (yearTicks) Ticks(lo, hi float64) []plot.Tick {
	a, b := math.Ceil(lo), math.Floor(hi)
	step := math.Max(1, math.Ceil((b-a+1)/10))
	var ts []plot.Tick
	for y := a; y <= b; y++ {
		t := plot.Tick{Value: y}
		if math.Mod(y-a, step) == 0 {
			t.Label = fmt.Sprintf("%d", int64(y))
		}
		ts = append(ts, t)
	}
	return ts
}

// WindowLine is one weather-window criterion of a site (windows.parquet):
// Hm0 below LimitM for at least DurationH, by calendar month (index 0 =
// January): the share of the valid time inside windows and the mean
// number of windows per month (NaN where the table has none).
type WindowLine struct {
	LimitM, DurationH  float64
	Fraction, PerMonth [12]float64
}

// windowLines reads the windows of a site's cell, criteria in the table's
// order of first appearance.
func windowLines(r *rundir.Run, s Site) ([]WindowLine, error) {
	t, err := r.CellTable(contract.TableWindows, int64(s.Cell), "hm0_limit_m", "min_duration_h", "month", "fraction_in_windows", "windows_per_month")
	if err != nil || t == nil {
		return nil, err
	}
	lim, dur, mon, frac, per := t.Col("hm0_limit_m"), t.Col("min_duration_h"), t.Col("month"), t.Col("fraction_in_windows"), t.Col("windows_per_month")
	if lim == nil || dur == nil || mon == nil || frac == nil || per == nil {
		return nil, nil
	}
	var out []WindowLine
	at := map[[2]float64]int{}
	for _, i := range t.RowsOf(contract.ColCellID, int64(s.Cell)) {
		m := mon.Int[i]
		if m < 1 || m > 12 {
			continue
		}
		key := [2]float64{lim.Float[i], dur.Float[i]}
		k, ok := at[key]
		if !ok {
			k = len(out)
			at[key] = k
			w := WindowLine{LimitM: key[0], DurationH: key[1]}
			for j := range w.Fraction {
				w.Fraction[j], w.PerMonth[j] = math.NaN(), math.NaN()
			}
			out = append(out, w)
		}
		out[k].Fraction[m-1], out[k].PerMonth[m-1] = frac.Float[i], per.Float[i]
	}
	return out, nil
}

// windowsFigure draws the share of the time inside weather windows by
// calendar month: a panel per Hm0 limit, a line per minimum duration.
func windowsFigure(lines []WindowLine, name string) *figure {
	if len(lines) == 0 {
		return nil
	}
	var limits, durs []float64
	for _, w := range lines {
		if !slices.Contains(limits, w.LimitM) {
			limits = append(limits, w.LimitM)
		}
		if !slices.Contains(durs, w.DurationH) {
			durs = append(durs, w.DurationH)
		}
	}
	slices.Sort(limits)
	slices.Sort(durs)
	var ticks []plot.Tick
	for m := 1; m <= 12; m++ {
		lab := monthNames[m-1]
		if len(limits) > 2 && m%2 == 0 {
			lab = "" // narrow panels: every other month named
		}
		ticks = append(ticks, plot.Tick{Value: float64(m), Label: lab})
	}
	var panels []*plot.Plot
	for pi, lim := range limits {
		ylab := ""
		if pi == 0 {
			ylab = "time inside windows (%)"
		}
		p := newPlot(fmt.Sprintf("Hm0 below %s m", fmtNum(lim)), "calendar month", ylab)
		for _, w := range lines {
			if w.LimitM != lim {
				continue
			}
			var pts plotter.XYs
			for m, v := range w.Fraction {
				if !math.IsNaN(v) {
					pts = append(pts, plotter.XY{X: float64(m + 1), Y: 100 * v})
				}
			}
			if len(pts) == 0 {
				continue
			}
			ln, sc, err := plotter.NewLinePoints(pts)
			if err != nil {
				continue
			}
			k := slices.Index(durs, w.DurationH)
			c := NewViridis(0, 1).color(20 + (200*k)/max(1, len(durs)-1))
			ln.Color, ln.Width = c, vg.Points(1.3)
			ln.Dashes = [][]vg.Length{nil, {vg.Points(4), vg.Points(2)}, {vg.Points(1), vg.Points(1.5)}}[k%3]
			sc.Color, sc.Shape, sc.Radius = c, draw.CircleGlyph{}, vg.Points(1.8)
			p.Add(ln, sc)
			if pi == 0 {
				p.Legend.Add(fmt.Sprintf("at least %s h", fmtNum(w.DurationH)), ln, sc)
			}
		}
		p.Add(plotter.NewGrid())
		p.Legend.Top, p.Legend.Left = true, true
		p.Legend.TextStyle.Font.Size = vg.Points(7)
		p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0.5, 12.5, 0, 100
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		panels = append(panels, p)
	}
	f := &figure{Name: name, Title: "Weather windows by month",
		Caption: "Share of the valid time inside weather windows (spells with Hm0 below the limit lasting at least the duration) by calendar month: a panel per Hm0 limit, a line per minimum duration (windows.parquet; the table below also gives the mean number of windows per month).",
		W:       vg.Length(max(6.5, 2.4*float64(len(panels)))) * vg.Inch, H: 3.4 * vg.Inch, data: lines}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		tiles := draw.Tiles{Rows: 1, Cols: len(panels), PadX: vg.Points(6), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(4)}
		for k, p := range panels {
			p.Draw(tiles.At(dc, k, 0))
		}
	}
	return f
}

// pageTable is a table on a site page: a caption, a header and rows.
type pageTable struct {
	Caption string
	Header  []string
	Rows    [][]string
}

// windowsTable is the windows by month as a table: per criterion the
// percentage of time inside windows and the windows per month.
func windowsTable(lines []WindowLine) *pageTable {
	if len(lines) == 0 {
		return nil
	}
	t := &pageTable{Caption: "Weather windows by calendar month (windows.parquet): per criterion, the percentage of the valid time inside windows, and the mean number of windows beginning per month.",
		Header: append([]string{"Hm0 limit (m)", "duration (h)", "quantity"}, monthNames...)}
	for _, w := range lines {
		a := []string{fmtNum(w.LimitM), fmtNum(w.DurationH), "% of time"}
		b := []string{fmtNum(w.LimitM), fmtNum(w.DurationH), "windows per month"}
		for m := 0; m < 12; m++ {
			a = append(a, fmtFixed(100*w.Fraction[m], 1))
			b = append(b, fmtFixed(w.PerMonth[m], 2))
		}
		t.Rows = append(t.Rows, a, b)
	}
	return t
}

// fmtFixed formats x with d decimals ("–" for NaN).
func fmtFixed(x float64, d int) string {
	if math.IsNaN(x) {
		return "–"
	}
	return fmt.Sprintf("%.*f", d, x)
}
