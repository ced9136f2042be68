package report

import (
	"math"

	"github.com/paulmach/orb"

	"swellgrid/export/rundir"
	"swellgrid/grid"
)

// meshField makes f a mesh's map when the run is on a UGRID mesh: with data
// on nodes, the mesh's triangles (faces split into fans from their first
// node), each filled with the mean of its three nodes' values (land when a
// node is land), and isolines by marching triangles; with data on faces,
// each face filled with its own value (no isolines: contours need values
// on nodes). Other runs are left as they are.
func meshField(r *rundir.Run, f *Field) {
	m := r.Mesh
	if m == nil {
		return
	}
	f.Points = false
	lon, lat := r.Lon(), r.Lat()
	if m.Location == "face" {
		for fi := 0; fi < m.NFaces(); fi++ {
			var poly []orb.Point
			for _, n := range m.Face(fi) {
				poly = append(poly, orb.Point{m.NodeLon[n], m.NodeLat[n]})
			}
			c := m.Cell[fi]
			f.Shapes = append(f.Shapes, poly)
			f.ShapeValue = append(f.ShapeValue, f.Value[c])
			f.ShapeLand = append(f.ShapeLand, f.Land[c])
		}
		return
	}
	var tri [][3]int32
	for fi := 0; fi < m.NFaces(); fi++ {
		nodes := m.Face(fi)
		for k := 1; k+1 < len(nodes); k++ {
			t := [3]int32{int32(m.Cell[nodes[0]]), int32(m.Cell[nodes[k]]), int32(m.Cell[nodes[k+1]])}
			tri = append(tri, t)
			sum, land := 0.0, false
			var poly []orb.Point
			for _, c := range t {
				sum += f.Value[c]
				land = land || f.Land[c]
				poly = append(poly, orb.Point{lon[c], lat[c]})
			}
			v := sum / 3
			if math.IsInf(v, 0) {
				v = math.NaN()
			}
			f.Shapes = append(f.Shapes, poly)
			f.ShapeValue = append(f.ShapeValue, v)
			f.ShapeLand = append(f.ShapeLand, land)
		}
	}
	f.Isolines = func(levels []float64) ([]orb.MultiLineString, error) {
		return grid.TriIsolines(&grid.TriField{Lon: lon, Lat: lat, Value: f.Value, Mask: f.Land, Tri: tri}, levels)
	}
}
