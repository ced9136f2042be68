package report

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"github.com/paulmach/orb"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/grid"
)

// Field is what a map shows: a value per cell on a structured grid (NX x NY
// nodes, row-major) or on a point set (Points true).
type Field struct {
	NX, NY   int
	Points   bool
	Lon, Lat []float64
	Value    []float64
	Land     []bool // drawn as land, no value
	Name     string // column name
	Unit     string
	Levels   []float64 // isolines (nil: none)

	// A mesh's map (meshmap.go): filled Shapes (triangles or faces) with a
	// value and a land flag each, and its isolines.
	Shapes     [][]orb.Point
	ShapeValue []float64
	ShapeLand  []bool
	Isolines   func(levels []float64) ([]orb.MultiLineString, error)

	// Marks are places drawn on top: the spec's sites and the validation
	// stations.
	Marks []Mark
}

// Mark is a place marked on a map: a site (a filled red triangle) or a
// validation station (a white diamond), labelled with its name.
type Mark struct {
	Name     string
	Lon, Lat float64
	Station  bool
}

// MapInfo says what a map shows; the HTML carries it so a reader (and the
// browser test) can check the colour bar against the column.
type MapInfo struct {
	Name, Column, Unit, Title string
	Min, Max                  float64 // the colour bar's range: the column's min and max over sea cells
	Levels                    []float64
	Valid, Land               int
	// Extent is the map's data range [west, south, east, north] in the
	// grid's continuous longitude frame (grid.LonFrame: east beyond 180 for
	// a region across 180 degrees, drawn in one piece).
	Extent [4]float64 `json:"extent_lon_lat"`
	// DataArea is the map's data rectangle on the figure in points (1/72
	// inch) from the lower left corner, set when the figure is drawn.
	DataArea vg.Rectangle `json:"-"`
	// Marks are the places drawn on the map, their longitudes in the map's
	// frame (as Extent).
	Marks []Mark `json:"-"`
}

// Range is the min and max of the finite values of f on cells that are not land.
func (f *Field) Range() (lo, hi float64, n int) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for i, v := range f.Value {
		if f.Land[i] || math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		lo, hi, n = math.Min(lo, v), math.Max(hi, v), n+1
	}
	return
}

// mapScale is the colour scale of a map whose values run from lo to hi:
// viridis on [lo, hi], widened a little when every value is the same.
func mapScale(lo, hi float64) *Viridis {
	if hi == lo {
		hi = lo + math.Max(1e-9, math.Abs(lo)*1e-6)
	}
	return NewViridis(lo, hi)
}

// cellPolygons returns each cell's outline in lon/lat: for a structured grid
// the quadrilateral whose corners are the means of the four surrounding nodes
// (nodes beyond the edge extrapolated linearly), nil where a corner is not
// finite.
func (f *Field) cellPolygons() [][]orb.Point {
	nx, ny := f.NX, f.NY
	var node func(i, j int) orb.Point
	node = func(i, j int) orb.Point {
		ci, cj := min(max(i, 0), nx-1), min(max(j, 0), ny-1)
		p := orb.Point{f.Lon[cj*nx+ci], f.Lat[cj*nx+ci]}
		// linear extrapolation beyond the edge, from the neighbour inside
		if i != ci && nx > 1 {
			in := min(max(ci+(ci-i), 0), nx-1)
			q := orb.Point{f.Lon[cj*nx+in], f.Lat[cj*nx+in]}
			p = orb.Point{2*p[0] - q[0], 2*p[1] - q[1]}
		}
		if j != cj && ny > 1 {
			in := min(max(cj+(cj-j), 0), ny-1)
			q := orb.Point{f.Lon[in*nx+ci], f.Lat[in*nx+ci]}
			if i != ci && nx > 1 {
				q = node(i, in)
			}
			p = orb.Point{2*p[0] - q[0], 2*p[1] - q[1]}
		}
		return p
	}
	corner := func(i, j int) orb.Point { // corner between nodes (i-1..i, j-1..j)
		a, b, c, d := node(i-1, j-1), node(i, j-1), node(i-1, j), node(i, j)
		return orb.Point{(a[0] + b[0] + c[0] + d[0]) / 4, (a[1] + b[1] + c[1] + d[1]) / 4}
	}
	out := make([][]orb.Point, nx*ny)
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			poly := []orb.Point{corner(i, j), corner(i+1, j), corner(i+1, j+1), corner(i, j+1)}
			ok := true
			for _, p := range poly {
				ok = ok && !math.IsNaN(p[0]+p[1]) && !math.IsInf(p[0]+p[1], 0)
			}
			if ok {
				out[j*nx+i] = poly
			}
		}
	}
	return out
}

// cellsLayer draws the cells coloured by value, land in sand, cells without a
// result in grey, then the isolines on top with their labels.
type cellsLayer struct {
	f        *Field
	cmap     *Viridis
	polys    [][]orb.Point
	lines    []orb.MultiLineString
	bounds   orb.Bound
	pointRad vg.Length
}

func (l *cellsLayer) colorOf(i int) color.Color {
	v, land := l.f.Value, l.f.Land
	if l.f.Shapes != nil {
		v, land = l.f.ShapeValue, l.f.ShapeLand
	}
	return l.colorOfValue(v[i], land[i])
}

func (l *cellsLayer) colorOfValue(v float64, land bool) color.Color {
	switch {
	case land:
		return landColor
	case math.IsNaN(v) || math.IsInf(v, 0):
		return noDataColor
	}
	c, err := l.cmap.At(v)
	if err != nil {
		return noDataColor
	}
	return c
}

func (l *cellsLayer) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	if l.f.Points {
		for i := range l.f.Lon {
			if math.IsNaN(l.f.Lon[i]) {
				continue
			}
			pt := vg.Point{X: tx(l.f.Lon[i]), Y: ty(l.f.Lat[i])}
			c.SetColor(l.colorOf(i))
			c.Fill(circle(pt, l.pointRad))
			c.SetLineStyle(draw.LineStyle{Color: lineColor, Width: vg.Points(0.4)})
			c.Stroke(circle(pt, l.pointRad))
		}
		return
	}
	for i, poly := range l.polys {
		if poly == nil {
			continue
		}
		pts := make([]vg.Point, len(poly))
		for k, q := range poly {
			pts[k] = vg.Point{X: tx(q[0]), Y: ty(q[1])}
		}
		col := l.colorOf(i)
		c.FillPolygon(col, pts)
		// a hairline of the same colour closes the anti-aliasing seams between cells
		c.StrokeLines(draw.LineStyle{Color: col, Width: vg.Points(0.3)}, append(pts, pts[0]))
	}
	ls := draw.LineStyle{Color: lineColor, Width: vg.Points(0.8)}
	font := plot.DefaultFont
	font.Size = vg.Points(7)
	ts := draw.TextStyle{Color: lineColor, Font: font, Handler: plot.DefaultTextHandler, XAlign: draw.XCenter, YAlign: draw.YCenter}
	for k, mls := range l.lines {
		for _, line := range mls {
			pts := make([]vg.Point, len(line))
			for m, q := range line {
				pts[m] = vg.Point{X: tx(q[0]), Y: ty(q[1])}
			}
			c.StrokeLines(ls, pts)
			if pathLen(pts) > 1.2*vg.Inch { // no labels on small loops
				mid := pts[len(pts)/2]
				lab := fmtNum(l.f.Levels[k])
				w := ts.Width(lab)
				h := ts.Height(lab)
				c.FillPolygon(color.NRGBA{255, 255, 255, 200}, []vg.Point{
					{X: mid.X - w/2 - 1, Y: mid.Y - h/2}, {X: mid.X + w/2 + 1, Y: mid.Y - h/2},
					{X: mid.X + w/2 + 1, Y: mid.Y + h/2}, {X: mid.X - w/2 - 1, Y: mid.Y + h/2}})
				c.FillText(ts, mid, lab)
			}
		}
	}
}

func circle(c vg.Point, r vg.Length) vg.Path {
	var p vg.Path
	p.Move(vg.Point{X: c.X + r, Y: c.Y})
	p.Arc(c, r, 0, 2*math.Pi)
	p.Close()
	return p
}

func (l *cellsLayer) DataRange() (xmin, xmax, ymin, ymax float64) {
	return l.bounds.Min[0], l.bounds.Max[0], l.bounds.Min[1], l.bounds.Max[1]
}

// Map draws f on its grid: lon/lat axes with the data area's aspect set so a
// degree of latitude and cos(mean latitude) degrees of longitude have the
// same length on the page (equirectangular at the mean latitude), cells
// coloured with viridis from the column's min to its max, land and masked
// cells in sand, the isolines at f.Levels on top, and a colour bar titled with
// the unit whose ends are labelled with the min and the max. A grid or point
// set is drawn in its continuous longitude frame (grid.LonFrame), so a region
// across 180 degrees is one piece; the longitude ticks are labelled in
// [-180, 180].
func Map(name, title string, f *Field) (*figure, *MapInfo, error) {
	if f.Shapes == nil {
		g := *f
		g.Lon = grid.LonFrame(f.Lon).ShiftAll(f.Lon)
		f = &g
	}
	lo, hi, n := f.Range()
	if n == 0 {
		return nil, nil, fmt.Errorf("no finite values of %s on sea cells", f.Name)
	}
	info := &MapInfo{Name: name, Column: f.Name, Unit: f.Unit, Title: title, Min: lo, Max: hi, Levels: f.Levels, Valid: n}
	for _, x := range f.Land {
		if x {
			info.Land++
		}
	}
	layer := &cellsLayer{f: f, cmap: mapScale(lo, hi), pointRad: vg.Points(4)}
	layer.bounds = orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	if f.Points {
		for i := range f.Lon {
			if !math.IsNaN(f.Lon[i]) {
				layer.bounds = layer.bounds.Extend(orb.Point{f.Lon[i], f.Lat[i]})
			}
		}
		pad := math.Max(0.05*math.Max(layer.bounds.Max[0]-layer.bounds.Min[0], layer.bounds.Max[1]-layer.bounds.Min[1]), 0.05)
		layer.bounds = layer.bounds.Pad(pad)
	} else {
		layer.polys = f.Shapes
		if f.Shapes == nil {
			layer.polys = f.cellPolygons()
		}
		for _, poly := range layer.polys {
			for _, p := range poly {
				layer.bounds = layer.bounds.Extend(p)
			}
		}
		if len(f.Levels) > 0 && f.Isolines != nil {
			lines, err := f.Isolines(f.Levels)
			if err != nil {
				return nil, nil, fmt.Errorf("isolines of %s: %w", f.Name, err)
			}
			layer.lines = lines
		} else if len(f.Levels) > 0 && f.Shapes == nil && f.NX >= 2 && f.NY >= 2 { // a single row or column has no isolines
			lines, err := grid.Isolines(&grid.Field{NX: f.NX, NY: f.NY, Lon: f.Lon, Lat: f.Lat, Value: f.Value, Mask: f.Land}, f.Levels)
			if err != nil {
				return nil, nil, fmt.Errorf("isolines of %s: %w", f.Name, err)
			}
			layer.lines = lines
		}
	}
	b := layer.bounds
	info.Extent = [4]float64{b.Min[0], b.Min[1], b.Max[0], b.Max[1]}
	p := newPlot(title, "longitude (°E)", "latitude (°N)")
	p.X.Tick.Marker = lonTicks{}
	p.Add(layer)
	if len(f.Marks) > 0 {
		ml := &marksLayer{}
		fr := grid.LonFrame(f.Lon)
		for _, m := range f.Marks {
			if f.Shapes == nil {
				m.Lon = fr.Shift(m.Lon)
			}
			if m.Lon >= b.Min[0] && m.Lon <= b.Max[0] && m.Lat >= b.Min[1] && m.Lat <= b.Max[1] {
				ml.marks = append(ml.marks, m)
			}
		}
		info.Marks = ml.marks
		p.Add(ml)
	}
	p.Y.Tick.Marker = degTicks{}
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = b.Min[0], b.Max[0], b.Min[1], b.Max[1]
	midLat := (b.Min[1] + b.Max[1]) / 2
	aspect := (b.Max[0] - b.Min[0]) * math.Cos(midLat*math.Pi/180) / (b.Max[1] - b.Min[1]) // width / height
	if !(aspect > 0) || math.IsInf(aspect, 0) {
		aspect = 1
	}
	const mapW, barW = 5.6 * vg.Inch, 1.2 * vg.Inch
	pl, pr, pb, pt := paddings(p, mapW, 4*vg.Inch)
	dataW := mapW - pl - pr
	dataH := vg.Length(float64(dataW) / aspect)
	if dataH > 7*vg.Inch {
		dataH = 7 * vg.Inch
		dataW = vg.Length(float64(dataH) * aspect)
	}
	if dataH < 1.5*vg.Inch {
		dataH = 1.5 * vg.Inch
	}
	w, h := pl+dataW+pr, pb+dataH+pt
	cb := plot.New()
	cb.Add(&plotter.ColorBar{ColorMap: mapScale(lo, hi), Vertical: true, Colors: 256})
	cb.HideX()
	cb.Y.Tick.Marker = endTicks{}
	cb.Y.Label.Text = f.Unit
	if f.Unit == "1" || f.Unit == "" {
		cb.Y.Label.Text = "dimensionless"
	}
	cb.Title.Text = " "
	fig := &figure{Name: name, Title: title, W: w + barW, H: h}
	fig.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		left := draw.Crop(dc, 0, -barW, 0, 0)
		p.Draw(left)
		info.DataArea = p.DataCanvas(left).Rectangle
		right := draw.Crop(dc, w, 0, pb, 0)
		right = draw.Crop(right, 0.15*vg.Inch, -0.25*vg.Inch, 0, -pt+cb.Title.TextStyle.Height(" "))
		cb.Draw(right)
	}
	return fig, info, nil
}

func pathLen(pts []vg.Point) vg.Length {
	var d vg.Length
	for i := 1; i < len(pts); i++ {
		d += vg.Length(math.Hypot(float64(pts[i].X-pts[i-1].X), float64(pts[i].Y-pts[i-1].Y)))
	}
	return d
}

// marksLayer draws the sites (red triangles) and validation stations (white
// diamonds) with their names.
type marksLayer struct{ marks []Mark }

func (l *marksLayer) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	font := plot.DefaultFont
	font.Size = vg.Points(7)
	mid := (c.Min.X + c.Max.X) / 2
	for _, m := range l.marks {
		pt := vg.Point{X: tx(m.Lon), Y: ty(m.Lat)}
		r := vg.Points(4.5)
		if m.Station { // a white diamond with a black outline
			d := []vg.Point{{X: pt.X, Y: pt.Y + r}, {X: pt.X + r, Y: pt.Y}, {X: pt.X, Y: pt.Y - r}, {X: pt.X - r, Y: pt.Y}}
			c.FillPolygon(color.White, d)
			c.StrokeLines(draw.LineStyle{Color: lineColor, Width: vg.Points(1)}, append(d, d[0]))
		} else { // a red triangle with a white outline
			tr := []vg.Point{{X: pt.X, Y: pt.Y + r}, {X: pt.X + 0.87*r, Y: pt.Y - r/2}, {X: pt.X - 0.87*r, Y: pt.Y - r/2}}
			c.FillPolygon(color.NRGBA{0xd0, 0x10, 0x10, 0xff}, tr)
			c.StrokeLines(draw.LineStyle{Color: color.White, Width: vg.Points(0.8)}, append(tr, tr[0]))
		}
		// the label beside the mark, towards the middle of the map; a
		// station's below a site's, so that a station at a site stays legible
		ts := draw.TextStyle{Color: lineColor, Font: font, Handler: plot.DefaultTextHandler, XAlign: draw.XLeft, YAlign: draw.YBottom}
		at := vg.Point{X: pt.X + r + 1, Y: pt.Y + 1}
		if pt.X > mid {
			ts.XAlign, at.X = draw.XRight, pt.X-r-1
		}
		if m.Station {
			ts.YAlign, at.Y = draw.YTop, pt.Y-1
		}
		w, h := ts.Width(m.Name), ts.Height(m.Name)
		x0 := at.X - 1
		if ts.XAlign == draw.XRight {
			x0 = at.X - w - 1
		}
		y0 := at.Y
		if m.Station {
			y0 = at.Y - h
		}
		c.FillPolygon(color.NRGBA{255, 255, 255, 210}, []vg.Point{{X: x0, Y: y0}, {X: x0 + w + 2, Y: y0}, {X: x0 + w + 2, Y: y0 + h}, {X: x0, Y: y0 + h}})
		c.FillText(ts, at, m.Name)
	}
}

// lonTicks are the ticks of a longitude axis (degTicks), labelled in
// [-180, 180] (a map in the 0..360 frame of a region across 180 degrees
// reads 170, 180, -170).
type lonTicks struct{}

func (lonTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := degTicks{}.Ticks(lo, hi)
	var vals []float64
	for _, t := range ts {
		if t.Label != "" {
			vals = append(vals, t.Value)
		}
	}
	d := tickDecimals(vals)
	for k := range ts {
		if ts[k].Label == "" || (ts[k].Value >= -180 && ts[k].Value <= 180) {
			continue
		}
		v := grid.NormLon(ts[k].Value)
		if v == -180 {
			v = 180
		}
		ts[k].Label = strconv.FormatFloat(v, 'f', d, 64)
	}
	return ts
}

// degTicks are gonum's default tick positions with labels of as many
// decimals as the labelled ticks need (tickLabels): on a small domain
// ticks at 54.25 and 54.45 read so, not "54".
type degTicks struct{}

func (degTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	var idx []int
	var vals []float64
	for k, t := range ts {
		if t.Label != "" {
			idx, vals = append(idx, k), append(vals, t.Value)
		}
	}
	for j, lab := range tickLabels(vals) {
		ts[idx[j]].Label = lab
	}
	return ts
}

// tickDecimals is the number of decimals (0 to 6) that labels every value
// of vals and the step between neighbours exactly (to 1e-6 of the step):
// the fewest d with |round(v 10^d) / 10^d - v| below that for all.
func tickDecimals(vals []float64) int {
	if len(vals) == 0 {
		return 0
	}
	step := math.Inf(1)
	for i := 1; i < len(vals); i++ {
		step = math.Min(step, math.Abs(vals[i]-vals[i-1]))
	}
	tol := 1e-9
	if !math.IsInf(step, 1) && step > 0 {
		tol = 1e-6 * step
	}
	check := append([]float64{}, vals...)
	if !math.IsInf(step, 1) {
		check = append(check, step)
	}
	for d := 0; d < 6; d++ {
		p := math.Pow(10, float64(d))
		ok := true
		for _, v := range check {
			if math.Abs(math.Round(v*p)/p-v) > tol {
				ok = false
				break
			}
		}
		if ok {
			return d
		}
	}
	return 6
}

// tickLabels labels tick values with tickDecimals(vals) decimals.
func tickLabels(vals []float64) []string {
	d := tickDecimals(vals)
	out := make([]string, len(vals))
	for i, v := range vals {
		if math.Abs(v) < 0.5*math.Pow(10, -float64(d)) {
			v = 0 // no "-0"
		}
		out[i] = strconv.FormatFloat(v, 'f', d, 64)
	}
	return out
}
