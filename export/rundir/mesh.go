package rundir

import (
	"fmt"
	"path/filepath"

	"github.com/paulmach/orb"

	"swellgrid/export/contract"
	"swellgrid/grid"
)

// Mesh is the UGRID mesh of a run on one (from mesh_nodes.parquet and
// mesh_faces.parquet): nodes and faces in the input file's order.
type Mesh struct {
	Location         string // "node" or "face": what the cells are
	NodeLon, NodeLat []float64
	FaceOff          []int // face f has nodes FaceNode[FaceOff[f]:FaceOff[f+1]]
	FaceNode         []int
	// Cell is the cell id of each node (Location "node") or face ("face").
	Cell []int
}

// NFaces is the number of faces.
func (m *Mesh) NFaces() int { return len(m.FaceOff) - 1 }

// Face returns the nodes of face f.
func (m *Mesh) Face(f int) []int { return m.FaceNode[m.FaceOff[f]:m.FaceOff[f+1]] }

// readMesh reads the mesh tables of a run directory with cells cells.
func readMesh(dir string, cells int) (*Mesh, error) {
	nodes, err := ReadTable(filepath.Join(dir, contract.ParquetFile(contract.TableMeshNodes)))
	if err != nil {
		return nil, err
	}
	faces, err := ReadTable(filepath.Join(dir, contract.ParquetFile(contract.TableMeshFaces)))
	if err != nil {
		return nil, err
	}
	m := &Mesh{Location: nodes.Meta["swellgrid:mesh_location"]}
	bad := func(t *Table, why string, a ...any) error {
		return fmt.Errorf("rundir: %s: %s; the run directory is damaged, rerun it", t.Path, fmt.Sprintf(why, a...))
	}
	nid, lon, lat, ncell := nodes.Col("node"), nodes.Col(contract.ColLon), nodes.Col(contract.ColLat), nodes.Col(contract.ColCellID)
	fid, corner, fnode, fcell := faces.Col("face"), faces.Col("corner"), faces.Col("node"), faces.Col(contract.ColCellID)
	if nid == nil || lon == nil || lat == nil || ncell == nil || fid == nil || corner == nil || fnode == nil || fcell == nil {
		return nil, bad(nodes, "mesh tables without their columns")
	}
	m.NodeLon, m.NodeLat = lon.Float, lat.Float
	seen := 0
	for i := 0; i < nodes.Rows; i++ {
		if nid.Int[i] != int64(i) {
			return nil, bad(nodes, "row %d holds node %d", i, nid.Int[i])
		}
		if m.Location == "node" {
			if !ncell.Valid[i] || ncell.Int[i] < 0 || int(ncell.Int[i]) >= cells {
				return nil, bad(nodes, "node %d has no cell", i)
			}
			m.Cell = append(m.Cell, int(ncell.Int[i]))
			seen++
		}
	}
	m.FaceOff = []int{0}
	for i := 0; i < faces.Rows; i++ {
		f := int(fid.Int[i])
		if corner.Int[i] == 0 {
			if f > 0 {
				m.FaceOff = append(m.FaceOff, len(m.FaceNode))
			}
			if f != len(m.FaceOff)-1 {
				return nil, bad(faces, "row %d starts face %d out of order", i, f)
			}
			if m.Location == "face" {
				if !fcell.Valid[i] || fcell.Int[i] < 0 || int(fcell.Int[i]) >= cells {
					return nil, bad(faces, "face %d has no cell", f)
				}
				m.Cell = append(m.Cell, int(fcell.Int[i]))
				seen++
			}
		}
		if n := fnode.Int[i]; n < 0 || int(n) >= nodes.Rows {
			return nil, bad(faces, "face %d refers to node %d of %d", f, n, nodes.Rows)
		}
		m.FaceNode = append(m.FaceNode, int(fnode.Int[i]))
	}
	if faces.Rows > 0 {
		m.FaceOff = append(m.FaceOff, len(m.FaceNode))
	}
	if seen != cells || m.Location != "node" && m.Location != "face" {
		return nil, bad(nodes, "the mesh (data on %q) has %d cells, cells.parquet %d", m.Location, seen, cells)
	}
	return m, nil
}

// CellOutlines is the outline of each of the run's cells cells in cell-id
// order: its face, or its node's median dual cell (grid.MeshOutlines; nil
// for a node without one).
func (m *Mesh) CellOutlines(cells int) []orb.Ring {
	rings := grid.MeshOutlines(m.Location, m.NodeLon, m.NodeLat, m.FaceOff, m.FaceNode)
	out := make([]orb.Ring, cells)
	for e, c := range m.Cell {
		if e < len(rings) && c >= 0 && c < cells {
			out[c] = rings[e]
		}
	}
	return out
}
