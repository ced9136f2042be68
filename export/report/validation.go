package report

import (
	"encoding/json"
	"fmt"
	"html/template"
	"math"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

// validationLink is one station page of `swellgrid validate`, for the index.
type validationLink struct {
	Name, File, Cell string
	Matched          int
	Hm0Bias, Hm0SI   string
}

// validationPages writes a page per station of the run's validation (when
// DIR/validation.json exists): the statistics table, a scatter plot of Hm0
// with the density of the pairs, a Q-Q plot and a time-series overlay of the
// chosen period. It only draws what the validation tables hold.
func validationPages(r *rundir.Run, tmp string, v *indexView, add func(...string)) ([]validationLink, error) {
	if _, err := os.Stat(filepath.Join(r.Dir, contract.ValidationFile)); err != nil {
		return nil, nil // no validation yet
	}
	b, err := r.ReadFile(contract.ValidationFile) // verified when sealed
	if err != nil {
		return nil, err
	}
	var sum contract.ValidationSummary
	if err := json.Unmarshal(b, &sum); err != nil {
		return nil, fmt.Errorf("report: %s/validation.json: %w", r.Dir, err)
	}
	stats, err := r.Table(contract.TableValidation)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err) // a damaged table stays a DamagedError (exit 2)
	}
	if stats == nil {
		return nil, fmt.Errorf("report: %s has validation.json but no validation.parquet; run swellgrid validate again", r.Dir)
	}
	qq, err := r.Table(contract.TableValidationQQ)
	if err != nil {
		return nil, err
	}
	pairs, err := r.Table(contract.TableValidationPairs)
	if err != nil {
		return nil, err
	}
	var links []validationLink
	for _, st := range sum.Stations {
		file := "validation_" + slug(st.Name) + ".html"
		pv := &validationView{indexView: v, S: st, Warnings: sum.Warnings}
		rows := stats.RowsOfStr("station", st.Name)
		for _, i := range rows {
			row := make([]string, 0, 13)
			for _, c := range []string{"variable", "unit", "period", "n", "obs_mean", "model_mean", "bias", "rmse", "scatter_index", "r", "slope_origin", "slope_symmetric"} {
				col := stats.Col(c)
				if col.Kind == rundir.String {
					row = append(row, col.Str[i])
				} else {
					row = append(row, colText(col, i))
				}
			}
			if row[2] == "all" || strings.HasPrefix(row[2], "storm") {
				pv.Record = append(pv.Record, row)
			} else if row[0] == "hm0" {
				pv.ByPeriod = append(pv.ByPeriod, row)
			}
			if row[0] == "hm0" && row[2] == "all" {
				links = append(links, validationLink{Name: st.Name, File: file, Cell: fmt.Sprint(st.NearestCell), Matched: st.Matched, Hm0Bias: row[6], Hm0SI: row[8]})
			}
		}
		figs := []*figure{}
		if pairs != nil {
			if f := scatterDensityFigure(pairs, st.Name, "validation_"+slug(st.Name)+"_scatter"); f != nil {
				figs = append(figs, f)
			}
			if f := overlayFigure(pairs, st, "validation_"+slug(st.Name)+"_series"); f != nil {
				figs = append(figs, f)
			}
		}
		if qq != nil {
			if f := qqFigure(qq, st.Name, "validation_"+slug(st.Name)+"_qq"); f != nil {
				figs = append(figs, f)
			}
		}
		for _, f := range figs {
			names, err := save(tmp, f)
			if err != nil {
				return nil, err
			}
			add(names...)
			pv.Figures = append(pv.Figures, pageFigure{Title: f.Title, Caption: f.Caption, PNG: names[0], SVG: names[1]})
		}
		if err := writePage(filepath.Join(tmp, file), validationPage, pv); err != nil {
			return nil, err
		}
		add(file)
	}
	return links, nil
}

type validationView struct {
	*indexView
	S        contract.ValidationStation
	Record   [][]string
	ByPeriod [][]string
	Figures  []pageFigure
	Warnings []string
}

// stationPairs returns the finite (measured, hindcast) pairs of two columns.
func stationPairs(t *rundir.Table, station, obs, mod string) (o, m []float64, times []string) {
	oc, mc, tc := t.Col(obs), t.Col(mod), t.Col("time")
	for _, i := range t.RowsOfStr("station", station) {
		o = append(o, oc.Value(i))
		m = append(m, mc.Value(i))
		times = append(times, tc.Str[i])
	}
	return
}

// scatterDensityFigure: measured against hindcast Hm0, the pairs counted
// in 40 x 40 bins over the common range and coloured by count (viridis),
// with the 1:1 line.
func scatterDensityFigure(t *rundir.Table, station, name string) *figure {
	o, m, _ := stationPairs(t, station, "hm0_obs_m", "hm0_model_m")
	hi := 0.0
	n := 0
	for k := range o {
		if !math.IsNaN(o[k]) && !math.IsNaN(m[k]) {
			hi = math.Max(hi, math.Max(o[k], m[k]))
			n++
		}
	}
	if n == 0 || !(hi > 0) {
		return nil
	}
	const nb = 40
	w := hi * 1.02 / nb
	counts := make([]float64, nb*nb)
	for k := range o {
		if math.IsNaN(o[k]) || math.IsNaN(m[k]) {
			continue
		}
		i, j := min(int(o[k]/w), nb-1), min(int(m[k]/w), nb-1)
		if i >= 0 && j >= 0 {
			counts[j*nb+i]++
		}
	}
	cmax := 0.0
	l := &binsLayer{}
	for j := 0; j < nb; j++ {
		for i := 0; i < nb; i++ {
			if c := counts[j*nb+i]; c > 0 {
				l.rects = append(l.rects, [4]float64{float64(i) * w, float64(i+1) * w, float64(j) * w, float64(j+1) * w})
				l.share = append(l.share, c)
				cmax = math.Max(cmax, c)
			}
		}
	}
	l.cmap = NewViridis(0, cmax)
	p := newPlot("Hm0: hindcast against measured, "+station, "measured Hm0 (m)", "hindcast Hm0 (m)")
	p.Add(l)
	one, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: hi * 1.02, Y: hi * 1.02}})
	one.Color = lineColor
	one.Dashes = []vg.Length{vg.Points(3), vg.Points(2)}
	p.Add(one)
	p.Legend.Add("1:1", one)
	p.Legend.Top, p.Legend.Left = true, true
	p.X.Min, p.Y.Min, p.X.Max, p.Y.Max = 0, 0, hi*1.02, hi*1.02
	return &figure{Name: name, Title: "Scatter of Hm0 with density",
		Caption: fmt.Sprintf("%d matched pairs in %d x %d bins of %s m, coloured by count from 1 to %s (viridis); dashed: 1:1.", n, nb, nb, fmtNum(w), fmtNum(cmax)),
		W:       5.2 * vg.Inch, H: 5 * vg.Inch, draw: func(dc draw.Canvas) { p.Draw(dc) }}
}

// qqFigure: the quantiles 1..99 of measured and hindcast Hm0 over the
// record (validation_qq.parquet), with the 1:1 line.
func qqFigure(t *rundir.Table, station, name string) *figure {
	var pts plotter.XYs
	va, pe, ob, mo := t.Col("variable"), t.Col("period"), t.Col("obs"), t.Col("model")
	hi := 0.0
	for _, i := range t.RowsOfStr("station", station) {
		if va.Str[i] == "hm0" && pe.Str[i] == "all" && !math.IsNaN(ob.Float[i]) && !math.IsNaN(mo.Float[i]) {
			pts = append(pts, plotter.XY{X: ob.Float[i], Y: mo.Float[i]})
			hi = math.Max(hi, math.Max(ob.Float[i], mo.Float[i]))
		}
	}
	if len(pts) == 0 {
		return nil
	}
	p := newPlot("Q-Q of Hm0, "+station, "measured quantile (m)", "hindcast quantile (m)")
	sc, _ := plotter.NewScatter(pts)
	sc.GlyphStyle.Radius = vg.Points(2)
	p.Add(sc)
	one, _ := plotter.NewLine(plotter.XYs{{X: 0, Y: 0}, {X: hi * 1.02, Y: hi * 1.02}})
	one.Dashes = []vg.Length{vg.Points(3), vg.Points(2)}
	p.Add(one)
	p.X.Min, p.Y.Min, p.X.Max, p.Y.Max = 0, 0, hi*1.02, hi*1.02
	return &figure{Name: name, Title: "Q-Q plot of Hm0",
		Caption: "Percentiles 1 to 99 of the measured and hindcast Hm0 over the matched times (Hyndman-Fan definition 7); dashed: 1:1.",
		W:       5 * vg.Inch, H: 5 * vg.Inch, draw: func(dc draw.Canvas) { p.Draw(dc) }}
}

// overlayFigure: measured and hindcast Hm0 over the chosen period, in days
// from its start (times compared as text, YYYY-MM-DD hh:mm:ss).
func overlayFigure(t *rundir.Table, st contract.ValidationStation, name string) *figure {
	o, m, times := stationPairs(t, st.Name, "hm0_obs_m", "hm0_model_m")
	var po, pm plotter.XYs
	var d0 float64 = math.NaN()
	for k, ts := range times {
		if ts < st.PlotFrom || ts >= st.PlotTo {
			continue
		}
		d := dayNumber(ts)
		if math.IsNaN(d0) {
			d0 = dayNumber(st.PlotFrom)
		}
		if !math.IsNaN(o[k]) {
			po = append(po, plotter.XY{X: d - d0, Y: o[k]})
		}
		if !math.IsNaN(m[k]) {
			pm = append(pm, plotter.XY{X: d - d0, Y: m[k]})
		}
	}
	if len(po) == 0 && len(pm) == 0 {
		return nil
	}
	p := newPlot("Hm0 from "+st.PlotFrom, "days from "+st.PlotFrom, "Hm0 (m)")
	if len(po) > 0 {
		lo, _ := plotter.NewScatter(po)
		lo.GlyphStyle.Radius = vg.Points(1.5)
		lo.GlyphStyle.Color = lineColor
		p.Add(lo)
		p.Legend.Add("measured", lo)
	}
	if len(pm) > 0 {
		lm, _ := plotter.NewLine(pm)
		lm.Color = NewViridis(0, 1).color(80)
		lm.Width = vg.Points(1.2)
		p.Add(lm)
		p.Legend.Add("hindcast", lm)
	}
	p.Legend.Top = true
	return &figure{Name: name, Title: "Time series of Hm0",
		Caption: fmt.Sprintf("Measured (dots) and hindcast (line) Hm0 at the matched times from %s to %s (validation.plot_start, plot_days).", st.PlotFrom, st.PlotTo),
		W:       7 * vg.Inch, H: 3.4 * vg.Inch, draw: func(dc draw.Canvas) { p.Draw(dc) }}
}

// dayNumber turns "YYYY-MM-DD hh:mm:ss" into a day count good for
// differences within a few years (30.4375-day months are not used: days
// are counted with the proleptic Gregorian rules; common practice for an
// axis, whatever the hindcast's calendar).
func dayNumber(s string) float64 {
	var y, mo, d, h, mi, se int
	if _, err := fmt.Sscanf(s, "%d-%d-%d %d:%d:%d", &y, &mo, &d, &h, &mi, &se); err != nil {
		return math.NaN()
	}
	a := (14 - mo) / 12
	yy, mm := y+4800-a, mo+12*a-3
	jdn := d + (153*mm+2)/5 + 365*yy + yy/4 - yy/100 + yy/400 - 32045
	return float64(jdn) + (float64(h)*3600+float64(mi)*60+float64(se))/86400
}

var _ = plot.New

var validationPage = template.Must(template.New("validation").Funcs(funcs).Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>Validation: {{.S.Name}} – {{.Title}}</title>
<style>{{.CSS}}</style></head><body>
<nav><a href="index.html">atlas summary and maps</a></nav>
<h1>Validation: station {{.S.Name}}</h1>
<div class="caution"><strong>Caution.</strong> {{.Caution}} Agreement with a station says how the hindcast compares there, not that it is fit for design.</div>
{{with .S.Attributes}}{{with .comment}}<p class="synthetic">{{.}}</p>{{end}}{{end}}
<table>
<tr><th>record</th><td>{{.S.Source}}</td></tr>
<tr><th>station</th><td>{{num .S.Lon}}, {{num .S.Lat}}</td></tr>
<tr><th>hindcast</th><td>{{.S.Location}}; nearest sea cell {{.S.NearestCell}} at {{num .S.DistanceKm}} km</td></tr>
<tr><th>times</th><td>{{.S.Measured}} measured, {{.S.Matched}} matched, {{.S.Outside}} outside the record, {{.S.Unpaired}} without a step within the tolerance</td></tr>
</table>
{{if .S.Notes}}<ul>{{range .S.Notes}}<li>{{.}}</li>{{end}}</ul>{{end}}
<h2>Statistics: whole record and storm tail</h2>
<p>bias = mean(hindcast − measured); scatter index = RMSE / measured mean; slope through the origin and symmetric slope sqrt(Σ hindcast² / Σ measured²); for direction the circular mean, bias and RMSE. Power on each side from its own Hm0 and Te.</p>
<table><tr><th>variable</th><th>unit</th><th>period</th><th>N</th><th>measured mean</th><th>hindcast mean</th><th>bias</th><th>RMSE</th><th>SI</th><th>r</th><th>slope (origin)</th><th>symmetric slope</th></tr>
{{range .Record}}<tr>{{range .}}<td>{{.}}</td>{{end}}</tr>{{end}}</table>
{{if .ByPeriod}}<h2>Hm0 by month and season</h2>
<table><tr><th>variable</th><th>unit</th><th>period</th><th>N</th><th>measured mean</th><th>hindcast mean</th><th>bias</th><th>RMSE</th><th>SI</th><th>r</th><th>slope (origin)</th><th>symmetric slope</th></tr>
{{range .ByPeriod}}<tr>{{range .}}<td>{{.}}</td>{{end}}</tr>{{end}}</table>{{end}}
{{range .Figures}}<figure><img src="{{.PNG}}" alt="{{.Title}}"><figcaption>{{.Caption}} <a href="{{.SVG}}">SVG</a></figcaption></figure>{{end}}
{{if .Warnings}}<h3>Warnings of the validation</h3><ul>{{range .Warnings}}<li>{{.}}</li>{{end}}</ul>{{end}}
</body></html>
`))
