package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

// BandRatioMap is what a P90/P50 map shows: one device and horizon, the
// ratio aep_p90_mwh / aep_p50_mwh per cell (NaN where aep_bands.parquet has
// no positive P90).
type BandRatioMap struct {
	Device   string
	HorizonY float64
	Ratio    []float64
}

// BandRatios reads aep_bands.parquet of r into one BandRatioMap per device
// and horizon, in the table's order (nil when the run has no bands).
func BandRatios(r *rundir.Run) ([]BandRatioMap, error) {
	t, err := r.Columns(contract.TableAEPBands, contract.ColCellID, "device", "horizon_y", "aep_p50_mwh", "aep_p90_mwh")
	if err != nil || t == nil {
		return nil, err
	}
	ids, dev, hz, p50, p90 := t.Col(contract.ColCellID), t.Col("device"), t.Col("horizon_y"), t.Col("aep_p50_mwh"), t.Col("aep_p90_mwh")
	if ids == nil || dev == nil || hz == nil || p50 == nil || p90 == nil {
		return nil, nil
	}
	n := r.Cells.Rows
	var out []BandRatioMap
	at := map[string]int{}
	for i := 0; i < t.Rows; i++ {
		key := fmt.Sprintf("%s\x00%g", dev.Str[i], hz.Float[i])
		k, ok := at[key]
		if !ok {
			v := make([]float64, n)
			for j := range v {
				v[j] = math.NaN()
			}
			k = len(out)
			at[key] = k
			out = append(out, BandRatioMap{Device: dev.Str[i], HorizonY: hz.Float[i], Ratio: v})
		}
		if c := int(ids.Int[i]); c >= 0 && c < n && p50.Float[i] > 0 {
			out[k].Ratio[c] = p90.Float[i] / p50.Float[i]
		}
	}
	return out, nil
}

// bandRatioMaps draws a map of the P90/P50 ratio for each device and
// horizon of aep_bands.parquet into dir: how far the energy exceeded with 90 %
// probability lies below the central estimate, 1 - 1.2816 u_total_frac.
func bandRatioMaps(r *rundir.Run, dir string) ([]pageFigure, []string, error) {
	maps, err := BandRatios(r)
	if err != nil {
		return nil, nil, err
	}
	var figs []pageFigure
	var files []string
	for _, m := range maps {
		name := fmt.Sprintf("p90_p50_%s_%sy", m.Device, fmtNum(m.HorizonY))
		f := &Field{NX: r.NX, NY: r.NY, Points: !r.Structured(), Lon: r.Lon(), Lat: r.Lat(), Value: m.Ratio, Land: r.Land, Name: name, Unit: "1", Marks: mapMarks(r)}
		meshField(r, f)
		lo, hi, nv := f.Range()
		if nv == 0 {
			continue // no positive P90 anywhere: nothing to draw
		}
		title := fmt.Sprintf("P90/P50 annual energy of device %s, mean of %s future year(s)", m.Device, fmtNum(m.HorizonY))
		fig, info, err := Map("map_"+name, title, f)
		if err != nil {
			continue
		}
		names, err := save(dir, fig)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, names...)
		c := fmt.Sprintf("aep_p90_mwh / aep_p50_mwh of aep_bands.parquet (horizon_y = %s): 1 - 1.2816 u_total_frac, from %s to %s; the lower, the less sure the energy. Blank sea cells have no positive P90. The model component is a validation station's near it (model_station) and the spec's assumption elsewhere: a step in the map can be that boundary. Screening estimates; see the caution.",
			fmtNum(m.HorizonY), fmtNum(lo), fmtNum(hi))
		c += marksCaption(info.Marks)
		figs = append(figs, pageFigure{Title: title, Caption: c, PNG: names[0], SVG: names[1], Map: info})
	}
	return figs, files, nil
}

// BandComponents is one bar group of a site's uncertainty-components
// figure: a device and horizon's relative standard uncertainties
// (aep_bands.parquet) and where the model component comes from.
type BandComponents struct {
	Device                              string
	HorizonY                            float64
	Record, Future, Model, Total        float64
	Station                             string // model_station ("" : the spec's assumption)
	StationKm, AEPBias, AEPBiasSE       float64
	PowerBias, PowerBiasSE, Interannual float64
}

// componentsFigure draws the uncertainty components of the site's cell per
// device and horizon (u_record_frac, u_future_frac, u_model_frac and their
// root-sum-square u_total_frac, in % of P50), and says in the caption where
// the model component comes from.
func componentsFigure(r *rundir.Run, s Site, name string) (*figure, error) {
	t, err := r.CellTable(contract.TableAEPBands, int64(s.Cell))
	if err != nil || t == nil {
		return nil, err
	}
	rows := t.RowsOf(contract.ColCellID, int64(s.Cell))
	get := func(col string, i int) float64 {
		if c := t.Col(col); c != nil {
			return c.Value(i)
		}
		return math.NaN()
	}
	dev, hz, st := t.Col("device"), t.Col("horizon_y"), t.Col("model_station")
	if len(rows) == 0 || dev == nil || hz == nil || t.Col("u_total_frac") == nil {
		return nil, nil
	}
	var bands []BandComponents
	for _, i := range rows {
		b := BandComponents{Device: dev.Str[i], HorizonY: hz.Float[i], Record: get("u_record_frac", i), Future: get("u_future_frac", i),
			Model: get("u_model_frac", i), Total: get("u_total_frac", i), StationKm: get("model_station_km", i),
			AEPBias: get("aep_bias_frac", i), AEPBiasSE: get("aep_bias_se_frac", i), PowerBias: get("power_bias_frac", i),
			PowerBiasSE: get("power_bias_se_frac", i), Interannual: get("interannual_frac", i)}
		if st != nil {
			b.Station = st.Str[i]
		}
		bands = append(bands, b)
	}
	p := newPlot("Uncertainty components of the annual energy", "", "% of P50")
	labels := make([]string, len(bands))
	for k, b := range bands {
		labels[k] = fmt.Sprintf("%s, %s-yr mean", b.Device, fmtNum(b.HorizonY))
	}
	width := vg.Points(10)
	parts := []struct {
		name string
		get  func(BandComponents) float64
	}{{"record length", func(b BandComponents) float64 { return b.Record }}, {"future variability", func(b BandComponents) float64 { return b.Future }},
		{"model", func(b BandComponents) float64 { return b.Model }}, {"total (root-sum-square)", func(b BandComponents) float64 { return b.Total }}}
	for j, q := range parts {
		v := make(plotter.Values, len(bands))
		for k, b := range bands {
			v[k] = 100 * q.get(b)
			if math.IsNaN(v[k]) {
				v[k] = 0 // not known: no bar, said in the caption
			}
		}
		bc, err := plotter.NewBarChart(v, width)
		if err != nil {
			return nil, nil
		}
		bc.Color = NewViridis(0, 1).color(20 + 70*j)
		bc.LineStyle.Width = 0
		bc.Offset = vg.Length(2*j-3) * width / 2
		p.Add(bc)
		p.Legend.Add(q.name, bc)
	}
	p.NominalX(labels...)
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	caption := "Relative standard uncertainties of each device's annual energy (aep_bands.parquet, % of P50): the record length (u_record_frac), the variability of the mean of the horizon's future years (u_future_frac), the model (u_model_frac), and their root-sum-square (u_total_frac), the errors taken as independent. A missing bar is a component that cannot be formed (fewer than two complete years). "
	seen := map[string]bool{}
	for _, b := range bands {
		if seen[b.Device] {
			continue
		}
		seen[b.Device] = true
		if b.Station == "" {
			caption += fmt.Sprintf("Model component of %s: the spec's assumed %s (uncertainty.model_frac; no validation station within reach). ", b.Device, fmtNum(b.Model))
		} else {
			caption += fmt.Sprintf("Model component of %s: validation station %s, %s km away: relative bias of the device's mean power %s (standard error %s, circular block bootstrap), of the mean wave power %s (%s); u_model = sqrt(bias^2 + se^2) = %s. ",
				b.Device, b.Station, fmtNum(b.StationKm), fmtNum(b.AEPBias), fmtNum(b.AEPBiasSE), fmtNum(b.PowerBias), fmtNum(b.PowerBiasSE), fmtNum(b.Model))
		}
	}
	caption += "Screening estimates; see the caution."
	f := &figure{Name: name, Title: "Uncertainty components", Caption: caption, W: 6 * vg.Inch, H: 4 * vg.Inch, data: bands}
	f.draw = func(dc draw.Canvas) {
		dc.SetColor(color.White)
		dc.Fill(dc.Rectangle.Path())
		p.Draw(dc)
	}
	return f, nil
}
