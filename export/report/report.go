// Package report writes report/ of a finished run: index.html (a summary of
// the run, maps of the main per-cell results on the grid with the sites and
// validation stations marked) and a page per site (monthly climatology with
// the inter-annual spread, exceedance curves on a log axis, the joint Hm0 x
// Te occurrence with power isolines, the directional power rose, return
// levels with their intervals, design contours where the run has them, the
// energy bands, year by year the annual maxima, mean power and device
// energy, the weather windows by month with their table, and the site's
// numbers).
// Every figure is written beside the pages as PNG and SVG, named after what
// it shows; the pages hold their CSS inline and load nothing from the
// network, so the directory can be opened from disk, mailed or archived.
//
// report draws what the run's tables hold (through export/rundir); it
// computes no statistics. The only derived curves are the wave-power
// isolines of the occurrence diagram, from seastate's bulk formula, and the
// isolines of the maps, from grid's contouring.
package report

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/ingest"
)

// Dir is the report's directory in the run directory.
const Dir = contract.ReportDir

// mapColumns are the columns mapped, with their titles, when the run has
// them with at least one value: mean power, Hm0 p90, the 100-year Hm0, MVI,
// then each device's AEP and capacity factor.
func mapColumns(r *rundir.Run) [][2]string {
	out := [][2]string{
		{contract.ColPowerMean, "Mean wave power"},
		{contract.Hm0PercentileColumn(90), "90th percentile of Hm0"},
		{contract.Hm0ReturnLevelColumn(100), "100-year return level of Hm0 (GEV, screening estimate)"},
		{contract.ColMVI, "Monthly variability index (MVI)"},
	}
	for _, d := range r.Manifest.Parameters.Devices {
		out = append(out, [2]string{contract.AEPColumn(d.Name), "Mean annual energy of device " + d.Name},
			[2]string{contract.CapacityFactorColumn(d.Name), "Capacity factor of device " + d.Name})
	}
	return out
}

// Levels are the isolines of column c on a map: the spec's contour levels of
// the column if it gave them, else grid.NiceLevels over [lo, hi] (as the
// contour layers are made).
func Levels(r *rundir.Run, column string, lo, hi float64) []float64 {
	if lv := r.Manifest.Parameters.Contours.Levels[column]; len(lv) > 0 {
		return lv
	}
	return grid.NiceLevels(lo, hi, 8)
}

type pageFigure struct {
	Title, Caption, PNG, SVG string
	Map                      *MapInfo
}

type siteView struct {
	Site
	File     string
	CellLon  float64
	CellLat  float64
	Figures  []pageFigure
	Notes    []string
	Numbers  [][4]string  // name, value, unit, meaning
	Tables   []*pageTable // yearly.go: the weather windows by month
	Distance string
}

type indexView struct {
	Title, Caution, Software, Version, Synthetic string
	Summary                                      [][2]string
	Inputs                                       []contract.Input
	InputsMore                                   int
	Gaps                                         []ingest.Gap
	GapsMore                                     int
	Assumptions, Warnings, Notes, Outputs        []string
	Maps                                         []pageFigure
	Sites                                        []*siteView
	Validation                                   []validationLink // validation.go
	CSS                                          template.CSS
}

// Build writes r.Dir/report/ (replacing an earlier one once the new one is
// complete) and returns the files written, relative to r.Dir, and warnings.
// It renders the figures on all cores; BuildWith bounds that.
func Build(r *rundir.Run) ([]string, []string, error) { return BuildWith(r, 0) }

// BuildWith is Build rendering the figures with at most workers goroutines
// (0: one per core). The files do not depend on the number.
func BuildWith(r *rundir.Run, workers int) ([]string, []string, error) {
	part, err := export.NewPartial(r.Dir, Dir)
	if err != nil {
		return nil, nil, fmt.Errorf("report: %w", err)
	}
	defer part.Close()
	tmp := part.Dir // a private new folder, reached through its handle (export.Partial)
	var files, warns, notes []string
	add := func(names ...string) {
		for _, n := range names {
			files = append(files, filepath.Join(Dir, n))
		}
	}
	var queue []*figure // rendered after the pages' data is gathered, in parallel
	save := func(_ string, f *figure) ([]string, error) {
		queue = append(queue, f)
		return figureFiles(f), nil
	}
	m := r.Manifest
	v := &indexView{Title: "Wave-energy resource atlas", Caution: m.Caution, Software: m.Software, Version: m.Version, CSS: template.CSS(css)}
	v.Synthetic = r.Cells.Meta["swellgrid:synthetic"]
	lon, lat := r.Lon(), r.Lat()
	marks := mapMarks(r)
	for _, mc := range mapColumns(r) {
		c := r.Cells.Col(mc[0])
		if c == nil || c.Kind != rundir.Float {
			continue
		}
		f := &Field{NX: r.NX, NY: r.NY, Points: !r.Structured(), Lon: lon, Lat: lat, Value: c.Float, Land: r.Land, Name: c.Name, Unit: c.Unit}
		f.Marks = marks
		meshField(r, f) // meshmap.go: a mesh is drawn as filled triangles
		lo, hi, n := f.Range()
		if n == 0 {
			notes = append(notes, fmt.Sprintf("report: no map of %s: no sea cell has a published value", c.Name))
			continue
		}
		if (r.Structured() || f.Isolines != nil) && hi > lo {
			f.Levels = Levels(r, c.Name, lo, hi)
		}
		fig, info, err := Map("map_"+c.Name, mc[1]+unitSuffix(c.Unit), f)
		if err != nil {
			return nil, nil, fmt.Errorf("report: map of %s: %w", c.Name, err)
		}
		names, err := save(tmp, fig)
		if err != nil {
			return nil, nil, err
		}
		add(names...)
		fig.Caption = mapCaption(c.Name, c.Doc, c.Unit, lo, hi, f.Levels) + marksCaption(info.Marks)
		v.Maps = append(v.Maps, pageFigure{Title: fig.Title, Caption: fig.Caption, PNG: names[0], SVG: names[1], Map: info})
	}
	sm, smFiles, err := screeningMaps(r, tmp) // screening.go
	if err != nil {
		return nil, nil, err
	}
	add(smFiles...)
	v.Maps = append(v.Maps, sm...)
	bm, bmFiles, err := bandRatioMaps(r, tmp) // bands.go
	if err != nil {
		return nil, nil, err
	}
	add(bmFiles...)
	v.Maps = append(v.Maps, bm...)
	lm, lmFiles, err := lcoeMaps(r, tmp) // lcoe.go
	if err != nil {
		return nil, nil, err
	}
	add(lmFiles...)
	v.Maps = append(v.Maps, lm...)
	sites, sw := Sites(r)
	warns = append(warns, sw...)
	for _, s := range sites {
		sv, figs, err := newSiteView(r, s)
		if err != nil {
			return nil, nil, err
		}
		wf, err := waterfallFigures(r, s) // lcoe.go
		if err != nil {
			return nil, nil, fmt.Errorf("report: site %s: %w", s.Name, err)
		}
		figs = append(figs, wf...)
		for _, f := range figs {
			names, err := save(tmp, f)
			if err != nil {
				return nil, nil, err
			}
			add(names...)
			sv.Figures = append(sv.Figures, pageFigure{Title: f.Title, Caption: f.Caption, PNG: names[0], SVG: names[1]})
		}
		v.Sites = append(v.Sites, sv)
	}
	if v.Validation, err = validationPages(r, tmp, v, add); err != nil {
		return nil, nil, err
	}
	v.Summary = summary(r)
	v.Inputs = m.Inputs
	if len(v.Inputs) > 12 {
		v.InputsMore, v.Inputs = len(v.Inputs)-12, v.Inputs[:12]
	}
	v.Gaps = m.Gaps
	if len(v.Gaps) > 20 {
		v.GapsMore, v.Gaps = len(v.Gaps)-20, v.Gaps[:20]
	}
	v.Assumptions, v.Warnings, v.Notes = m.Assumptions, m.Warnings, notes
	outs, _ := filepath.Glob(filepath.Join(r.Dir, "*.*"))
	for _, o := range outs {
		if b := filepath.Base(o); !strings.HasPrefix(b, ".") {
			v.Outputs = append(v.Outputs, b)
		}
	}
	sort.Strings(v.Outputs)
	for _, sv := range v.Sites {
		if err := writePage(filepath.Join(tmp, sv.File), sitePage, struct {
			*indexView
			S *siteView
		}{v, sv}); err != nil {
			return nil, nil, err
		}
		add(sv.File)
	}
	if err := writePage(filepath.Join(tmp, contract.ReportIndex), indexPage, v); err != nil {
		return nil, nil, err
	}
	add(contract.ReportIndex)
	if err := renderAll(tmp, queue, workers); err != nil {
		return nil, nil, err
	}
	if err := part.CommitFolder(filepath.Join(r.Dir, Dir)); err != nil {
		return nil, nil, fmt.Errorf("report: %w", err)
	}
	sort.Strings(files)
	return files, append(warns, notes...), nil
}

// newSiteView gathers the page of site s: its figures (drawn, not yet
// rendered; the caller adds them to the view), notes and the cell's numbers.
func newSiteView(r *rundir.Run, s Site) (*siteView, []*figure, error) {
	lon, lat := r.Lon(), r.Lat()
	sv := &siteView{Site: s, File: "site_" + s.Slug + ".html", CellLon: lon[s.Cell], CellLat: lat[s.Cell]}
	if r.GridKind != grid.Points {
		sv.Distance = fmt.Sprintf("%.1f km", s.DistKM)
	}
	figs, fn, err := siteFigures(r, s)
	if err != nil {
		return nil, nil, fmt.Errorf("report: site %s: %w", s.Name, err)
	}
	sv.Notes = fn
	if wl, err := windowLines(r, s); err != nil { // yearly.go
		return nil, nil, fmt.Errorf("report: site %s: %w", s.Name, err)
	} else if wt := windowsTable(wl); wt != nil {
		sv.Tables = append(sv.Tables, wt)
	}
	for _, c := range r.Cells.Columns {
		val := ""
		switch c.Kind {
		case rundir.Float, rundir.Int:
			val = colText(c, s.Cell)
		case rundir.String:
			val = c.Str[s.Cell]
		case rundir.Bool:
			val = fmt.Sprint(c.Bool[s.Cell])
		}
		sv.Numbers = append(sv.Numbers, [4]string{c.Name, val, c.Unit, c.Doc})
	}
	return sv, figs, nil
}

// mapMarks are the places marked on the maps: the spec's sites (manifest
// parameters.sites; a point set's points are the map itself) and the
// stations of the run's validation (validation.json), when it has one.
func mapMarks(r *rundir.Run) []Mark {
	var out []Mark
	for _, s := range r.Manifest.Parameters.Sites {
		out = append(out, Mark{Name: s.Name, Lon: s.Lon, Lat: s.Lat})
	}
	// verified when sealed; a damaged one gives no marks here and is
	// refused by the validation section (validation.go)
	if b, err := r.ReadFile(contract.ValidationFile); err == nil {
		var sum contract.ValidationSummary
		if json.Unmarshal(b, &sum) == nil {
			for _, st := range sum.Stations {
				out = append(out, Mark{Name: st.Name, Lon: st.Lon, Lat: st.Lat, Station: true})
			}
		}
	}
	return out
}

// marksJSON is a map's marks as a JSON array of {name, lon, lat, station}
// (the figure's data-marks attribute, for a reader and the tests).
func marksJSON(marks []Mark) string {
	type m struct {
		Name    string  `json:"name"`
		Lon     float64 `json:"lon"`
		Lat     float64 `json:"lat"`
		Station bool    `json:"station"`
	}
	out := make([]m, len(marks))
	for i, k := range marks {
		out[i] = m(k)
	}
	b, _ := json.Marshal(out)
	return string(b)
}

// marksCaption says what the marks on a map are.
func marksCaption(marks []Mark) string {
	var sites, stations int
	for _, m := range marks {
		if m.Station {
			stations++
		} else {
			sites++
		}
	}
	var parts []string
	if sites > 0 {
		parts = append(parts, "red triangles: the sites of the spec")
	}
	if stations > 0 {
		parts = append(parts, "white diamonds: the validation stations")
	}
	if len(parts) == 0 {
		return ""
	}
	return " Marked: " + strings.Join(parts, "; ") + "."
}

func unitSuffix(u string) string {
	if u == "" || u == "1" {
		return ""
	}
	return " (" + u + ")"
}

// mapCaption is the caption of a column's map: the colour range and the
// isolines with the column's unit, none for a dimensionless one ("1").
func mapCaption(name, doc, unit string, lo, hi float64, levels []float64) string {
	u := ""
	if unit != "" && unit != "1" {
		u = " " + unit
	}
	c := fmt.Sprintf("%s: %s. Colour from %s to %s%s (viridis); sand: land or masked cells; grey: sea cells without a result.", name, doc, fmtNum(lo), fmtNum(hi), u)
	if len(levels) > 0 {
		c += " Isolines at " + joinNums(levels) + u + "."
	}
	return c
}

func joinNums(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = fmtNum(x)
	}
	return strings.Join(s, ", ")
}

func summary(r *rundir.Run) [][2]string {
	m := r.Manifest
	var size int64
	for _, in := range m.Inputs {
		size += in.Size
	}
	missing := 0.0
	for _, g := range m.Gaps {
		missing += g.Hours
	}
	cov := "no gaps in the time axis"
	if len(m.Gaps) > 0 {
		cov = fmt.Sprintf("%d gaps, %s hours not covered (%.2f%% of the record)", len(m.Gaps), fmtNum(missing), 100*missing/math.Max(1, m.CoveredHours+missing))
	}
	if len(m.Duplicates) > 0 {
		cov += fmt.Sprintf("; %d time steps held by two files, each read once (see manifest.json duplicate_steps)", len(m.Duplicates))
	}
	if c := r.Cells.Col(contract.ColCoverage); c != nil {
		lo, hi := math.Inf(1), math.Inf(-1)
		for i, x := range c.Float {
			if !r.Land[i] && !math.IsNaN(x) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
		if !math.IsInf(lo, 0) {
			cov += fmt.Sprintf("; per-cell coverage %s to %s", fmtNum(lo), fmtNum(hi))
		}
	}
	g := m.Grid
	return [][2]string{
		{"Inputs", fmt.Sprintf("%d files, %.1f MB", len(m.Inputs), float64(size)/1e6)},
		{"Record", fmt.Sprintf("%s to %s, %d time steps, %s, calendar %s", m.Start, m.End, m.Steps, segmentsText(m), m.Calendar)},
		{"Coverage and gaps", cov},
		{"Grid", fmt.Sprintf("%s, %d x %d (%d cells, %d masked), lon %s to %s, lat %s to %s", g.Kind, g.Shape[0], g.Shape[1], g.Cells, g.Masked,
			fmtNum(g.BBox[0]), fmtNum(g.BBox[2]), fmtNum(g.BBox[1]), fmtNum(g.BBox[3]))},
		{"Depth source", m.DepthSource},
		{"Run time", runTime(m.Timings)},
		{"Software", m.Software + " " + m.Version},
	}
}

// runStages are the stages of a run's timings the summary adds up, in
// order. products_s (this report and the atlas files) is left out: it is
// known only after the report is written, and a rebuilt report must equal
// the run's.
var runStages = [][2]string{{"catalog_s", "catalog"}, {"load_s", "shard states"}, {"stream_s", "read and accumulate"}, {"fit_s", "fits"}, {"export_s", "tables"}}

// runTime states the run's wall time by stage from the manifest's timings.
func runTime(t map[string]float64) string {
	var total float64
	var parts []string
	for _, st := range runStages {
		if v, ok := t[st[0]]; ok {
			total += v
			parts = append(parts, fmt.Sprintf("%s %s s", st[1], strconv.FormatFloat(v, 'f', 1, 64)))
		}
	}
	if len(parts) == 0 {
		return "not recorded in the manifest"
	}
	return fmt.Sprintf("%s s (%s; the report and atlas files not included)", strconv.FormatFloat(total, 'f', 1, 64), strings.Join(parts, ", "))
}

// segmentsText says how the record's step runs: "every 3 h", or its
// segments when the step changes ("2001-01-01 00:00:00 to 2002-12-31
// 21:00:00 every 3 h; ..."); a manifest without segments gives its step.
func segmentsText(m *contract.Manifest) string {
	if len(m.Segments) == 0 {
		return "step " + stepText(m.StepSeconds)
	}
	if len(m.Segments) == 1 && m.Segments[0].StepHours > 0 {
		return "every " + stepText(int64(math.Round(m.Segments[0].StepHours*3600)))
	}
	var parts []string
	for i, sg := range m.Segments {
		if i == 8 {
			parts = append(parts, fmt.Sprintf("and %d more segments (see manifest.json time_segments)", len(m.Segments)-8))
			break
		}
		if sg.StepHours > 0 {
			parts = append(parts, fmt.Sprintf("%s to %s every %s", sg.First, sg.Last, stepText(int64(math.Round(sg.StepHours*3600)))))
		} else {
			parts = append(parts, fmt.Sprintf("%s to %s irregular, steps of %s to %s", sg.First, sg.Last,
				stepText(int64(math.Round(sg.MinStepHours*3600))), stepText(int64(math.Round(sg.MaxStepHours*3600)))))
		}
	}
	return "the step changes: " + strings.Join(parts, "; ")
}

func stepText(s int64) string {
	switch {
	case s%3600 == 0:
		return fmt.Sprintf("%d h", s/3600)
	case s%60 == 0:
		return fmt.Sprintf("%d min", s/60)
	}
	return fmt.Sprintf("%d s", s)
}

func writePage(path string, t *template.Template, data any) error {
	var b bytes.Buffer
	if err := t.Execute(&b, data); err != nil {
		return fmt.Errorf("report: %s: %w", path, err)
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

var funcs = template.FuncMap{"num": fmtNum, "nums": joinNums, "marksJSON": marksJSON,
	"colPowerMean": func() string { return contract.ColPowerMean }}

const css = `body{font-family:sans-serif;margin:0 auto;max-width:1100px;padding:0 1.2em 3em;color:#1b1b1b;line-height:1.4}
h1{font-size:1.6em;margin-top:1em}h2{font-size:1.25em;border-bottom:1px solid #ccc;padding-bottom:.2em;margin-top:1.6em}
.caution{border:2px solid #a33;background:#fff3f0;padding:.6em 1em;margin:1em 0}
.synthetic{border:1px solid #557;background:#f0f2ff;padding:.4em 1em}
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.2em .5em;text-align:left;vertical-align:top;font-size:.92em}
th{background:#f2f2f2}figure{margin:1.2em 0}figure img{max-width:100%;height:auto;border:1px solid #ddd}
figcaption{font-size:.9em;color:#333;max-width:60em}.files{font-size:.85em}.sw{display:inline-block;width:1em;height:.8em;border:1px solid #999;vertical-align:middle}
nav a{margin-right:1em}
table.numbers{table-layout:fixed;width:100%}table.numbers td,table.numbers th{white-space:nowrap;overflow:hidden;text-overflow:ellipsis;height:1.4em;line-height:1.4em;vertical-align:middle}
table.numbers col.c-name{width:24%}table.numbers col.c-value{width:12%}table.numbers col.c-unit{width:9%}table.numbers col.c-doc{width:55%}
table.months{font-size:.85em}table.months caption{caption-side:top;text-align:left;font-size:.9em;color:#333;padding-bottom:.3em}table.months td{text-align:right;white-space:nowrap}`

var indexPage = template.Must(template.New("index").Funcs(funcs).Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{{.Title}}</title>
<style>{{.CSS}}</style></head><body>
<h1>{{.Title}}</h1>
<div class="caution"><strong>Caution.</strong> {{.Caution}}</div>
{{if .Synthetic}}<p class="synthetic">{{.Synthetic}}</p>{{end}}
<h2 id="summary">Summary</h2>
<table>{{range .Summary}}<tr><th>{{index . 0}}</th><td>{{index . 1}}</td></tr>{{end}}</table>
<h3>Inputs</h3>
<table><tr><th>file</th><th>first time</th><th>last time</th><th>steps</th></tr>
{{range .Inputs}}<tr><td>{{.Path}}</td><td>{{.First}}</td><td>{{.Last}}</td><td>{{.Steps}}</td></tr>{{end}}</table>
{{if .InputsMore}}<p>and {{.InputsMore}} more files (see manifest.json).</p>{{end}}
{{if .Gaps}}<h3>Gaps in the record</h3><table><tr><th>after</th><th>before</th><th>hours not covered</th></tr>
{{range .Gaps}}<tr><td>{{.After}}</td><td>{{.Before}}</td><td>{{.Hours}}</td></tr>{{end}}</table>
{{if .GapsMore}}<p>and {{.GapsMore}} more gaps (see manifest.json).</p>{{end}}{{end}}
<h3>Assumptions</h3><ul>{{range .Assumptions}}<li>{{.}}</li>{{end}}</ul>
<h3>Warnings</h3>{{if .Warnings}}<ul>{{range .Warnings}}<li>{{.}}</li>{{end}}</ul>{{else}}<p>none</p>{{end}}
{{if .Notes}}<h3>Notes on this report</h3><ul>{{range .Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
<h2 id="maps">Maps</h2>
<p>Colour scale: viridis (perceptually uniform); <span class="sw" style="background:#d8ccb2"></span> land or masked cells,
<span class="sw" style="background:#c8c8c8"></span> sea cells without a result. Axes in degrees on WGS 84, drawn with the
aspect of the mean latitude, a region across 180° in one piece (longitudes 0..360 on the axis, labelled -180..180).
Each figure is also an SVG file (link below it).</p>
{{range .Maps}}<figure class="map" data-column="{{.Map.Column}}" data-min="{{printf "%.17g" .Map.Min}}" data-max="{{printf "%.17g" .Map.Max}}" data-unit="{{.Map.Unit}}" data-extent="{{range $i, $v := .Map.Extent}}{{if $i}} {{end}}{{printf "%.17g" $v}}{{end}}"{{if .Map.Marks}} data-marks="{{marksJSON .Map.Marks}}"{{end}}>
<img src="{{.PNG}}" alt="{{.Title}}"><figcaption>{{.Caption}} <a href="{{.SVG}}">SVG</a></figcaption></figure>
{{else}}<p>No maps: no mapped column has values.</p>{{end}}
<h2 id="sites">Sites</h2>
{{if .Sites}}<table><tr><th>site</th><th>cell</th><th>lon</th><th>lat</th><th>mean power (kW/m)</th></tr>
{{range .Sites}}<tr><td><a href="{{.File}}">{{.Name}}</a></td><td>{{.Cell}}</td><td>{{num .CellLon}}</td><td>{{num .CellLat}}</td><td>{{range .Numbers}}{{if eq (index . 0) colPowerMean}}{{index . 1}}{{end}}{{end}}</td></tr>{{end}}</table>
{{else}}<p>No site pages: the spec has no [[site]] list (a point set gets a page for every point).</p>{{end}}
{{if .Validation}}<h2 id="validation">Validation against measurements</h2><table><tr><th>station</th><th>cell</th><th>matched times</th><th>Hm0 bias (m)</th><th>Hm0 scatter index</th></tr>
{{range .Validation}}<tr><td><a href="{{.File}}">{{.Name}}</a></td><td>{{.Cell}}</td><td>{{.Matched}}</td><td>{{.Hm0Bias}}</td><td>{{.Hm0SI}}</td></tr>{{end}}</table>{{end}}
<h2 id="files">Files of this run</h2><p class="files">{{range .Outputs}}{{.}} {{end}}</p>
<p class="files">Made by {{.Software}} {{.Version}} from the run's tables and manifest.</p>
</body></html>
`))

var sitePage = template.Must(template.New("site").Funcs(funcs).Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{{.S.Name}} – {{.Title}}</title>
<style>{{.CSS}}</style></head><body>
<nav><a href="index.html">atlas summary and maps</a></nav>
<h1>Site: {{.S.Name}}</h1>
<div class="caution"><strong>Caution.</strong> {{.Caution}}</div>
{{if .Synthetic}}<p class="synthetic">{{.Synthetic}}</p>{{end}}
<table><tr><th>asked position</th><td>{{num .S.Lon}} °E, {{num .S.Lat}} °N</td></tr>
<tr><th>cell</th><td>{{.S.Cell}} at {{num .S.CellLon}} °E, {{num .S.CellLat}} °N{{if .S.Distance}} (nearest sea cell, {{.S.Distance}} away){{end}}</td></tr></table>
{{range .S.Figures}}<figure><img src="{{.PNG}}" alt="{{.Title}}"><figcaption>{{.Caption}} <a href="{{.SVG}}">SVG</a></figcaption></figure>
{{end}}
{{if .S.Notes}}<ul>{{range .S.Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
{{range .S.Tables}}<table class="months"><caption>{{.Caption}}</caption><tr>{{range .Header}}<th>{{.}}</th>{{end}}</tr>
{{range .Rows}}<tr>{{range .}}<td>{{.}}</td>{{end}}</tr>{{end}}</table>
{{end}}
<h2>The cell's numbers</h2>
<table class="numbers"><colgroup><col class="c-name"><col class="c-value"><col class="c-unit"><col class="c-doc"></colgroup>
<tr><th>column</th><th>value</th><th>unit</th><th>meaning</th></tr>
{{range .S.Numbers}}<tr><td>{{index . 0}}</td><td>{{index . 1}}</td><td>{{index . 2}}</td><td title="{{index . 3}}">{{index . 3}}</td></tr>{{end}}</table>
</body></html>
`))
