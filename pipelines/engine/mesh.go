package engine

import (
	"fmt"
	"path/filepath"

	"swellgrid/export"
	"swellgrid/grid"
)

// contourer chooses how the grid is contoured (grid.Contourer).
func contourer(g *grid.Grid, masked []bool) (grid.ContourFunc, string) {
	return grid.Contourer(g, masked)
}

// seamWarning says how many cells of a structured grid span the seam of its
// continuous longitude frame (a grid that wraps round the globe or a pole,
// which no frame makes continuous), which the contours leave out; "" when
// none does.
func seamWarning(g *grid.Grid, masked []bool) string {
	if !g.Structured() || g.NX < 2 || g.NY < 2 {
		return ""
	}
	ones := make([]float64, g.NCells())
	for i := range ones {
		ones[i] = 1
	}
	f, fr := grid.GeoField(g.NX, g.NY, g.Lon, g.Lat, ones, masked)
	if n := f.SeamCells(); n > 0 {
		return fmt.Sprintf("contours leave out %d cells that span more than 180 degrees of longitude in the grid's frame (%s): the grid wraps round the globe or a pole", n, fr)
	}
	return ""
}

// Mesh tables of a run on a UGRID mesh: the topology that atlas.nc and the
// report's maps need, written beside cells.parquet (file indices of the
// input mesh, counted from 0).
const (
	meshNodesFile = "mesh_nodes.parquet"
	meshFacesFile = "mesh_faces.parquet"
)

// writeMeshTables writes mesh_nodes.parquet (node, lon, lat, cell_id: the
// cell on the node when the data are on nodes, else null) and
// mesh_faces.parquet (face, corner, node, cell_id: the cell of the face when
// the data are on faces, else null), in the file's order.
func writeMeshTables(out string, g *grid.Grid) ([]string, error) {
	m := g.Mesh
	cellOf := make([]int64, len(g.XFile))
	for c, fi := range g.XFile {
		cellOf[fi] = int64(c)
	}
	nn, nf := m.NNodes(), m.NFaces()
	node := make([]int64, nn)
	nodeCell := make([]int64, nn)
	nodeValid := make([]bool, nn)
	for i := range node {
		node[i] = int64(i)
		if m.Location == grid.OnNodes {
			nodeCell[i], nodeValid[i] = cellOf[i], true
		}
	}
	nodes := &export.Table{Columns: []export.Column{
		{Name: "node", Unit: "1", Doc: "node index in the input mesh (from 0, the file's order)", Int64: node},
		{Name: "lon", Unit: "degree_east", Doc: "node longitude", StandardName: "longitude", Float64: m.NodeLon},
		{Name: "lat", Unit: "degree_north", Doc: "node latitude", StandardName: "latitude", Float64: m.NodeLat},
		{Name: "cell_id", Unit: "1", Doc: "cell on this node (data on nodes), else null", Int64: nodeCell, Valid: nodeValid},
	}}
	var face, corner, fnode, fcell []int64
	var fvalid []bool
	for f := 0; f < nf; f++ {
		for k, a := range m.Face(f) {
			face, corner, fnode = append(face, int64(f)), append(corner, int64(k)), append(fnode, int64(a))
			if m.Location == grid.OnFaces {
				fcell, fvalid = append(fcell, cellOf[f]), append(fvalid, true)
			} else {
				fcell, fvalid = append(fcell, 0), append(fvalid, false)
			}
		}
	}
	faces := &export.Table{Columns: []export.Column{
		{Name: "face", Unit: "1", Doc: "face index in the input mesh (from 0, the file's order)", Int64: face},
		{Name: "corner", Unit: "1", Doc: "position of the node in the face's node list", Int64: corner},
		{Name: "node", Unit: "1", Doc: "node index in the input mesh (from 0)", Int64: fnode},
		{Name: "cell_id", Unit: "1", Doc: "cell on this face (data on faces), else null", Int64: fcell, Valid: fvalid},
	}}
	meta := map[string]string{"swellgrid:mesh_location": m.Location}
	nodes.Meta, faces.Meta = meta, meta
	if err := export.WriteParquet(filepath.Join(out, meshNodesFile), nodes); err != nil {
		return nil, fmt.Errorf("writing %s: %w", meshNodesFile, err)
	}
	if err := export.WriteParquet(filepath.Join(out, meshFacesFile), faces); err != nil {
		return nil, fmt.Errorf("writing %s: %w", meshFacesFile, err)
	}
	return []string{meshNodesFile, meshFacesFile}, nil
}
