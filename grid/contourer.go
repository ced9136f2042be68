package grid

import (
	"fmt"

	"github.com/paulmach/orb"
)

// ContourFunc computes the isolines at levels and the bands between edges
// of one per-cell column, in the grid's continuous longitude frame
// (LonFrame; export cuts them at 180 degrees for GeoJSON).
type ContourFunc func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error)

// Contourer chooses how the grid is contoured: marching squares on a
// structured grid (in its continuous longitude frame, GeoField),
// marching triangles on a mesh with values on its nodes. It returns nil and
// the reason when the grid has no contours.
func Contourer(g *Grid, masked []bool) (ContourFunc, string) {
	switch {
	case g.Structured() && (g.NX < 2 || g.NY < 2):
		return nil, fmt.Sprintf("no contours: the grid is %d x %d cells, and isolines need at least 2 x 2", g.NY, g.NX)
	case g.Structured():
		return func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error) {
			f, _ := GeoField(g.NX, g.NY, g.Lon, g.Lat, vals, masked)
			lines, err := Isolines(f, levels)
			if err != nil {
				return nil, nil, err
			}
			bands, err := Bands(f, edges)
			return lines, bands, err
		}, ""
	case g.Kind == MeshKind && g.Mesh.Location == OnNodes:
		return func(vals, levels, edges []float64) ([]orb.MultiLineString, []orb.MultiPolygon, error) {
			f, err := g.NodeField(vals, masked)
			if err != nil {
				return nil, nil, err
			}
			lines, err := TriIsolines(f, levels)
			if err != nil {
				return nil, nil, err
			}
			bands, err := TriBands(f, edges)
			return lines, bands, err
		}, ""
	case g.Kind == MeshKind:
		return nil, "no contour layers: the data are on the mesh's faces (one value per face), and contours need values on nodes; use cells.parquet or atlas.gpkg as points"
	}
	return nil, "no contour layers: the grid is a point set, which has no cells to contour between; use cells.parquet as points"
}
