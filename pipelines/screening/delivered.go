package screening

// Energy delivered ashore per cell and scenario (issue 32): the open-water
// AEP of the scenario's device times the array factor, the availability
// from repair access (cells.parquet) and one minus the export loss over
// the route to the nearest connection feature; the layout's levelised
// cost. The formulas are stats/delivery's.

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"

	"github.com/paulmach/orb"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats/delivery"
)

// delivered is one cell's delivered energy under one scenario.
type delivered struct {
	aep, array, avail, routeKm, loss, energy, cf, lcoe float64
	// layout sums for the scenario's summary (area x density devices)
	mw, capex, opex, layoutMWh float64
}

func noDelivery() delivered {
	n := math.NaN()
	return delivered{n, n, n, n, n, n, n, n, n, n, n, n}
}

// connections measures, once per connection layer, the geodesic distance
// (km) from every cell centre to the nearest feature.
func connections(r *rundir.Run, s *runspec.Resolved, g *grid.Grid) (map[string][]float64, error) {
	out := map[string][]float64{}
	for _, c := range s.Screening.Scenarios {
		if c.Connection == "" || out[c.Connection] != nil {
			continue
		}
		if c.Device != "" && r.Cells.Col(contract.AvailabilityColumn(c.Device)) == nil {
			return nil, fault.Input(fmt.Errorf("screening: scenario %s: delivered energy needs the availability of device %q, and %s has no column %s: give the [[device]] failures_per_year, repair_h and access_hm0_m",
				c.Name, c.Device, filepath.Join(r.Dir, "cells.parquet"), contract.AvailabilityColumn(c.Device)))
		}
		d, err := layerDistancesKm(g, s.ScreeningLayer(c.Connection).Geoms, g.Frame())
		if err != nil {
			return nil, fmt.Errorf("screening: connection layer %s: %w", c.Connection, err)
		}
		out[c.Connection] = d
	}
	return out, nil
}

// deliveredAt computes cell i's delivered energy under scenario c (dist:
// the distances to c's connection layer, nil without one).
func deliveredAt(r *rundir.Run, c runspec.ScenarioSpec, i int, areaKm2 float64, dist []float64) delivered {
	d := noDelivery()
	if c.Device == "" || dist == nil {
		return d
	}
	d.aep = r.Cells.Col(contract.AEPColumn(c.Device)).Value(i)
	d.array = c.Array()
	d.avail = r.Cells.Col(contract.AvailabilityColumn(c.Device)).Value(i)
	d.routeKm = delivery.RouteKm(dist[i], c.Route())
	d.loss = c.Losses().Loss(d.routeKm)
	if math.IsNaN(d.routeKm) {
		d.loss = math.NaN()
	}
	d.energy = delivery.Delivered(d.aep, d.array, d.avail, d.loss)
	cf := r.Cells.Col(contract.CapacityFactorColumn(c.Device)).Value(i)
	d.cf = delivery.Delivered(cf, d.array, d.avail, d.loss)
	// rated power from the open-water AEP and capacity factor (AEP = CF x
	// rated x 8766 h)
	ratedMW := d.aep / (cf * delivery.HoursPerYear)
	if c.HasCost() && areaKm2 > 0 && cf > 0 {
		n := areaKm2 * c.Density()
		d.mw = n * ratedMW
		d.capex = c.CapexPerMW*d.mw + c.CablePerKm*d.routeKm
		d.opex = c.OpexPerMWYr * d.mw
		d.layoutMWh = n * d.energy
		d.lcoe = delivery.LCOE(d.capex, d.opex, d.layoutMWh, c.DiscountRate, c.LifetimeY)
	}
	return d
}

// summariseDelivered adds scenario k's delivered energy and levelised cost
// over its passing cells (rows: every cell's row of every scenario, nsc
// scenarios per cell) to its summary.
func summariseDelivered(s *contract.ScenarioSummary, c runspec.ScenarioSpec, rows []*screenRow, k, nsc int, hasArea bool) {
	if c.Device == "" || c.Connection == "" {
		return
	}
	m := c.Losses()
	s.ArrayFactor, s.Connection, s.RouteFactor, s.LossFixed, s.LossPerKm = c.Array(), c.Connection, c.Route(), m.Fixed, m.PerKm
	s.LossCrossoverKm = fptr(delivery.LossCrossoverKm(delivery.DefaultAC, delivery.DefaultDC))
	if !hasArea {
		return
	}
	var e, capex, opex, mwh float64
	costOK := c.HasCost()
	for j := k; j < len(rows); j += nsc {
		r := rows[j]
		if !r.pass {
			continue
		}
		if v := r.areaKm2 * c.Density() * r.del.energy; !math.IsNaN(v) {
			e += v
		}
		if costOK && !math.IsNaN(r.del.lcoe) { // cells without a delivered energy add nothing, as to the energy
			capex += r.del.capex
			opex += r.del.opex
			mwh += r.del.layoutMWh
		}
	}
	s.DeliveredEnergyGWh = fptr(e / 1000)
	if costOK && mwh > 0 {
		s.LCOE = fptr(delivery.LCOE(capex, opex, mwh, c.DiscountRate, c.LifetimeY))
	}
}

// rankLCOE ranks the scenarios with a levelised cost, cheapest first (ties
// in spec order).
func rankLCOE(sc []contract.ScenarioSummary) {
	var idx []int
	for i := range sc {
		if sc[i].LCOE != nil {
			idx = append(idx, i)
		}
	}
	sort.SliceStable(idx, func(a, b int) bool { return *sc[idx[a]].LCOE < *sc[idx[b]].LCOE })
	for r, i := range idx {
		sc[i].LCOERank = r + 1
	}
}

// lcoeBands is the band layer of one scenario's per-cell levelised cost.
type lcoeBands struct {
	scenario string
	edges    []float64
	bands    []orb.MultiPolygon
}

// lcoeBandsOf contours the per-cell levelised cost of every scenario with
// one (rows: nsc rows per cell, scenarios in summary order) into bands
// between nice levels over its range on sea cells (grid.NiceLevels, open at
// both ends, as the contours of cells.parquet's columns), and sets each
// scenario's LCOEBands. Grids without contours (points, meshes) and
// scenarios with fewer than two distinct costs have none.
func lcoeBandsOf(g *grid.Grid, land []bool, rows []*screenRow, sc []contract.ScenarioSummary) ([]lcoeBands, error) {
	contour, _ := grid.Contourer(g, land)
	if contour == nil {
		return nil, nil
	}
	n, nsc := g.NCells(), len(sc)
	var out []lcoeBands
	for k := range sc {
		vals := make([]float64, n)
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range vals {
			vals[i] = rows[i*nsc+k].del.lcoe
			if v := vals[i]; !math.IsNaN(v) && !land[i] {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		if !(hi > lo) {
			continue
		}
		levels := grid.NiceLevels(lo, hi, 8)
		if len(levels) == 0 {
			continue
		}
		edges := append(append([]float64{math.Inf(-1)}, levels...), math.Inf(1))
		_, bands, err := contour(vals, nil, edges)
		if err != nil {
			return nil, fmt.Errorf("screening: scenario %s: bands of the levelised cost: %w", sc[k].Name, err)
		}
		out = append(out, lcoeBands{sc[k].Name, edges, bands})
		sc[k].LCOEBands = filepath.ToSlash(filepath.Join(contract.ContourDir, contract.ContourBandsFile(contract.LCOELayer(sc[k].Name))))
	}
	return out, nil
}

// writeLCOEBands writes the band layers of the levelised cost into dir's
// ContourDir (export.WriteContours: RFC 7946, cut at 180 degrees, with the
// caution) after removing those of an earlier screening; it returns the
// files written.
func writeLCOEBands(dir string, ls []lcoeBands) ([]string, error) {
	old, _ := filepath.Glob(filepath.Join(dir, contract.ContourDir, contract.LCOEPrefix+"*.geojson"))
	for _, o := range old {
		os.Remove(o)
	}
	var files []string
	for _, l := range ls {
		col := contract.LCOELayer(l.scenario)
		if err := export.WriteContours(dir, col, contract.LCOEUnit, nil, nil, l.edges, l.bands); err != nil {
			return nil, fmt.Errorf("screening: scenario %s: %w", l.scenario, err)
		}
		files = append(files, filepath.ToSlash(filepath.Join(contract.ContourDir, contract.ContourBandsFile(col))))
	}
	return files, nil
}

// layoutDensities returns the spec's scenarios with the density of every
// scenario spaced in device widths (spacing_along_widths,
// spacing_across_widths) resolved into its DevicesPerKm2
// (runspec.ScenarioSpec.DensityOf), the device's width_m taken from the
// spec's [[device]] or, for a spec of screening alone, from the run's
// manifest. The spec itself is left as given (the manifest records it).
func layoutDensities(r *rundir.Run, s *runspec.Resolved) ([]runspec.ScenarioSpec, error) {
	out := append([]runspec.ScenarioSpec(nil), s.Screening.Scenarios...)
	for k, c := range out {
		if !(c.SpacingAlongWidths > 0 && c.SpacingAcrossWidths > 0) {
			continue
		}
		w := 0.0
		for _, d := range s.Devices {
			if d.Name == c.Device {
				w = d.WidthM
			}
		}
		if w == 0 {
			for _, d := range r.Manifest.Parameters.Devices {
				if d.Name == c.Device {
					w = d.WidthM
				}
			}
		}
		rho := c.DensityOf(w)
		if !(rho > 0) || math.IsInf(rho, 0) {
			return nil, fault.Input(fmt.Errorf("screening: scenario %s: spacing in widths of device %s needs its width_m (m, > 0) in the [[device]] of the run (%s) or of the spec, got %v",
				c.Name, c.Device, filepath.Join(r.Dir, contract.ManifestFile), w))
		}
		out[k].DevicesPerKm2, out[k].SpacingAlongWidths, out[k].SpacingAcrossWidths = rho, 0, 0
	}
	return out, nil
}
