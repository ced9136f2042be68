package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"strings"
	"sync"

	"swellgrid/export/rundir"
)

// This file gives an interactive viewer (pipelines/serve) what the report
// draws, so that its map and its cell pages show the report's colours,
// figures and numbers rather than a copy of them.

// CellPage is the report's site page of one cell, built on demand: the
// page's HTML and its figures, each rendered (PNG or SVG) when it is first
// asked for. The page names its figures by relative file names (as a
// report's site page does), and links "index.html" for the atlas.
type CellPage struct {
	Cell int
	HTML []byte
	figs map[string]*lazyFigure // by file name
	pngs []string               // the PNG names in page order
}

type lazyFigure struct {
	f    *figure
	mu   sync.Mutex // one rendering of a figure at a time (its plots are not shared safely)
	png  []byte
	svg  []byte
	errs [2]error
	done [2]bool
}

// BuildCellPage gathers the page of cell as the report's site pages are
// made (the same figures, notes and table of the cell's numbers), the cell
// taken as the site. It reads the long tables' row groups of that cell
// only (rundir.Run.CellTable); r must not be used by another goroutine
// meanwhile. The figures are drawn later, by File.
func BuildCellPage(r *rundir.Run, cell int) (*CellPage, error) {
	if cell < 0 || cell >= r.Cells.Rows {
		return nil, fmt.Errorf("report: cell %d is not a cell of %s (0 to %d)", cell, r.Dir, r.Cells.Rows-1)
	}
	lon, lat := r.Lon(), r.Lat()
	s := Site{Name: fmt.Sprintf("cell %d", cell), Slug: fmt.Sprintf("cell_%d", cell), Lon: lon[cell], Lat: lat[cell], Cell: cell}
	sv, figs, err := newSiteView(r, s)
	if err != nil {
		return nil, err
	}
	sv.Distance = "" // the asked position is the cell's own
	p := &CellPage{Cell: cell, figs: map[string]*lazyFigure{}}
	for _, f := range figs {
		names := figureFiles(f)
		lf := &lazyFigure{f: f}
		p.figs[names[0]], p.figs[names[1]] = lf, lf
		p.pngs = append(p.pngs, names[0])
		sv.Figures = append(sv.Figures, pageFigure{Title: f.Title, Caption: f.Caption, PNG: names[0], SVG: names[1]})
	}
	if r.Land[cell] {
		sv.Notes = append([]string{"this cell is land or masked: it has no results"}, sv.Notes...)
	}
	v := &indexView{Title: "Wave-energy resource atlas", Caution: r.Manifest.Caution, Software: r.Manifest.Software, Version: r.Manifest.Version, CSS: template.CSS(css)}
	v.Synthetic = r.Cells.Meta["swellgrid:synthetic"]
	var b bytes.Buffer
	if err := sitePage.Execute(&b, struct {
		*indexView
		S *siteView
	}{v, sv}); err != nil {
		return nil, fmt.Errorf("report: page of cell %d: %w", cell, err)
	}
	p.HTML = b.Bytes()
	return p, nil
}

// Figures lists the PNG file names of the page's figures, in page order.
func (p *CellPage) Figures() []string { return p.pngs }

// File renders (once) and returns the figure file name of the page (a
// name the page's HTML gives: <figure>.png or <figure>.svg); ok is false
// for any other name.
func (p *CellPage) File(name string) (b []byte, ok bool, err error) {
	lf := p.figs[name]
	if lf == nil {
		return nil, false, nil
	}
	k := 0
	if strings.HasSuffix(name, ".svg") {
		k = 1
	}
	lf.mu.Lock()
	defer lf.mu.Unlock()
	if !lf.done[k] {
		if k == 0 {
			lf.png, lf.errs[0] = pngBytes(lf.f)
		} else {
			lf.svg, lf.errs[1] = svgBytes(lf.f)
		}
		lf.done[k] = true
	}
	if k == 0 {
		return lf.png, true, lf.errs[0]
	}
	return lf.svg, true, lf.errs[1]
}

// Scale is the colour scale of a report map: viridis over [Min, Max] (a
// value v takes entry floor((v - Min) / (Max - Min) * 256) of Colours,
// clamped to 0..255), Land the colour of land and masked cells, NoData that
// of sea cells without a result; colours as "#rrggbb".
type Scale struct {
	Min     float64  `json:"min"`
	Max     float64  `json:"max"`
	Colours []string `json:"colours"`
	Land    string   `json:"land"`
	NoData  string   `json:"no_data"`
}

// MapScale is the colour scale the report's map of a column whose sea
// cells run from lo to hi uses (Map).
func MapScale(lo, hi float64) Scale {
	v := mapScale(lo, hi)
	s := Scale{Min: v.Min(), Max: v.Max(), Land: hexColour(landColor), NoData: hexColour(noDataColor)}
	for i := range viridisRGB {
		s.Colours = append(s.Colours, hexColour(v.color(i)))
	}
	return s
}

// MapColours is the viridis of the report's map of a column whose sea cells
// run from lo to hi (Map): a flat range widened as the map widens it.
func MapColours(lo, hi float64) *Viridis { return mapScale(lo, hi) }

func hexColour(c color.NRGBA) string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

// UnitLabel is a unit as the report's titles give it: " (unit)", nothing
// for a dimensionless column ("1" or "").
func UnitLabel(unit string) string { return unitSuffix(unit) }

// CellOutlines returns each cell's outline as the report's maps draw it
// (lon, lat corners in the run's continuous longitude frame, rundir.Run.Frame),
// for a structured grid; nil for a point set or a mesh (drawn as points).
// An outline is nil where a corner is not finite.
func CellOutlines(r *rundir.Run) [][][2]float64 {
	if !r.Structured() {
		return nil
	}
	f := &Field{NX: r.NX, NY: r.NY, Lon: r.FrameLon(), Lat: r.Lat()}
	polys := f.cellPolygons()
	out := make([][][2]float64, len(polys))
	for i, p := range polys {
		if p == nil {
			continue
		}
		out[i] = make([][2]float64, len(p))
		for k, q := range p {
			if math.IsNaN(q[0]) {
				out[i] = nil
				break
			}
			out[i][k] = [2]float64{q[0], q[1]}
		}
	}
	return out
}
