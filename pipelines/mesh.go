package pipelines

import (
	"github.com/paulmach/orb"

	"swellgrid/grid"
)

// contourFunc computes the isolines at levels and the bands between edges
// of one per-cell column.
type contourFunc func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error)

// contourer chooses how the grid is contoured: marching squares on a
// structured grid, marching triangles on a mesh with values on its nodes.
// It returns nil and the reason when the grid has no contours.
func contourer(g *grid.Grid, masked []bool) (contourFunc, string) {
	switch {
	case g.Structured():
		return func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error) {
			f := &grid.Field{NX: g.NX, NY: g.NY, Lon: g.Lon, Lat: g.Lat, Value: vals, Mask: masked}
			lines, err := grid.Isolines(f, levels)
			if err != nil {
				return nil, nil, err
			}
			bands, err := grid.Bands(f, edges)
			return lines, bands, err
		}, ""
	case g.Kind == grid.MeshKind && g.Mesh.Location == grid.OnNodes:
		return func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error) {
			f, err := g.NodeField(vals, masked)
			if err != nil {
				return nil, nil, err
			}
			lines, err := grid.TriIsolines(f, levels)
			if err != nil {
				return nil, nil, err
			}
			bands, err := grid.TriBands(f, edges)
			return lines, bands, err
		}, ""
	case g.Kind == grid.MeshKind:
		return nil, "no contour layers: the data are on the mesh's faces (one value per face), and contours need values on nodes; use cells.parquet or atlas.gpkg as points"
	}
	return nil, "no contour layers: the grid is a point set, which has no cells to contour between; use cells.parquet as points"
}
