package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// DPI of the PNG figures.
const DPI = 110

var (
	landColor   = color.NRGBA{0xd8, 0xcc, 0xb2, 0xff} // sand: land and masked cells
	noDataColor = color.NRGBA{0xc8, 0xc8, 0xc8, 0xff} // grey: sea cells without a result
	lineColor   = color.NRGBA{0x10, 0x10, 0x10, 0xff}
)

// figure is one drawing written as <Name>.png and <Name>.svg.
type figure struct {
	Name    string // file base name, saying what the figure shows
	Title   string
	Caption string
	W, H    vg.Length
	draw    func(dc draw.Canvas)
	data    any // the values plotted (tests compare them with the tables)
}

// save writes f as PNG and SVG into dir and returns the two file names.
func save(dir string, f *figure) ([]string, error) {
	png := vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(f.W, f.H), vgimg.UseDPI(DPI))}
	f.draw(draw.New(png))
	var pb bytes.Buffer
	if _, err := png.WriteTo(&pb); err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", f.Name, err)
	}
	svg := vgsvg.NewWith(vgsvg.UseWH(f.W, f.H))
	f.draw(draw.New(svg))
	var sb bytes.Buffer
	if _, err := svg.WriteTo(&sb); err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", f.Name, err)
	}
	names := []string{f.Name + ".png", f.Name + ".svg"}
	for i, b := range [][]byte{pb.Bytes(), sb.Bytes()} {
		if err := os.WriteFile(filepath.Join(dir, names[i]), b, 0o644); err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
	}
	return names, nil
}

// fmtNum formats a value for labels and tables: 4 significant digits.
func fmtNum(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	if x == 0 {
		return "0"
	}
	return strconv.FormatFloat(x, 'g', 4, 64)
}

// endTicks marks both ends of [lo, hi] (labelled with fmtNum, so a reader
// sees the exact range of the colour bar) and nice values in between.
type endTicks struct{}

func (endTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := []plot.Tick{{Value: lo, Label: fmtNum(lo)}}
	for _, t := range (plot.DefaultTicks{}).Ticks(lo, hi) {
		if t.Label == "" || t.Value <= lo || t.Value >= hi {
			continue
		}
		if (t.Value-lo) < 0.08*(hi-lo) || (hi-t.Value) < 0.08*(hi-lo) {
			continue // would overlap an end label
		}
		ts = append(ts, plot.Tick{Value: t.Value, Label: fmtNum(t.Value)})
	}
	return append(ts, plot.Tick{Value: hi, Label: fmtNum(hi)})
}

// paddings returns the space around the data area of p on a canvas of w x h.
func paddings(p *plot.Plot, w, h vg.Length) (l, r, b, t vg.Length) {
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(DPI))
	dc := draw.New(c)
	da := p.DataCanvas(dc)
	return da.Min.X - dc.Min.X, dc.Max.X - da.Max.X, da.Min.Y - dc.Min.Y, dc.Max.Y - da.Max.Y
}

func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = x
	p.Y.Label.Text = y
	p.Title.TextStyle.Font.Size = vg.Points(11)
	return p
}
