package report

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

// screeningMaps draws one map per screening scenario of the run (from
// screening.parquet and screening.json): passing cells in yellow (1),
// failing sea cells in purple (0), land in sand, into dir. A run without
// screening has none.
func screeningMaps(r *rundir.Run, dir string) ([]pageFigure, []string, error) {
	b, err := r.ReadFile(contract.ScreeningFile) // verified when sealed
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil, nil
	}
	if err != nil {
		return nil, nil, fmt.Errorf("report: %w", err)
	}
	var sum contract.ScreeningSummary
	if err := json.Unmarshal(b, &sum); err != nil {
		return nil, nil, fmt.Errorf("report: screening.json: %w", err)
	}
	t, err := r.Table(contract.TableScreening)
	if err != nil {
		return nil, nil, err
	}
	if t == nil {
		return nil, nil, fmt.Errorf("report: screening.json without screening.parquet in %s; rerun swellgrid screen", r.Dir)
	}
	ids, sc, pass := t.Col(contract.ColCellID), t.Col("scenario"), t.Col("pass")
	if ids == nil || sc == nil || pass == nil {
		return nil, nil, fmt.Errorf("report: screening.parquet lacks cell_id, scenario or pass")
	}
	n := r.Cells.Rows
	var figs []pageFigure
	var files []string
	for _, s := range sum.Scenarios {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.NaN()
		}
		for k := 0; k < t.Rows; k++ {
			if sc.Str[k] == s.Name && int(ids.Int[k]) < n {
				v[ids.Int[k]] = 0
				if pass.Bool[k] {
					v[ids.Int[k]] = 1
				}
			}
		}
		f := &Field{NX: r.NX, NY: r.NY, Points: !r.Structured(), Lon: r.Lon(), Lat: r.Lat(), Value: v, Land: r.Land, Name: "screening_" + s.Name, Unit: "1", Marks: mapMarks(r)}
		title := "Screening scenario " + s.Name + ": passing cells (yellow)"
		fig, info, err := Map("map_screening_"+s.Name, title, f)
		if err != nil {
			continue // no sea cell: nothing to draw
		}
		names, err := save(dir, fig)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, names...)
		var what []string
		if len(s.Criteria) > 0 {
			what = append(what, strings.Join(s.Criteria, ", "))
		}
		for _, e := range s.Exclude {
			what = append(what, "not in "+e)
		}
		for _, w := range s.Within {
			what = append(what, "in "+w)
		}
		c := fmt.Sprintf("Scenario %s (%s): %d cells pass (yellow, 1); failing sea cells purple (0); sand: land or masked cells.", s.Name, strings.Join(what, "; "), s.Cells)
		if s.AreaKm2 != nil {
			c += fmt.Sprintf(" Passing area %s km2.", fmtNum(*s.AreaKm2))
		}
		if s.PowerMeanKWm != nil {
			c += fmt.Sprintf(" Area-weighted mean power %s kW/m.", fmtNum(*s.PowerMeanKWm))
		}
		if s.Device != "" && s.AnnualEnergyGWh != nil {
			c += fmt.Sprintf(" Layout of %s: %s GWh/yr.", s.Device, fmtNum(*s.AnnualEnergyGWh))
		}
		c += deliveredText(s, t, sc, ids, pass)
		c += " Reasons per cell in screening.parquet, outline in " + contract.ContourDir + "/" + contract.ScreeningOutlineFile(s.Name) + ". " + sum.Note
		c += marksCaption(info.Marks)
		figs = append(figs, pageFigure{Title: title, Caption: c, PNG: names[0], SVG: names[1], Map: info})
	}
	return figs, files, nil
}

// deliveredText states a scenario's energy delivered ashore and levelised
// cost (screening.json) and ranks its passing cells by open-water AEP and by
// delivered energy side by side (screening.parquet's aep_mwh and
// delivered_mwh): the planner sees which cells the losses and the access
// for repairs move. Empty without delivered energy.
func deliveredText(s contract.ScenarioSummary, t *rundir.Table, sc, ids, pass *rundir.Column) string {
	if s.DeliveredEnergyGWh == nil {
		return ""
	}
	c := fmt.Sprintf(" Delivered at the connection (%s): %s GWh/yr, with array factor %s, the availability from repair access and export losses of %s + %s per km over the route (geodesic x %s; AC and DC export lose the same at %s km).",
		s.Connection, fmtNum(*s.DeliveredEnergyGWh), fmtNum(s.ArrayFactor), pct(s.LossFixed), pct(s.LossPerKm), fmtNum(s.RouteFactor), crossover(s.LossCrossoverKm))
	if s.LCOE != nil {
		c += fmt.Sprintf(" Levelised cost %s per MWh, rank %d among the scenarios (screening figures from stated assumptions, not investment advice).", fmtNum(*s.LCOE), s.LCOERank)
	}
	aep, del := t.Col("aep_mwh"), t.Col("delivered_mwh")
	if aep == nil || del == nil {
		return c
	}
	type cell struct {
		id       int64
		aep, del float64
	}
	var cs []cell
	for k := 0; k < t.Rows; k++ {
		if sc.Str[k] == s.Name && pass.Bool[k] && !math.IsNaN(del.Value(k)) && !math.IsNaN(aep.Value(k)) {
			cs = append(cs, cell{ids.Int[k], aep.Value(k), del.Value(k)})
		}
	}
	if len(cs) < 2 {
		return c
	}
	n := min(len(cs), 10)
	list := func(less func(a, b cell) bool) string {
		sort.SliceStable(cs, func(a, b int) bool { return less(cs[a], cs[b]) })
		var out []string
		for _, x := range cs[:n] {
			out = append(out, strconv.FormatInt(x.id, 10))
		}
		return strings.Join(out, ", ")
	}
	byAEP := list(func(a, b cell) bool { return a.aep > b.aep })
	byDel := list(func(a, b cell) bool { return a.del > b.del })
	c += fmt.Sprintf(" The %d first passing cells (cell_id) by open-water AEP: %s; by delivered energy: %s.", n, byAEP, byDel)
	return c
}

func pct(x float64) string { return fmtNum(100*x) + " %" }

func crossover(x *float64) string {
	if x == nil {
		return "no"
	}
	return fmtNum(*x)
}
