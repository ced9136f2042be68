package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
)

// RoseSector is one row of directions.parquet as the rose draws it.
type RoseSector struct {
	Centre, From, To float64 // degrees nautical "from", clockwise from north
	Power, Occ       float64 // shares 0..1 (NaN: none)
}

// roseGeom is where a rose figure puts its two roses: centres and the
// radius of the largest share, in points from the lower left corner.
type roseGeom struct {
	Centre [2]vg.Point // power rose, occurrence rose
	R      vg.Length
	Max    [2]float64 // the share drawn at radius R
}

// bearingPoint is the point at bearing deg (clockwise from north, north up)
// and distance r from c.
func bearingPoint(c vg.Point, r vg.Length, deg float64) vg.Point {
	s, co := math.Sincos(deg * math.Pi / 180)
	return vg.Point{X: c.X + r*vg.Length(s), Y: c.Y + r*vg.Length(co)}
}

// directionsFigure draws the site's directional power rose from
// directions.parquet (nil when the run has no rows for the cell).
func directionsFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableDirections, int64(s.Cell), "sector_from_deg", "sector_to_deg", "sector_centre_deg", "occurrence_share", "power_share")
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	c, a, b, p, o := t.Col("sector_centre_deg"), t.Col("sector_from_deg"), t.Col("sector_to_deg"), t.Col("power_share"), t.Col("occurrence_share")
	if len(rows) == 0 || c == nil || a == nil || b == nil || p == nil || o == nil {
		return nil, nil
	}
	secs := make([]RoseSector, len(rows))
	for k, i := range rows {
		secs[k] = RoseSector{Centre: c.Float[i], From: a.Float[i], To: b.Float[i], Power: p.Float[i], Occ: o.Float[i]}
	}
	f, _ := roseFigure(name, secs)
	return f, nil
}

// roseFigure draws two roses: the share of the wave energy arriving from
// each sector (left) and the share of the time with the mean direction in it
// (right). A wedge's radius is proportional to its share (the largest at the
// outer ring); rings are labelled in percent.
func roseFigure(name string, secs []RoseSector) (*figure, *roseGeom) {
	W, H := 7*vg.Inch, 3.7*vg.Inch
	g := &roseGeom{R: 1.25 * vg.Inch}
	g.Centre[0] = vg.Point{X: W / 4, Y: H/2 - 0.12*vg.Inch}
	g.Centre[1] = vg.Point{X: 3 * W / 4, Y: H/2 - 0.12*vg.Inch}
	share := [2]func(RoseSector) float64{func(x RoseSector) float64 { return x.Power }, func(x RoseSector) float64 { return x.Occ }}
	best, bestK := -1.0, 0
	for k, sc := range secs {
		for p := 0; p < 2; p++ {
			if v := share[p](sc); v > g.Max[p] {
				g.Max[p] = v
			}
		}
		if sc.Power > best {
			best, bestK = sc.Power, k
		}
	}
	width := 360.0
	if len(secs) > 0 {
		width = 360 / float64(len(secs))
	}
	titles := [2]string{"Wave energy by direction (% of energy)", "Occurrence by mean direction (% of time)"}
	font := plot.DefaultFont
	font.Size = vg.Points(8)
	ts := draw.TextStyle{Color: lineColor, Font: font, Handler: plot.DefaultTextHandler, XAlign: draw.XCenter, YAlign: draw.YCenter}
	tfont := plot.DefaultFont
	tfont.Size = vg.Points(10)
	tts := ts
	tts.Font = tfont
	ringStyle := draw.LineStyle{Color: color.NRGBA{0xb8, 0xb8, 0xb8, 0xff}, Width: vg.Points(0.5)}
	edge := draw.LineStyle{Color: color.NRGBA{0x30, 0x30, 0x30, 0xff}, Width: vg.Points(0.4)}
	f := &figure{Name: name, Title: "Directional power rose", W: W, H: H, data: secs}
	f.Caption = fmt.Sprintf("Share of the record's wave energy arriving from each %s° sector (left) and share of the time whose mean wave direction lies in it (right), from directions.parquet; directions the waves come from, clockwise from north (north up). Wedge radius proportional to the share; colour viridis by share.", fmtNum(width))
	if best > 0 {
		f.Caption += fmt.Sprintf(" Largest: %s%% of the energy from %s–%s° (centre %s°).", fmtNum(100*best), fmtNum(secs[bestK].From), fmtNum(secs[bestK].To), fmtNum(secs[bestK].Centre))
	}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		for p := 0; p < 2; p++ {
			c := g.Centre[p]
			dc.FillText(tts, vg.Point{X: c.X, Y: H - 0.2*vg.Inch}, titles[p])
			mx := g.Max[p]
			var rings []float64
			if mx > 0 {
				for _, v := range grid.NiceLevels(0, 100*mx, 4) {
					if v > 0 && v <= 100*mx*(1+1e-9) {
						rings = append(rings, v)
					}
				}
				cm := NewViridis(0, mx)
				for _, sc := range secs {
					v := share[p](sc)
					if !(v > 0) {
						continue
					}
					rr := g.R * vg.Length(v/mx)
					a0 := sc.Centre - width/2
					pts := []vg.Point{c}
					n := max(2, int(math.Ceil(width/2)))
					for k := 0; k <= n; k++ {
						pts = append(pts, bearingPoint(c, rr, a0+width*float64(k)/float64(n)))
					}
					col, err := cm.At(v)
					if err != nil {
						continue
					}
					dc.FillPolygon(col, pts)
					dc.StrokeLines(edge, append(pts, c))
				}
			}
			for _, v := range rings {
				rr := g.R * vg.Length(v/(100*mx))
				var circ []vg.Point
				for k := 0; k <= 120; k++ {
					circ = append(circ, bearingPoint(c, rr, 3*float64(k)))
				}
				dc.StrokeLines(ringStyle, circ)
				lp := bearingPoint(c, rr, 135)
				dc.FillText(ts, lp, fmtNum(v)+"%")
			}
			for k := 0; k < 4; k++ {
				dc.StrokeLine2(ringStyle, c.X, c.Y, bearingPoint(c, g.R, 90*float64(k)).X, bearingPoint(c, g.R, 90*float64(k)).Y)
				dc.FillText(ts, bearingPoint(c, g.R+9, 90*float64(k)), []string{"N", "E", "S", "W"}[k])
			}
			if mx == 0 {
				dc.FillText(ts, c, "no data")
			}
		}
	}
	return f, g
}
