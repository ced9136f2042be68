package report

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"github.com/paulmach/orb"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/stats/climate"
	"swellgrid/stats/seastate"
)

// Site is a place with a page: a named spec site taken to its nearest sea
// cell, or a point of a point set.
type Site struct {
	Name     string
	Slug     string  // file-name form of the name
	Lon, Lat float64 // as asked (spec sites) or the point's position
	Cell     int
	DistKM   float64 // from the asked position to the cell centre
}

var monthNames = []string{"Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"}

// Slug is the file-name form of a site or station name: lower-case ASCII
// letters and digits, every other character an underscore, without leading
// or trailing underscores. Two names with the same slug would share a page.
func Slug(s string) string { return slug(s) }

// The longest file names of a site's and a station's pages and figures
// are the slug with these many bytes of prefix and suffix
// ("site_<slug>_design_contours_hm0_te.svg", "validation_<slug>_scatter.png").
const (
	SiteNameOverhead    = len("site_") + len("_design_contours_hm0_te.svg")
	StationNameOverhead = len("validation_") + len("_scatter.png")
)

func slug(s string) string {
	var b strings.Builder
	for _, r := range strings.ToLower(s) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	return strings.Trim(b.String(), "_")
}

// Sites lists the pages of r: every point of a point set, else the spec's
// [[site]] list taken to the nearest sea cell. Sites with no sea cell are
// left out with a warning.
func Sites(r *rundir.Run) ([]Site, []string) {
	var out []Site
	var warns []string
	if r.GridKind == grid.Points {
		lon, lat := r.Lon(), r.Lat()
		for i := range lon {
			if r.Land[i] {
				continue
			}
			n := fmt.Sprintf("point %d", i)
			out = append(out, Site{Name: n, Slug: fmt.Sprintf("point_%d", i), Lon: lon[i], Lat: lat[i], Cell: i})
		}
		return out, nil
	}
	used := map[string]bool{}
	for _, s := range r.Manifest.Parameters.Sites {
		c, d := r.NearestSeaCell(s.Lon, s.Lat)
		if c < 0 {
			warns = append(warns, fmt.Sprintf("report: site %q: no sea cell with a result; no page", s.Name))
			continue
		}
		sl := slug(s.Name)
		if sl == "" || used[sl] {
			sl = fmt.Sprintf("%s_%d", sl, len(out)+1)
		}
		used[sl] = true
		out = append(out, Site{Name: s.Name, Slug: sl, Lon: s.Lon, Lat: s.Lat, Cell: c, DistKM: d})
	}
	return out, warns
}

// siteFigures draws the figures of one site; each comes back with its
// caption. Missing tables or rows leave a figure out with a note.
func siteFigures(r *rundir.Run, s Site) ([]*figure, []string, error) {
	var figs []*figure
	var notes []string
	base := "site_" + s.Slug + "_"
	if f, err := monthlyFigure(r, s, base+"monthly_power_hm0"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	} else {
		notes = append(notes, "no monthly rows for this cell")
	}
	if f, err := exceedanceFigure(r, s, base+"exceedance_hm0_power"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	}
	if f, note, err := occurrenceFigure(r, s, base+"occurrence_hm0_te"); err != nil {
		return nil, nil, err
	} else {
		if f != nil {
			figs = append(figs, f)
		}
		notes = append(notes, note...)
	}
	if f, err := directionsFigure(r, s, base+"rose_power_occurrence"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	} else {
		notes = append(notes, "directional power rose: not drawn, directions.parquet has no rows for this cell (no step with a direction, or a 1-D spectrum)")
	}
	if f, err := returnLevelFigure(r, s, base+"return_levels_hm0"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	} else {
		notes = append(notes, "no return levels for this cell (record too short or fits refused; see qc_flags)")
	}
	if f, err := designFigure(r, s, base+"design_contours_hm0_te"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	}
	if f, err := energyBandsFigure(r, s, base+"energy_bands"); err != nil {
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	}
	if f, err := componentsFigure(r, s, base+"uncertainty_components"); err != nil { // bands.go
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	}
	if f, err := annualFigure(r, s, base+"year_by_year"); err != nil { // yearly.go
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	} else {
		notes = append(notes, "year by year: not drawn, neither annual_maxima.parquet nor annual.parquet has rows for this cell")
	}
	if f, err := monthYieldFigure(r, s, base+"monthly_yield"); err != nil { // monthyield.go
		return nil, nil, err
	} else if f != nil {
		figs = append(figs, f)
	}
	if wl, err := windowLines(r, s); err != nil {
		return nil, nil, err
	} else if f := windowsFigure(wl, base+"windows_by_month"); f != nil {
		figs = append(figs, f)
	} else {
		notes = append(notes, "weather windows: not drawn, windows.parquet has no rows for this cell")
	}
	return figs, notes, nil
}

func monthlyFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableMonthly, int64(s.Cell), "period", "year", "month", "excluded", contract.ColPowerMean, contract.ColHm0Mean)
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	if len(rows) == 0 {
		return nil, nil
	}
	period, year, month, excl := t.Col("period"), t.Col("year"), t.Col("month"), t.Col("excluded")
	panel := func(col, title, unit string) *plot.Plot {
		v := t.Col(col)
		p := newPlot(title, "calendar month", unit)
		years := map[int64]plotter.XYs{}
		var clim plotter.XYs
		for _, i := range rows {
			x, y := float64(month.Int[i]), v.Float[i]
			if math.IsNaN(y) {
				continue
			}
			switch period.Str[i] {
			case "calendar_month":
				clim = append(clim, plotter.XY{X: x, Y: y})
			case "year_month":
				if excl != nil && excl.Bool[i] {
					continue
				}
				years[year.Int[i]] = append(years[year.Int[i]], plotter.XY{X: x, Y: y})
			}
		}
		ys := make([]int64, 0, len(years))
		for y := range years {
			ys = append(ys, y)
		}
		sort.Slice(ys, func(i, j int) bool { return ys[i] < ys[j] })
		grey := color.NRGBA{0x90, 0x90, 0x90, 0xff}
		for _, y := range ys {
			pts := years[y]
			sort.Slice(pts, func(i, j int) bool { return pts[i].X < pts[j].X })
			l, sc, err := plotter.NewLinePoints(pts)
			if err == nil {
				l.Color, l.Width = color.NRGBA{0xb0, 0xb0, 0xb0, 0xff}, vg.Points(0.6)
				sc.Color, sc.Radius, sc.Shape = grey, vg.Points(1.6), draw.CircleGlyph{}
				p.Add(l, sc)
			}
		}
		sort.Slice(clim, func(i, j int) bool { return clim[i].X < clim[j].X })
		if len(clim) > 0 {
			l, sc, err := plotter.NewLinePoints(clim)
			if err == nil {
				c := NewViridis(0, 1).color(60)
				l.Color, l.Width = c, vg.Points(2)
				sc.Color, sc.Radius, sc.Shape = c, vg.Points(2.5), draw.CircleGlyph{}
				p.Add(l, sc)
				p.Legend.Add("climatology (mean of included years)", l, sc)
			}
		}
		if len(ys) > 0 {
			sw := &plotter.Line{XYs: plotter.XYs{{X: 1, Y: 0}}, LineStyle: draw.LineStyle{Color: grey, Width: vg.Points(0.6)}}
			p.Legend.Add(fmt.Sprintf("each year %d–%d", ys[0], ys[len(ys)-1]), sw)
		}
		p.Legend.Top = true
		p.Legend.TextStyle.Font.Size = vg.Points(7)
		p.X.Min, p.X.Max = 0.5, 12.5
		p.Y.Min = 0
		var ticks []plot.Tick
		for m := 1; m <= 12; m++ {
			ticks = append(ticks, plot.Tick{Value: float64(m), Label: monthNames[m-1]})
		}
		p.X.Tick.Marker = plot.ConstantTicks(ticks)
		return p
	}
	top := panel(contract.ColPowerMean, "Monthly mean wave power", "J (kW/m)")
	bot := panel(contract.ColHm0Mean, "Monthly mean Hm0", "Hm0 (m)")
	f := &figure{Name: name, Title: "Monthly climatology with the inter-annual spread",
		Caption: "Monthly mean wave power (top) and Hm0 (bottom): thick line the calendar-month climatology over the included years; grey, each year's month (months below the coverage threshold left out).",
		W:       6.5 * vg.Inch, H: 6 * vg.Inch}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		tiles := draw.Tiles{Rows: 2, Cols: 1, PadY: vg.Points(8), PadX: vg.Points(4), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(4)}
		top.Draw(tiles.At(dc, 0, 0))
		bot.Draw(tiles.At(dc, 0, 1))
	}
	return f, nil
}

func exceedanceFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableExceedance, int64(s.Cell), "variable", "value", "share_exceeded")
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	if len(rows) == 0 {
		return nil, nil
	}
	vr, val, sh := t.Col("variable"), t.Col("value"), t.Col("share_exceeded")
	data := ExceedanceSeries{}
	panel := func(variable, title, x string) *plot.Plot {
		p := newPlot(title, x, "time exceeded (%)")
		var pts plotter.XYs
		for _, i := range rows {
			// a share of 0 has no place on a log axis: the curve ends at the
			// last level exceeded
			if vr.Str[i] == variable && !math.IsNaN(val.Float[i]) && sh.Float[i] > 0 {
				pts = append(pts, plotter.XY{X: val.Float[i], Y: 100 * sh.Float[i]})
			}
		}
		sort.SliceStable(pts, func(i, j int) bool { return pts[i].X < pts[j].X })
		data[variable] = pts
		ymin := 100.0
		for _, q := range pts {
			ymin = math.Min(ymin, q.Y)
		}
		if len(pts) == 0 {
			ymin = 1
		}
		if len(pts) > 0 {
			l, err := plotter.NewLine(pts)
			if err == nil {
				l.Color, l.Width = NewViridis(0, 1).color(80), vg.Points(1.5)
				p.Add(l)
			}
		}
		p.Add(plotter.NewGrid())
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = percentLogTicks{}
		p.Y.Min, p.Y.Max = math.Pow(10, math.Floor(math.Log10(ymin))), 100
		p.X.Min = 0
		return p
	}
	a := panel("hm0_m", "Exceedance of Hm0", "Hm0 (m)")
	b := panel("power_kw_m", "Exceedance of wave power", "J (kW/m)")
	f := &figure{Name: name, Title: "Exceedance curves", Caption: "Share of the valid time with Hm0 (left) and wave power (right) above each level (histogram bin edges; resolution in the manifest), on a logarithmic axis so that the rare large values stay readable; the curves end at the highest level exceeded.",
		W: 7 * vg.Inch, H: 3.2 * vg.Inch, data: data}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		tiles := draw.Tiles{Rows: 1, Cols: 2, PadX: vg.Points(10), PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(4)}
		a.Draw(tiles.At(dc, 0, 0))
		b.Draw(tiles.At(dc, 1, 0))
	}
	return f, nil
}

// ExceedanceSeries is what PlottedValues gives for the exceedance figure:
// per variable (hm0_m, power_kw_m) the points drawn, level against the
// percentage of time exceeded (levels with a share above 0).
type ExceedanceSeries = map[string]plotter.XYs

// percentLogTicks marks the decades of a log axis of percentages (0.001 %
// to 100 %) with labels of as many decimals as the decade needs, and the
// 2 and 5 of each decade unlabelled.
type percentLogTicks struct{}

func (percentLogTicks) Ticks(lo, hi float64) []plot.Tick {
	var ts []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		d := math.Pow(10, e)
		if d >= lo*(1-1e-9) && d <= hi*(1+1e-9) {
			ts = append(ts, plot.Tick{Value: d, Label: strconv.FormatFloat(d, 'f', max(0, int(-e)), 64)})
		}
		for _, m := range []float64{2, 5} {
			if v := m * d; v > lo && v < hi {
				ts = append(ts, plot.Tick{Value: v})
			}
		}
	}
	return ts
}

// binsLayer fills the scatter bins with viridis by time share (empty bins stay white).
type binsLayer struct {
	rects [][4]float64 // te0, te1, h0, h1
	share []float64
	cmap  *Viridis
	lines []struct {
		pts   []orb.LineString
		label string
		style draw.LineStyle
		start bool // label at the line's start (else at its end)
	}
}

func (l *binsLayer) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for k, r := range l.rects {
		if !(l.share[k] > 0) {
			continue
		}
		col, err := l.cmap.At(l.share[k])
		if err != nil {
			continue
		}
		pts := []vg.Point{{X: tx(r[0]), Y: ty(r[2])}, {X: tx(r[1]), Y: ty(r[2])}, {X: tx(r[1]), Y: ty(r[3])}, {X: tx(r[0]), Y: ty(r[3])}}
		c.FillPolygon(col, pts)
	}
	font := plot.DefaultFont
	font.Size = vg.Points(7)
	ts := draw.TextStyle{Color: lineColor, Font: font, Handler: plot.DefaultTextHandler, XAlign: draw.XRight, YAlign: draw.YBottom}
	for _, ln := range l.lines {
		for _, line := range ln.pts {
			pts := make([]vg.Point, 0, len(line))
			for _, q := range line {
				pts = append(pts, vg.Point{X: tx(q[0]), Y: ty(q[1])})
			}
			clipped := c.ClipLinesXY(pts)
			for _, cl := range clipped {
				c.StrokeLines(ln.style, cl)
			}
			if len(line) > 1 {
				// label at the end (or start) of the line inside the data area
				for k := range pts {
					m := len(pts) - 1 - k
					lt := ts
					if ln.start {
						m, lt.XAlign = k, draw.XLeft
					}
					if c.Contains(pts[m]) {
						lt.Color = ln.style.Color
						c.FillText(lt, vg.Point{X: pts[m].X - 2, Y: pts[m].Y + 1}, ln.label)
						break
					}
				}
			}
		}
	}
}

func (l *binsLayer) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for k, r := range l.rects {
		if !(l.share[k] > 0) {
			continue
		}
		xmin, xmax = math.Min(xmin, r[0]), math.Max(xmax, r[1])
		ymin, ymax = math.Min(ymin, r[2]), math.Max(ymax, r[3])
	}
	return
}

func occurrenceFigure(r *rundir.Run, s Site, name string) (*figure, []string, error) {
	t, err := r.CellTable(contract.TableScatter, int64(s.Cell), "hm0_lo_m", "hm0_hi_m", "te_lo_s", "te_hi_s", "time_share")
	if err != nil || t == nil {
		return nil, nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	if len(rows) == 0 {
		return nil, []string{"no Hm0 x Te occurrence rows for this cell"}, nil
	}
	hl, hh, tl, th, share := t.Col("hm0_lo_m"), t.Col("hm0_hi_m"), t.Col("te_lo_s"), t.Col("te_hi_s"), t.Col("time_share")
	l := &binsLayer{}
	smax := 0.0
	hstep, tstep := 0.5, 1.0 // widths of closed bins, for drawing the open ones
	for _, i := range rows {
		if d := hh.Float[i] - hl.Float[i]; d > 0 && !math.IsInf(d, 0) {
			hstep = d
		}
		if d := th.Float[i] - tl.Float[i]; d > 0 && !math.IsInf(d, 0) {
			tstep = d
		}
	}
	for _, i := range rows {
		h0, h1, t0, t1 := hl.Float[i], hh.Float[i], tl.Float[i], th.Float[i]
		if math.IsNaN(h0) || math.IsInf(h0, 0) || math.IsNaN(t0) || math.IsInf(t0, 0) {
			continue
		}
		if math.IsNaN(h1) || math.IsInf(h1, 0) { // open bin (null or +Inf edge): drawn one bin wide
			h1 = h0 + hstep
		}
		if math.IsNaN(t1) || math.IsInf(t1, 0) {
			t1 = t0 + tstep
		}
		l.rects = append(l.rects, [4]float64{t0, t1, h0, h1})
		l.share = append(l.share, 100*share.Float[i])
		smax = math.Max(smax, 100*share.Float[i])
	}
	if smax == 0 {
		return nil, []string{"the Hm0 x Te occurrence of this cell is empty"}, nil
	}
	l.cmap = NewViridis(0, smax)
	x0, x1, y0, y1 := l.DataRange()
	var notes []string
	// Wave power isolines J(Hm0, Te) at the cell's depth (bulk formula of
	// seastate.BulkPowerFinite; deep water where the depth is unknown).
	depth := math.NaN()
	if d := r.Cells.Col(contract.ColDepth); d != nil {
		depth = d.Float[s.Cell]
	}
	ph := r.Manifest.Parameters.Physics
	consts := seastate.Consts{Rho: ph.Rho, G: ph.G}
	if !(consts.Rho > 0) {
		consts = seastate.DefaultConsts
	}
	const n = 60
	fld := &grid.Field{NX: n, NY: n, Lon: make([]float64, n*n), Lat: make([]float64, n*n), Value: make([]float64, n*n)}
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			te := math.Max(x0, 0.5) + (x1-math.Max(x0, 0.5))*float64(i)/(n-1)
			hs := y0 + (y1-y0)*float64(j)/(n-1)
			k := j*n + i
			fld.Lon[k], fld.Lat[k] = te, hs
			fld.Value[k] = seastate.BulkPowerFinite(hs, te, depth, consts) / 1000
		}
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range fld.Value {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	levels := grid.NiceLevels(lo, hi, 6)
	if iso, err := grid.Isolines(fld, levels); err == nil {
		for k, mls := range iso {
			l.lines = append(l.lines, struct {
				pts   []orb.LineString
				label string
				style draw.LineStyle
				start bool
			}{mls, fmtNum(levels[k]) + " kW/m", draw.LineStyle{Color: color.NRGBA{0xb0, 0x20, 0x20, 0xff}, Width: vg.Points(0.8), Dashes: []vg.Length{vg.Points(3), vg.Points(2)}}, false})
		}
	}
	devName := ""
	for _, d := range r.Manifest.Parameters.Devices {
		dev, err := readDevice(d.PowerMatrix, d.Name)
		if err != nil {
			notes = append(notes, fmt.Sprintf("device %s: power matrix not drawn (%v)", d.Name, err))
			continue
		}
		nh, nt := len(dev.Hm0M), len(dev.TeS)
		df := &grid.Field{NX: nt, NY: nh, Lon: make([]float64, nh*nt), Lat: make([]float64, nh*nt), Value: dev.PowerKW}
		for j := 0; j < nh; j++ {
			for i := 0; i < nt; i++ {
				df.Lon[j*nt+i], df.Lat[j*nt+i] = dev.TeS[i], dev.Hm0M[j]
			}
		}
		dl := grid.NiceLevels(0, dev.RatedKW(), 4)
		if iso, err := grid.Isolines(df, dl); err == nil {
			for k, mls := range iso {
				if dl[k] <= 0 {
					continue
				}
				l.lines = append(l.lines, struct {
					pts   []orb.LineString
					label string
					style draw.LineStyle
					start bool
				}{mls, fmtNum(dl[k]) + " kW", draw.LineStyle{Color: color.NRGBA{0xff, 0xff, 0xff, 0xff}, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(1), vg.Points(1.5)}}, true})
			}
		}
		devName = d.Name
		break // one device per figure keeps it readable
	}
	p := newPlot("Joint occurrence of Hm0 and Te", "Te (s)", "Hm0 (m)")
	p.Add(l)
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = x0, x1, y0, y1
	cb := plot.New()
	cb.Add(&plotter.ColorBar{ColorMap: NewViridis(0, smax), Vertical: true, Colors: 256})
	cb.HideX()
	cb.Y.Tick.Marker = endTicks{}
	cb.Y.Label.Text = "% of time"
	cap := fmt.Sprintf("Share of the time in each Hm0 x Te bin (colour); dashed red: wave power J in kW/m from the bulk formula at the cell depth (%s)", depthText(depth))
	if devName != "" {
		cap += "; dotted white: power of device " + devName + " from its power matrix (kW)"
	}
	f := &figure{Name: name, Title: "Joint occurrence of Hm0 and Te", Caption: cap + ".", W: 6.8 * vg.Inch, H: 4.6 * vg.Inch}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(draw.Crop(dc, 0, -1.3*vg.Inch, 0, 0))
		cb.Draw(draw.Crop(dc, dc.Max.X-dc.Min.X-1.15*vg.Inch, -0.3*vg.Inch, 0.45*vg.Inch, -0.25*vg.Inch))
	}
	return f, notes, nil
}

func depthText(d float64) string {
	if math.IsNaN(d) {
		return "deep water"
	}
	return fmt.Sprintf("%s m", fmtNum(d))
}

func readDevice(path, name string) (*climate.Device, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	d, err := climate.ReadPowerMatrixCSV(f, name)
	if err != nil {
		return nil, err
	}
	cfg := climate.DefaultConfig()
	cfg.Devices = []*climate.Device{d}
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	return d, nil
}

// errBars draws vertical interval bars.
type errBars struct {
	xs, lo, hi []float64
	style      draw.LineStyle
}

func (e *errBars) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for k := range e.xs {
		if math.IsNaN(e.lo[k]) || math.IsNaN(e.hi[k]) {
			continue
		}
		x := tx(e.xs[k])
		a, b := ty(e.lo[k]), ty(e.hi[k])
		c.StrokeLine2(e.style, x, a, x, b)
		c.StrokeLine2(e.style, x-3, a, x+3, a)
		c.StrokeLine2(e.style, x-3, b, x+3, b)
	}
}

func returnLevelFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableExtremes, int64(s.Cell), "method", "return_period_y", "hm0_m", "hm0_lo_m", "hm0_hi_m")
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	method, T, lvl, lo, hi := t.Col("method"), t.Col("return_period_y"), t.Col("hm0_m"), t.Col("hm0_lo_m"), t.Col("hm0_hi_m")
	p := newPlot("Return levels of Hm0 with 95% intervals", "return period (years)", "Hm0 (m)")
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = plot.LogTicks{Prec: -1}
	any := false
	for mi, m := range []string{"gev_annual_maxima", "gpd_storm_peaks"} {
		var pts plotter.XYs
		e := &errBars{}
		shift := []float64{0.97, 1.03}[mi]
		for _, i := range rows {
			if method.Str[i] != m || math.IsNaN(lvl.Float[i]) {
				continue
			}
			x := T.Float[i] * shift
			pts = append(pts, plotter.XY{X: x, Y: lvl.Float[i]})
			e.xs, e.lo, e.hi = append(e.xs, x), append(e.lo, lo.Float[i]), append(e.hi, hi.Float[i])
		}
		if len(pts) == 0 {
			continue
		}
		any = true
		c := NewViridis(0, 1).color([]int{40, 170}[mi])
		e.style = draw.LineStyle{Color: c, Width: vg.Points(1)}
		l, sc, err := plotter.NewLinePoints(pts)
		if err != nil {
			continue
		}
		l.Color, sc.Color, sc.Shape = c, c, []draw.GlyphDrawer{draw.CircleGlyph{}, draw.BoxGlyph{}}[mi]
		p.Add(e, l, sc)
		p.Legend.Add([]string{"GEV, annual maxima", "GPD, storm peaks over threshold"}[mi], l, sc)
	}
	if !any {
		return nil, nil
	}
	p.Legend.Top, p.Legend.Left = true, true
	p.Y.Min = 0
	p.Add(plotter.NewGrid())
	f := &figure{Name: name, Title: "Return levels of Hm0", Caption: "Return levels of Hm0 (screening estimates) with their 95% delta-method intervals, GEV on annual maxima and GPD on declustered storm peaks (points shifted slightly apart). Not design values: see the caution.",
		W: 6 * vg.Inch, H: 4 * vg.Inch}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(dc)
	}
	return f, nil
}

// designFigure draws the environmental design contours of design.parquet
// (when the run has them): Hm0 against the period column per return period.
func designFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableDesign, int64(s.Cell), "return_period_y", "hm0_m", "te_s", "tp_s")
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	if len(rows) == 0 {
		return nil, nil
	}
	hs := t.Col("hm0_m")
	var per *rundir.Column
	perName := ""
	for _, c := range []string{"te_s", "tp_s"} {
		if per = t.Col(c); per != nil {
			perName = c
			break
		}
	}
	T := t.Col("return_period_y")
	if hs == nil || per == nil || T == nil {
		return nil, nil
	}
	p := newPlot("Environmental design contours", map[string]string{"te_s": "Te (s)", "tp_s": "Tp (s)"}[perName], "Hm0 (m)")
	byT := map[float64]plotter.XYs{}
	for _, i := range rows {
		if math.IsNaN(hs.Float[i]) || math.IsNaN(per.Float[i]) {
			continue
		}
		byT[T.Float[i]] = append(byT[T.Float[i]], plotter.XY{X: per.Float[i], Y: hs.Float[i]})
	}
	ts := make([]float64, 0, len(byT))
	for k := range byT {
		ts = append(ts, k)
	}
	sort.Float64s(ts)
	for k, tt := range ts {
		l, err := plotter.NewLine(byT[tt])
		if err != nil {
			continue
		}
		l.Color = NewViridis(0, 1).color(min(255, 30+200*k/max(1, len(ts)-1)))
		l.Width = vg.Points(1.3)
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%s years", fmtNum(tt)), l)
	}
	if len(ts) == 0 {
		return nil, nil
	}
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	f := &figure{Name: name, Title: "Environmental design contours", Caption: "Environmental contours of Hm0 and period from design.parquet, one per return period (screening estimates; see the caution).",
		W: 6 * vg.Inch, H: 4 * vg.Inch, data: byT}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(dc)
	}
	return f, nil
}

// PlottedValues returns, by figure name, what the site figures of s plot
// (design contours: a DesignSeries; the rose: its []RoseSector), so that a check can compare the figures with the run's tables.
func PlottedValues(r *rundir.Run, s Site) (map[string]any, error) {
	figs, _, err := siteFigures(r, s)
	if err != nil {
		return nil, err
	}
	out := map[string]any{}
	for _, f := range figs {
		if f.data != nil {
			out[f.Name] = f.data
		}
	}
	return out, nil
}

// DesignSeries is what PlottedValues gives for a design-contour figure.
type DesignSeries = map[float64]plotter.XYs

// EnergyBand is one bar group of a site's energy-band figure: a device and
// horizon's P50, P90 and P99 annual energy (aep_bands.parquet, MWh/yr; NaN
// where the table has none) with the combined relative uncertainty.
type EnergyBand struct {
	Device        string
	HorizonY      float64
	P50, P90, P99 float64
	TotalFrac     float64
}

// energyBandsFigure draws, when the run has aep_bands.parquet rows for the
// site's cell, the P50, P90 and P99 annual energy of each device and horizon
// as grouped bars (screening estimates from the stated uncertainty
// components; see the caution).
func energyBandsFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableAEPBands, int64(s.Cell))
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	dev, hz, p50, p90, p99, tot := t.Col("device"), t.Col("horizon_y"), t.Col("aep_p50_mwh"), t.Col("aep_p90_mwh"), t.Col("aep_p99_mwh"), t.Col("u_total_frac")
	if len(rows) == 0 || dev == nil || hz == nil || p50 == nil || p90 == nil || p99 == nil || tot == nil {
		return nil, nil
	}
	var bands []EnergyBand
	for _, i := range rows {
		if math.IsNaN(p50.Float[i]) {
			continue
		}
		bands = append(bands, EnergyBand{Device: dev.Str[i], HorizonY: hz.Float[i], P50: p50.Float[i], P90: p90.Float[i], P99: p99.Float[i], TotalFrac: tot.Float[i]})
	}
	if len(bands) == 0 {
		return nil, nil
	}
	p := newPlot("Annual energy: P50, P90, P99", "", "MWh/yr")
	labels := make([]string, len(bands))
	for k, b := range bands {
		labels[k] = fmt.Sprintf("%s, %s-yr mean", b.Device, fmtNum(b.HorizonY))
	}
	width := vg.Points(14)
	for j, q := range []struct {
		name string
		get  func(EnergyBand) float64
	}{{"P50", func(b EnergyBand) float64 { return b.P50 }}, {"P90", func(b EnergyBand) float64 { return b.P90 }}, {"P99", func(b EnergyBand) float64 { return b.P99 }}} {
		v := make(plotter.Values, len(bands))
		for k, b := range bands {
			v[k] = q.get(b)
			if math.IsNaN(v[k]) {
				v[k] = 0 // not positive: drawn as no bar, said in the caption
			}
		}
		bc, err := plotter.NewBarChart(v, width)
		if err != nil {
			return nil, nil
		}
		bc.Color = NewViridis(0, 1).color(40 + 90*j)
		bc.LineStyle.Width = 0
		bc.Offset = vg.Length(j-1) * width
		p.Add(bc)
		p.Legend.Add(q.name, bc)
	}
	p.NominalX(labels...)
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	f := &figure{Name: name, Title: "Annual energy bands",
		Caption: "P50, P90 and P99 annual energy per device and horizon from aep_bands.parquet: the long-term mean and the values exceeded with 90 % and 99 % probability, combining the record-length, future-variability and model components (u_total_frac); a missing bar is a band that is not positive. Screening estimates from stated assumptions, not a bankable yield; see the caution.",
		W:       6 * vg.Inch, H: 4 * vg.Inch, data: bands}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(dc)
	}
	return f, nil
}
