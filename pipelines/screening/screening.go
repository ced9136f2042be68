package screening

// Site screening of a finished run: every cell against each scenario's
// criteria and constraint layers, from cells.parquet and the manifest (no
// recomputation), written as screening.parquet, screening.json and
// contours/screening_<scenario>.geojson.

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"

	"github.com/paulmach/orb"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/products"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/tables"
)

// File is the summary written beside the manifest.
const File = contract.ScreeningFile

// Note goes with every screening summary and its help: what the
// screening does not know.
const Note = "Screening takes each cell whole, by its centre: a cell whose centre passes counts with all its area, " +
	"and the passing area is only as good as the constraint layers given. It is a first sieve for planning studies, " +
	"not a site selection; see the caution."

// screenRow is one row of screening.parquet: a cell under a scenario.
type screenRow struct {
	id       int
	scenario string
	pass     bool
	reasons  []string
	areaKm2  float64
	dist     []float64 // km, per distance layer of the run (screenResult.distLayers)
	k        int       // index of the column's distance layer
	del      delivered // energy delivered ashore (NaN: the scenario has no device or connection)
}

// screeningSchema is screening.parquet, one row per cell and scenario, in
// cell-id order, scenarios in spec order within a cell.
var screeningSchema = []tables.Column[*screenRow]{
	tables.I64("cell_id", "1", "", "", "cell id", func(r *screenRow) int64 { return int64(r.id) }),
	tables.Str("scenario", "", "scenario name ([[screening.scenario]] name)", func(r *screenRow) string { return r.scenario }),
	tables.Bool("pass", "", "the cell passes every criterion and constraint of the scenario", func(r *screenRow) bool { return r.pass }),
	tables.Str("reasons", "", "semicolon-separated failed criteria and constraints (\"masked\"; a criterion as written, \"(missing)\" when the value is null; \"in LAYER\"; \"outside LAYER\"; \"LAYER distance ... km\"); empty when the cell passes",
		func(r *screenRow) string { return strings.Join(r.reasons, "; ") }),
	tables.F64("area_km2", "km2", "", "", "cell area on the WGS 84 ellipsoid from the grid's cell edges, or a mesh's faces or median dual cells (null: a point set has no cells)",
		func(r *screenRow) float64 { return r.areaKm2 }),
	tables.F64("dist_<layer>_km", "km", "", "", "geodesic distance on WGS 84 from the cell centre to the nearest feature of layer <layer> (0 inside its polygons)",
		func(r *screenRow) float64 { return r.dist[r.k] }).Per(ParamLayer),
	tables.F64("aep_mwh", "MWh/yr", "", "", "open-water annual energy of one device of the scenario (aep_<device>_mwh of cells.parquet; null: no device)",
		func(r *screenRow) float64 { return r.del.aep }),
	tables.F64("array_factor", "1", "", "", "array interaction factor of the scenario (array_factor; 1 unless given: an assumption)",
		func(r *screenRow) float64 { return r.del.array }),
	tables.F64("availability", "1", "", "", "availability of the device from its repair access (availability_<device> of cells.parquet)",
		func(r *screenRow) float64 { return r.del.avail }),
	tables.F64("route_km", "km", "", "", "export route: geodesic distance to the nearest feature of the connection layer x route_factor",
		func(r *screenRow) float64 { return r.del.routeKm }),
	tables.F64("loss_frac", "1", "", "", "export loss: loss_fixed + loss_per_km x route_km (AC or DC common-practice defaults unless given), at most 1",
		func(r *screenRow) float64 { return r.del.loss }),
	tables.F64("delivered_mwh", "MWh/yr", "", "", "energy of one device delivered at the connection: aep_mwh x array_factor x availability x (1 - loss_frac) (screening estimate)",
		func(r *screenRow) float64 { return r.del.energy }),
	tables.F64("cf_delivered", "1", "", "", "capacity factor of the delivered energy: cf_<device> x array_factor x availability x (1 - loss_frac)",
		func(r *screenRow) float64 { return r.del.cf }),
	tables.F64("lcoe_per_mwh", "currency/MWh", "", "", "levelised cost of the cell's layout (area_km2 x density devices, with an export cable of its own): ((capex_per_mw x MW + cable_per_km x route_km) x CRF(discount_rate, lifetime_y) + opex_per_mw_yr x MW) over its delivered energy; CRF = r (1+r)^n / ((1+r)^n - 1) (null: no cost inputs or no area; a screening figure from stated assumptions, not investment advice)",
		func(r *screenRow) float64 { return r.del.lcoe }),
}

// ParamLayer is the screening layer a distance column is repeated over.
const ParamLayer tables.Param = "layer"

const screeningMethod = "criteria on cells.parquet columns (a missing value fails); a cell is in a polygon layer when its centre is " +
	"inside or on the boundary of a polygon (planar in lon/lat, RFC 7946 edges); distances are geodesics on WGS 84 (Vincenty 1975) " +
	"from the cell centre to the nearest point of the layer's features; cell areas on the WGS 84 ellipsoid from the grid's cell edges " +
	"(midpoints between cell centres), on a mesh from its faces or its nodes' median dual cells; passing areas dissolved exactly along the cell edges"

// screenResult is the screening of a run.
type screenResult struct {
	rows       []*screenRow
	distLayers []string // layers with a distance column, in spec order
	summary    *contract.ScreeningSummary
	polys      map[string]orb.MultiPolygon // passing outline per scenario (structured grids)
	lcoe       []lcoeBands                 // bands of the levelised cost per scenario (delivered.go)
}

// runGrid rebuilds the grid geometry of a finished run from cells.parquet.
func runGrid(r *rundir.Run) *grid.Grid {
	g := &grid.Grid{NX: r.NX, NY: r.NY, Lon: r.Lon(), Lat: r.Lat()}
	switch r.GridKind {
	case grid.Regular, grid.Curvilinear:
		g.Kind = r.GridKind
	default: // points, and a mesh's nodes or faces
		g.Kind = grid.Points
	}
	return g
}

// screenRun screens the run r with the spec's [screening] section (its
// layers read by validateScreening).
func screenRun(r *rundir.Run, s *runspec.Resolved) (*screenResult, error) {
	scen, err := layoutDensities(r, s)
	if err != nil {
		return nil, err
	}
	g := runGrid(r)
	n := g.NCells()
	var outlines []orb.Ring // a mesh's cells (faces or median dual cells)
	if r.Mesh != nil {
		outlines = r.Mesh.CellOutlines(n)
	}
	areas := cellAreasM2(g, outlines)
	areaKm2 := make([]float64, n)
	for i := range areaKm2 {
		areaKm2[i] = math.NaN()
		if areas != nil {
			areaKm2[i] = areas[i] / 1e6
		}
	}
	res := &screenResult{polys: map[string]orb.MultiPolygon{}}
	frame := g.Frame() // the layers are placed in the grid's frame (grid.Frame.Place)
	sum := &contract.ScreeningSummary{Caution: tables.Caution, Note: Note, Method: screeningMethod}
	for _, l := range s.Layers {
		sum.Layers = append(sum.Layers, contract.ScreeningLayer{Name: l.Name, Path: l.File, Table: l.Table, SHA256: l.SHA256, Features: len(l.Geoms)})
	}
	// distances, once per layer used in a distance rule
	distIdx := map[string]int{}
	for _, c := range scen {
		for _, d := range c.Distance {
			if _, ok := distIdx[d.Layer]; !ok {
				distIdx[d.Layer] = len(res.distLayers)
				res.distLayers = append(res.distLayers, d.Layer)
			}
		}
	}
	dist := make([][]float64, len(res.distLayers))
	for k, name := range res.distLayers {
		d, err := layerDistancesKm(g, s.ScreeningLayer(name).Geoms, frame)
		if err != nil {
			return nil, fmt.Errorf("screening: layer %s: %w", name, err)
		}
		dist[k] = d
	}
	// polygon membership, once per polygon layer used
	inside := map[string][]bool{}
	for _, c := range scen {
		for _, name := range append(append([]string{}, c.Exclude...), c.Within...) {
			if inside[name] != nil {
				continue
			}
			in, err := layerCovers(g, s.ScreeningLayer(name).Geoms, frame)
			if err != nil {
				return nil, fmt.Errorf("screening: layer %s: %w", name, err)
			}
			inside[name] = in
		}
	}
	crits := make([][]runspec.Criterion, len(scen))
	for k, c := range scen {
		for _, t := range c.Criteria {
			cr, _ := runspec.ParseCriterion(t) // checked by validateScreening
			col := r.Cells.Col(cr.Column)
			if col == nil {
				return nil, fault.Input(fmt.Errorf("screening: scenario %s: criterion %q: %q is not a column of %s; see the README's column list (cells.parquet)", c.Name, t, cr.Column, filepath.Join(r.Dir, "cells.parquet")))
			}
			if !col.Numeric() {
				return nil, fault.Input(fmt.Errorf("screening: scenario %s: criterion %q: column %q is not numeric", c.Name, t, cr.Column))
			}
			crits[k] = append(crits[k], cr)
		}
		if c.Device != "" && r.Cells.Col(contract.AEPColumn(c.Device)) == nil {
			return nil, fault.Input(fmt.Errorf("screening: scenario %s: device %q: the run has no column aep_%s_mwh; name a [[device]] of the run", c.Name, c.Device, c.Device))
		}
	}
	conn, err := connections(r, s, g)
	if err != nil {
		return nil, err
	}
	power := r.Cells.Col(contract.ColPowerMean)
	passes := make([][]bool, len(scen))
	for k := range passes {
		passes[k] = make([]bool, n)
	}
	for i := 0; i < n; i++ {
		for k, c := range scen {
			row := &screenRow{id: i, scenario: c.Name, areaKm2: areaKm2[i], dist: make([]float64, len(res.distLayers))}
			for l := range res.distLayers {
				row.dist[l] = dist[l][i]
			}
			if r.Land[i] {
				row.reasons = append(row.reasons, "masked")
			}
			for _, cr := range crits[k] {
				v := r.Cells.Col(cr.Column).Value(i)
				if !cr.Holds(v) {
					if math.IsNaN(v) {
						row.reasons = append(row.reasons, cr.Text+" (missing)")
					} else {
						row.reasons = append(row.reasons, cr.Text)
					}
				}
			}
			for _, name := range c.Exclude {
				if inside[name][i] {
					row.reasons = append(row.reasons, "in "+name)
				}
			}
			for _, name := range c.Within {
				if !inside[name][i] {
					row.reasons = append(row.reasons, "outside "+name)
				}
			}
			for _, d := range c.Distance {
				v := dist[distIdx[d.Layer]][i]
				switch {
				case math.IsNaN(v):
					row.reasons = append(row.reasons, d.Layer+" distance unknown")
				case d.MinKm > 0 && v < d.MinKm:
					row.reasons = append(row.reasons, fmt.Sprintf("%s distance < %g km", d.Layer, d.MinKm))
				case d.MaxKm > 0 && v > d.MaxKm:
					row.reasons = append(row.reasons, fmt.Sprintf("%s distance > %g km", d.Layer, d.MaxKm))
				}
			}
			row.del = deliveredAt(r, c, i, areaKm2[i], conn[c.Connection])
			row.pass = len(row.reasons) == 0
			passes[k][i] = row.pass
			res.rows = append(res.rows, row)
		}
	}
	corners, structured := grid.CellCorners(g)
	for k, c := range scen {
		ss := summarise(c, passes[k], areaKm2, areas != nil, power, r.Cells.Col(contract.AEPColumn(c.Device)))
		summariseDelivered(&ss, c, res.rows, k, len(scen), areas != nil)
		switch {
		case structured:
			res.polys[c.Name] = grid.Dissolve(corners, passes[k], g.Kind == grid.Regular)
		case r.Mesh != nil:
			res.polys[c.Name] = grid.DissolveRings(outlines, passes[k])
		}
		if _, ok := res.polys[c.Name]; ok {
			ss.Polygons = filepath.ToSlash(filepath.Join(contract.ContourDir, contract.ScreeningOutlineFile(c.Name)))
		}
		sum.Scenarios = append(sum.Scenarios, ss)
	}
	rankLCOE(sum.Scenarios)
	if res.lcoe, err = lcoeBandsOf(g, r.Land, res.rows, sum.Scenarios); err != nil {
		return nil, err
	}
	res.summary = sum
	return res, nil
}

func fptr(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// summarise is a scenario's summary over its passing cells: area
// A = sum a_i (km2); area-weighted mean power sum(a_i J_i) / sum(a_i) over
// cells with a power (a point set, without areas: the plain mean); the
// layout's devices rho sum a_i and annual energy rho sum(a_i AEP_i) / 1000
// (GWh/yr; no array interaction, availability or transmission losses).
func summarise(c runspec.ScenarioSpec, pass []bool, areaKm2 []float64, hasArea bool, power, aep *rundir.Column) contract.ScenarioSummary {
	s := contract.ScenarioSummary{Name: c.Name, Exclude: c.Exclude, Within: c.Within, Distance: c.Distance, Device: c.Device, DevicesPerKm2: c.Density()}
	for _, t := range c.Criteria {
		cr, _ := runspec.ParseCriterion(t)
		s.Criteria = append(s.Criteria, cr.Text)
	}
	if s.Criteria == nil {
		s.Criteria = []string{}
	}
	area, wsum, wpow := 0.0, 0.0, 0.0
	lo, hi := math.Inf(1), math.Inf(-1)
	energy := 0.0
	for i, p := range pass {
		if !p {
			continue
		}
		s.Cells++
		w := 1.0
		if hasArea {
			w = areaKm2[i]
			area += w
		}
		if power != nil {
			if v := power.Value(i); !math.IsNaN(v) {
				wsum += w
				wpow += w * v
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		if c.Device != "" && hasArea {
			if v := aep.Value(i); !math.IsNaN(v) {
				energy += areaKm2[i] * c.Density() * v
			} else {
				s.CellsWithoutAEP++
			}
		}
	}
	if hasArea {
		s.AreaKm2 = fptr(area)
	}
	if wsum > 0 {
		m := wpow / wsum
		s.PowerMeanKWm, s.PowerMinKWm, s.PowerMaxKWm = fptr(m), fptr(lo), fptr(hi)
		s.ResourceMWhPerMYr = fptr(m * 8766 / 1000)
	}
	if c.Device != "" && hasArea {
		s.Devices = fptr(area * c.Density())
		s.AnnualEnergyGWh = fptr(energy / 1000)
	}
	return s
}

// Specs is screening.parquet's schema with the distance columns of
// this run expanded (layers: the distance layers), for the manifest.
func Specs(layers []string) []tables.ColumnSpec {
	var out []tables.ColumnSpec
	for k := range screeningSchema {
		c := screeningSchema[k].ColumnSpec
		c.File, c.Type = "screening.parquet", screeningSchema[k].ValueType()
		if c.Param == ParamLayer {
			for _, l := range layers {
				e := c
				e.Param = tables.NoParam
				e.Name = strings.ReplaceAll(c.Name, "<layer>", l)
				e.Doc = strings.ReplaceAll(c.Doc, "<layer>", l)
				out = append(out, e)
			}
			continue
		}
		out = append(out, c)
	}
	return out
}

// table builds screening.parquet.
func (res *screenResult) table() *export.Table {
	var cols []export.Column
	for k := range screeningSchema {
		c := &screeningSchema[k]
		if c.Param == ParamLayer {
			for l, name := range res.distLayers {
				for _, r := range res.rows {
					r.k = l
				}
				cols = append(cols, tables.Fill(c, strings.ReplaceAll(c.Name, "<layer>", name), strings.ReplaceAll(c.Doc, "<layer>", name), res.rows, nil))
			}
			continue
		}
		cols = append(cols, tables.Fill(c, c.Name, c.Doc, res.rows, nil))
	}
	return &export.Table{Columns: cols, Meta: map[string]string{export.MetaCaution: tables.Caution}}
}

// writeScreening writes screening.parquet, the scenario outlines and
// screening.json into the run directory dir; it returns the files written.
func writeScreening(dir string, res *screenResult) ([]string, error) {
	if err := export.WriteParquet(filepath.Join(dir, "screening.parquet"), res.table()); err != nil {
		return nil, fmt.Errorf("writing screening.parquet: %w", err)
	}
	files := []string{"screening.parquet"}
	// outlines of scenarios no longer screened are stale: remove them
	old, _ := filepath.Glob(filepath.Join(dir, export.ContourDir, "screening_*.geojson"))
	for _, o := range old {
		name := strings.TrimSuffix(strings.TrimPrefix(filepath.Base(o), "screening_"), ".geojson")
		if _, ok := res.polys[name]; !ok {
			os.Remove(o)
		}
	}
	for _, s := range res.summary.Scenarios {
		mp, ok := res.polys[s.Name]
		if !ok {
			continue
		}
		props := map[string]any{"scenario": s.Name, "criteria": strings.Join(s.Criteria, "; "), "cells": s.Cells, "area_km2": ptrOrNil(s.AreaKm2)}
		if err := export.WriteScreeningOutline(dir, s.Name, mp, props); err != nil {
			return nil, err
		}
		files = append(files, s.Polygons)
	}
	lf, err := writeLCOEBands(dir, res.lcoe)
	if err != nil {
		return nil, err
	}
	files = append(files, lf...)
	if err := export.WriteManifest(filepath.Join(dir, File), res.summary); err != nil {
		return nil, err
	}
	return append(files, File), nil
}

func ptrOrNil(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// Rescreen screens the finished run in dir again with the [screening]
// section of the spec at specPath, without recomputing anything: it
// rewrites screening.parquet, screening.json and the scenario outlines,
// records the screening in the manifest, and rebuilds the report,
// atlas.gpkg and atlas.nc (the levelised-cost layers) where the run has
// them. It returns the files written.
func Rescreen(dir, specPath string) ([]string, []string, error) {
	mpath := filepath.Join(dir, "manifest.json")
	raw, err := rundir.ReadManifest(dir) // proved against its seal
	if err != nil {
		return nil, nil, fault.Input(fmt.Errorf("screen: %w", err))
	}
	spec, err := runspec.LoadScreeningSpec(specPath)
	if err != nil {
		return nil, nil, err
	}
	unlock, err := lock.Dir(dir)
	if err != nil {
		return nil, nil, err
	}
	defer unlock()
	if err := export.CheckOutputs(dir, []string{export.ContourDir, contract.ReportDir}, []string{contract.ManifestFile, contract.ManifestSeal, contract.AtlasGPKGFile, contract.AtlasNCFile, File, "screening.parquet"}); err != nil {
		return nil, nil, fault.Input(err)
	}
	r, err := rundir.Open(dir, raw)
	if err != nil {
		return nil, nil, fault.Input(err)
	}
	// every sealed file proves itself before screening, but for those
	// screen rewrites
	if err := r.VerifyAllBut(func(rel string) bool {
		return rel == File || rel == "screening.parquet" || rel == contract.AtlasGPKGFile ||
			strings.HasPrefix(rel, contract.ReportDir+"/") || strings.HasPrefix(rel, export.ContourDir+"/"+contract.ScreeningOutlinePrefix)
	}); err != nil {
		return nil, nil, fault.Input(err)
	}
	res, err := screenRun(r, spec)
	if err != nil {
		return nil, nil, err
	}
	files, err := writeScreening(dir, res)
	if err != nil {
		return nil, nil, fault.Output(err)
	}
	// The manifest is edited key by key (order and every other value kept
	// as the run wrote them).
	var outputs []string
	var top struct {
		Outputs []string `json:"outputs"`
	}
	if err := json.Unmarshal(raw, &top); err != nil {
		return nil, nil, fault.Input(fmt.Errorf("screen: %s: %w", mpath, err))
	}
	for _, o := range top.Outputs {
		if o != "manifest.json" && !(strings.HasPrefix(o, export.ContourDir+"/screening_") || strings.HasPrefix(o, export.ContourDir+"/"+contract.LCOEPrefix) || o == "screening.parquet" || o == File) {
			outputs = append(outputs, o)
		}
	}
	outputs = append(append(outputs, files...), "manifest.json")
	m := raw
	edits := []struct {
		path []string
		v    any
	}{
		{[]string{"parameters", "screening"}, spec.Screening},
		{[]string{"columns", "screening.parquet"}, Specs(spec.Screening.DistanceLayers())},
		{[]string{"outputs"}, outputs},
		{[]string{"screening"}, res.summary},
	}
	if r.Manifest.OutputChecksums != nil { // a sealed run stays sealed (rundir.Open verifies)
		sums, err := export.OutputChecksums(dir, outputs)
		if err != nil {
			return nil, nil, fault.Output(err)
		}
		edits = append(edits, struct {
			path []string
			v    any
		}{[]string{contract.ManifestChecksumsKey}, sums})
	}
	for _, e := range edits {
		if m, err = export.SetJSONMember(m, e.path, e.v); err != nil {
			return nil, nil, fault.Input(fmt.Errorf("screen: %s: %w", mpath, err))
		}
	}
	_, hasReport := os.Stat(filepath.Join(dir, "report", "index.html"))
	_, hasGpkg := os.Stat(filepath.Join(dir, "atlas.gpkg"))
	_, hasNC := os.Stat(filepath.Join(dir, contract.AtlasNCFile)) // its levelised-cost variables
	if err := export.WriteRunManifest(dir, json.RawMessage(m)); err != nil {
		return nil, nil, fault.Output(err)
	}
	pf, warns, err := products.Build(dir, nil, products.Products{Report: hasReport == nil, GeoPackage: hasGpkg == nil, NetCDF: hasNC == nil})
	if err != nil {
		return nil, nil, fault.Output(err)
	}
	if err := export.Reseal(dir); err != nil { // the rebuilt report and atlas.gpkg
		return nil, nil, fault.Output(err)
	}
	return append(files, pf...), warns, nil
}

// Schema is the columns of screening.parquet, patterns unexpanded.
func Schema() []tables.ColumnSpec { return tables.SpecsOf("screening.parquet", screeningSchema) }

// Apply screens the finished run r with the scenarios of spec s and writes
// screening.parquet, screening.json and the passing areas' outlines into
// r.Dir. It returns the files written (relative to r.Dir) and the summary
// for the manifest.
func Apply(r *rundir.Run, s *runspec.Resolved) ([]string, *contract.ScreeningSummary, error) {
	res, err := screenRun(r, s)
	if err != nil {
		return nil, nil, err
	}
	files, err := writeScreening(r.Dir, res)
	if err != nil {
		return nil, nil, err
	}
	return files, res.summary, nil
}

// cellAreasM2 is every cell's area on WGS 84 in m^2, in cell-id order: a
// structured grid's from its cell edges (grid.CellAreasM2), a mesh's from
// its cells' outlines (rundir.Mesh.CellOutlines: faces or median dual cells;
// RingAreaM2, NaN for a node without one); nil for a point set.
func cellAreasM2(g *grid.Grid, outlines []orb.Ring) []float64 {
	if outlines == nil {
		return grid.CellAreasM2(g)
	}
	out := make([]float64, len(outlines))
	for c, ring := range outlines {
		out[c] = math.NaN()
		if ring != nil {
			out[c] = math.Abs(grid.RingAreaM2(ring))
		}
	}
	return out
}

// layerDistancesKm is the geodesic distance in km from every cell centre of
// g to the layer's features (grid.Target.DistanceM; NaN where none can be
// given), the layer placed in frame.
func layerDistancesKm(g *grid.Grid, geoms []orb.Geometry, frame grid.Frame) ([]float64, error) {
	t, err := grid.NewTarget(geoms, frame)
	if err != nil {
		return nil, err
	}
	n := g.NCells()
	dist := make([]float64, n)
	eachCell(n, func(i int) {
		d, ok := t.DistanceM(g.Lon[i], g.Lat[i])
		if !ok {
			d = math.NaN()
		}
		dist[i] = d / 1000
	})
	return dist, t.Err()
}

// layerCovers reports for every cell of g whether the layer's polygons
// cover its centre (grid.Coverage), the layer placed in frame.
func layerCovers(g *grid.Grid, geoms []orb.Geometry, frame grid.Frame) ([]bool, error) {
	cv, err := grid.NewCoverage(geoms, frame)
	if err != nil {
		return nil, err
	}
	n := g.NCells()
	in := make([]bool, n)
	eachCell(n, func(i int) {
		in[i] = !math.IsNaN(g.Lon[i]) && cv.Covers(g.Lon[i], g.Lat[i])
	})
	return in, cv.Err()
}

// eachCell calls f for every cell index 0..n-1 on GOMAXPROCS goroutines, in
// contiguous blocks (f writes only its own cell's slots, so results do not
// depend on the scheduling).
func eachCell(n int, f func(i int)) {
	w := min(runtime.GOMAXPROCS(0), max(1, n/256))
	var wg sync.WaitGroup
	for k := 0; k < w; k++ {
		lo, hi := k*n/w, (k+1)*n/w
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := lo; i < hi; i++ {
				f(i)
			}
		}()
	}
	wg.Wait()
}
