package engine

import (
	"math"

	"swellgrid/export/rundir"
)

// siteCells are the cells whose rows the long tables keep under
// output.long_tables_cells = "sites": for each [[site]], the unmasked cell
// nearest to it by great-circle distance (rundir.Haversine, first in cell
// order on a tie), which is the cell the report gives the site's page
// (rundir.Run.NearestSeaCell) unless that cell has no data at all. nil
// (every cell) with the default "all".
func (e *engine) siteCells() map[int]bool {
	if !e.spec.Output.SitesOnlyLongRows() {
		return nil
	}
	g := e.cat.Grid
	keep := map[int]bool{}
	for _, s := range e.spec.Sites {
		best, bd := -1, math.Inf(1)
		for i := range g.Lon {
			if e.cat.Masked[i] || math.IsNaN(g.Lon[i]) || math.IsNaN(g.Lat[i]) {
				continue
			}
			if d := rundir.Haversine(s.Lon, s.Lat, g.Lon[i], g.Lat[i]); d < bd {
				best, bd = i, d
			}
		}
		if best >= 0 {
			keep[best] = true
		}
	}
	return keep
}

// longRowCells are the results of res whose cells have rows in the long
// tables (all of them when keep is nil; see siteCells), in res's order.
func longRowCells(res []*cellResult, keep map[int]bool) []*cellResult {
	if keep == nil {
		return res
	}
	var out []*cellResult
	for _, r := range res {
		if keep[r.id] {
			out = append(out, r)
		}
	}
	return out
}
