package report

import (
	"image/color"
	"math"
	"testing"

	"swellgrid/stats/climate"
)

// The analytic case of the rose: all the power (and all the time) from one
// direction fills one sector, drawn at that bearing (nautical "from",
// clockwise from north, north up: common practice of wind and wave roses),
// and nothing else is filled. The test reads the PNG's pixels at 60 % of the
// radius inside every sector (off its centre line, where the N-E-S-W axes run).
func TestRoseOneBearing(t *testing.T) {
	scale := float64(DPI) / 72
	full, _ := NewViridis(0, 1).At(1) // a share equal to the largest: the top of viridis
	fc := full.(color.NRGBA)
	for _, c := range []struct {
		n   int
		dir float64
	}{{16, 90}, {16, 45}, {16, 200}, {8, 315}, {36, 10}} {
		hit := climate.DirectionSector(c.dir, c.n)
		secs := make([]RoseSector, c.n)
		for k := range secs {
			ctr, a, b := climate.SectorEdges(k, c.n)
			secs[k] = RoseSector{Centre: ctr, From: a, To: b}
			if k == hit {
				secs[k].Power, secs[k].Occ = 1, 1
			}
		}
		fig, g := roseFigure("rose_test", secs)
		img := renderPNG(t, fig)
		H := img.Bounds().Dy()
		for p := 0; p < 2; p++ {
			for k := range secs {
				// bearing b clockwise from north, north up: east of the centre by
				// r sin b, north by r cos b (computed here, not by the figure's code);
				// off the sector's centre line, where the N-E-S-W axes run
				b := (secs[k].Centre + 0.3*360/float64(c.n)) * math.Pi / 180
				r := 0.6 * float64(g.R)
				qx, qy := float64(g.Centre[p].X)+r*math.Sin(b), float64(g.Centre[p].Y)+r*math.Cos(b)
				x, y := int(math.Round(qx*scale)), H-int(math.Round(qy*scale))
				got := color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)
				filled := absd(got.R, fc.R) <= 3 && absd(got.G, fc.G) <= 3 && absd(got.B, fc.B) <= 3
				if filled != (k == hit) {
					saveDebug(img)
					t.Errorf("%d sectors, all from %g deg (sector %d): rose %d at bearing %g (pixel %d,%d) is %v, filled=%v",
						c.n, c.dir, hit, p, secs[k].Centre, x, y, got, filled)
				}
			}
		}
		if g.Max != [2]float64{1, 1} {
			t.Errorf("outer ring at shares %v, want 1", g.Max)
		}
	}
}
