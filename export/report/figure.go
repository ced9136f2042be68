package report

import (
	"bytes"
	"fmt"
	"image/color"
	pngenc "image/png"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"swellgrid/export/rundir"
	"sync"
	"unicode/utf8"

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

// figureFiles are the names of f's two files.
func figureFiles(f *figure) []string { return []string{f.Name + ".png", f.Name + ".svg"} }

// save writes f as PNG and SVG into dir and returns the two file names. The
// PNG is compressed at zlib's fastest level: the figures are flat colours
// and lines, which it packs nearly as well as the default level, in about
// half the time (the report's largest cost, see renderAll).
func save(dir string, f *figure) ([]string, error) {
	pb, err := pngBytes(f)
	if err != nil {
		return nil, err
	}
	sb, err := svgBytes(f)
	if err != nil {
		return nil, err
	}
	names := figureFiles(f)
	for i, b := range [][]byte{pb, sb} {
		if err := os.WriteFile(filepath.Join(dir, names[i]), b, 0o644); err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
	}
	return names, nil
}

// pngBytes draws f as a PNG at DPI (see save).
func pngBytes(f *figure) ([]byte, error) {
	png := vgimg.NewWith(vgimg.UseWH(f.W, f.H), vgimg.UseDPI(DPI))
	f.draw(draw.New(png))
	var pb bytes.Buffer
	enc := pngenc.Encoder{CompressionLevel: pngenc.BestSpeed}
	if err := enc.Encode(&pb, png.Image()); err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", f.Name, err)
	}
	return pb.Bytes(), nil
}

// svgBytes draws f as an SVG document (xmlChars: well-formed XML).
func svgBytes(f *figure) ([]byte, error) {
	svg := vgsvg.NewWith(vgsvg.UseWH(f.W, f.H))
	f.draw(draw.New(svg))
	var sb bytes.Buffer
	if _, err := svg.WriteTo(&sb); err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", f.Name, err)
	}
	return xmlChars(sb.Bytes()), nil
}

// xmlChars drops from an SVG document every character XML 1.0 forbids
// (XML 1.0 fifth edition, section 2.2, production Char: #x9 | #xA | #xD |
// [#x20-#xD7FF] | [#xE000-#xFFFD] | [#x10000-#x10FFFF]); not even a
// character reference may name the others, so a control character in a
// station or site name (ESC, BEL) is left out of the figure's text, and a
// byte that is not UTF-8 becomes U+FFFD. The SVG writer escapes markup
// (<, &) itself but passes these through, which made the file ill-formed.
func xmlChars(b []byte) []byte {
	ok := utf8.Valid(b)
	for _, r := range string(b) {
		if !ok || !xmlChar(r) {
			ok = false
			break
		}
	}
	if ok {
		return b
	}
	out := make([]byte, 0, len(b))
	for len(b) > 0 {
		r, n := utf8.DecodeRune(b)
		switch {
		case r == utf8.RuneError && n <= 1:
			out = utf8.AppendRune(out, utf8.RuneError)
		case xmlChar(r):
			out = append(out, b[:n]...)
		}
		b = b[n:]
	}
	return out
}

func xmlChar(r rune) bool {
	return r == 0x9 || r == 0xA || r == 0xD || r >= 0x20 && r <= 0xD7FF || r >= 0xE000 && r <= 0xFFFD || r >= 0x10000 && r <= 0x10FFFF
}

// renderAll saves the figures into dir with at most workers goroutines (0:
// one per core). Rendering (rasterising, PNG compression, SVG) is most of a
// report's time and every figure is independent: the files are the same
// whatever the number of workers. The first error in figure order is
// returned.
func renderAll(dir string, figs []*figure, workers int) error {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, len(figs))
	errs := make([]error, len(figs))
	next := make(chan int)
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				_, errs[i] = save(dir, figs[i])
			}
		}()
	}
	for i := range figs {
		next <- i
	}
	close(next)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
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

// colText formats row i of a numeric column for a table: an integer column
// as the integer (a count of 10070 reads 10070, not 1.007e+04), a float as
// fmtNum; null as fmtNum's dash.
func colText(c *rundir.Column, i int) string {
	if c.Kind == rundir.Int && c.Valid[i] {
		return strconv.FormatInt(c.Int[i], 10)
	}
	return fmtNum(c.Value(i))
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
