package grid

// Unstructured 2-D meshes (UGRID 1.0): nodes, faces given by their nodes,
// and the cells of a hindcast on them (its nodes or its faces).

import (
	"fmt"
	"math"
	"sort"
)

// Mesh locations of the cells (UGRID 1.0 "location" attribute).
const (
	OnNodes = "node"
	OnFaces = "face"
)

// Mesh is the topology of a 2-D unstructured mesh in the file's order.
// Face f has the nodes FaceNode[FaceOff[f]:FaceOff[f+1]] (node indices
// counted from 0, in the order the file lists them), at least 3 of them.
type Mesh struct {
	// Location says which elements carry the data and so are the grid's
	// cells: OnNodes or OnFaces.
	Location         string
	NodeLon, NodeLat []float64 // per node, degrees; NodeLon normalised to [-180, 180)
	FaceOff          []int32   // len = faces + 1
	FaceNode         []int32
}

// NFaces is the number of faces.
func (m *Mesh) NFaces() int { return len(m.FaceOff) - 1 }

// NNodes is the number of nodes.
func (m *Mesh) NNodes() int { return len(m.NodeLon) }

// Face returns the nodes of face f.
func (m *Mesh) Face(f int) []int32 { return m.FaceNode[m.FaceOff[f]:m.FaceOff[f+1]] }

// NewMesh builds the grid of a mesh whose cells are its nodes (Location
// OnNodes) or its faces (OnFaces). faceLon/faceLat are the face positions
// when the file gives them (UGRID face_coordinates); nil means the mean of
// each face's node positions. The mesh is checked strictly: finite node
// positions, faces of at least 3 distinct nodes that exist, faces of
// non-zero area.
//
// The canonical cell order of a mesh is the Hilbert-curve order of the
// cells' positions (HilbertOrder), so that a contiguous range of cell ids
// (a pass or a shard) is a spatially compact set of nodes or faces. XFile
// gives the file index (node or face) of each canonical cell.
func NewMesh(m *Mesh, faceLon, faceLat []float64) (*Grid, error) {
	nn, nf := m.NNodes(), m.NFaces()
	if nn == 0 || len(m.NodeLat) != nn {
		return nil, fmt.Errorf("grid: mesh with %d node longitudes and %d latitudes", nn, len(m.NodeLat))
	}
	if nf < 1 {
		return nil, fmt.Errorf("grid: mesh without faces")
	}
	for i := range m.NodeLon {
		lo, la := m.NodeLon[i], m.NodeLat[i]
		if math.IsNaN(lo) || math.IsInf(lo, 0) || !(la >= -90 && la <= 90) {
			return nil, fmt.Errorf("grid: mesh node %d has no valid position (%v, %v)", i, lo, la)
		}
		m.NodeLon[i] = NormLon(lo)
	}
	for f := 0; f < nf; f++ {
		nodes := m.Face(f)
		if len(nodes) < 3 {
			return nil, fmt.Errorf("grid: mesh face %d has %d nodes; a face needs at least 3", f, len(nodes))
		}
		for k, a := range nodes {
			if a < 0 || int(a) >= nn {
				return nil, fmt.Errorf("grid: mesh face %d: node %d is %d, outside 0..%d", f, k, a, nn-1)
			}
			for _, b := range nodes[:k] {
				if a == b {
					return nil, fmt.Errorf("grid: mesh face %d lists node %d twice", f, a)
				}
			}
		}
		area := 0.0
		for k := range nodes {
			a, b := nodes[k], nodes[(k+1)%len(nodes)]
			if math.Abs(m.NodeLon[a]-m.NodeLon[b]) > 180 {
				return nil, fmt.Errorf("grid: mesh face %d spans the antimeridian (lon %v to %v); meshes across ±180° are not supported", f, m.NodeLon[a], m.NodeLon[b])
			}
			area += m.NodeLon[a]*m.NodeLat[b] - m.NodeLon[b]*m.NodeLat[a]
		}
		if area == 0 {
			return nil, fmt.Errorf("grid: mesh face %d (nodes %v) has zero area", f, nodes)
		}
	}
	var lon, lat []float64
	switch m.Location {
	case OnNodes:
		lon, lat = m.NodeLon, m.NodeLat
	case OnFaces:
		if faceLon != nil {
			if len(faceLon) != nf || len(faceLat) != nf {
				return nil, fmt.Errorf("grid: %d faces but %d face longitudes and %d latitudes", nf, len(faceLon), len(faceLat))
			}
			lon, lat = make([]float64, nf), faceLat
			for f := range faceLon {
				if math.IsNaN(faceLon[f]) || math.IsInf(faceLon[f], 0) || !(faceLat[f] >= -90 && faceLat[f] <= 90) {
					return nil, fmt.Errorf("grid: mesh face %d has no valid position (%v, %v)", f, faceLon[f], faceLat[f])
				}
				lon[f] = NormLon(faceLon[f])
			}
		} else {
			lon, lat = make([]float64, nf), make([]float64, nf)
			for f := 0; f < nf; f++ {
				nodes := m.Face(f)
				for _, a := range nodes {
					lon[f] += m.NodeLon[a]
					lat[f] += m.NodeLat[a]
				}
				lon[f] /= float64(len(nodes))
				lat[f] /= float64(len(nodes))
			}
		}
	default:
		return nil, fmt.Errorf("grid: mesh data location %q; swellgrid reads data on nodes or faces", m.Location)
	}
	order := HilbertOrder(lon, lat)
	g := &Grid{Kind: MeshKind, NX: len(lon), NY: 1, XFile: order, YFile: []int{0}, Mesh: m}
	g.Lon, g.Lat = make([]float64, len(lon)), make([]float64, len(lon))
	for c, fi := range order {
		g.Lon[c], g.Lat[c] = lon[fi], lat[fi]
	}
	return g, nil
}

// hilbertBits is the resolution of the Hilbert curve used to order mesh
// cells: a 2^16 x 2^16 lattice over the mesh's bounding square.
const hilbertBits = 16

// HilbertIndex is the distance along the Hilbert curve of order 2^bits of
// the lattice point (x, y), 0 <= x, y < 2^bits. The curve is Hilbert's
// (D. Hilbert 1891, "Über die stetige Abbildung einer Linie auf ein
// Flächenstück", Math. Ann. 38); the conversion is the usual iterative one,
// one quadrant per bit from the top: d += s^2 ((3 rx) xor ry), then the
// quadrant is rotated (x, y) -> (y, x), reflected first when rx = 1 and
// ry = 0 (as in the "xy2d" routine of the Wikipedia article "Hilbert curve";
// quoted from memory).
func HilbertIndex(bits uint, x, y uint32) uint64 {
	n := uint32(1) << bits
	var d uint64
	for s := n / 2; s > 0; s /= 2 {
		var rx, ry uint32
		if x&s != 0 {
			rx = 1
		}
		if y&s != 0 {
			ry = 1
		}
		d += uint64(s) * uint64(s) * uint64((3*rx)^ry)
		if ry == 0 {
			if rx == 1 {
				x = n - 1 - x
				y = n - 1 - y
			}
			x, y = y, x
		}
	}
	return d
}

// HilbertOrder returns the indices of the points (lon, lat) sorted by their
// Hilbert index on a 2^16 lattice spanning the points' bounding square (one
// scale for both axes, so the curve's locality is kept), ties by index: a
// space-filling-curve order in which runs of consecutive points are
// spatially compact.
func HilbertOrder(lon, lat []float64) []int {
	n := len(lon)
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for i := range lon {
		minX, maxX = math.Min(minX, lon[i]), math.Max(maxX, lon[i])
		minY, maxY = math.Min(minY, lat[i]), math.Max(maxY, lat[i])
	}
	span := math.Max(maxX-minX, maxY-minY)
	top := float64(uint32(1)<<hilbertBits - 1)
	key := make([]uint64, n)
	for i := range lon {
		var x, y uint32
		if span > 0 {
			x = uint32(math.Round((lon[i] - minX) / span * top))
			y = uint32(math.Round((lat[i] - minY) / span * top))
		}
		key[i] = HilbertIndex(hilbertBits, x, y)
	}
	idx := identity(n)
	sort.SliceStable(idx, func(a, b int) bool { return key[idx[a]] < key[idx[b]] })
	return idx
}

// Triangles splits every face of the mesh into triangles (a fan from the
// face's first node: (n0, nk, nk+1); exact for convex faces, which UGRID
// meshes of quads and triangles have) and returns them as file node indices,
// with the face each came from.
func (m *Mesh) Triangles() (tri [][3]int32, face []int32) {
	for f := 0; f < m.NFaces(); f++ {
		nodes := m.Face(f)
		for k := 1; k+1 < len(nodes); k++ {
			tri = append(tri, [3]int32{nodes[0], nodes[k], nodes[k+1]})
			face = append(face, int32(f))
		}
	}
	return tri, face
}

// NodeField is the triangle field of per-cell values of a mesh whose cells
// are its nodes: vertices are the canonical cells, triangles those of the
// mesh's faces. mask (per cell, may be nil) leaves nodes out.
func (g *Grid) NodeField(values []float64, mask []bool) (*TriField, error) {
	if g.Mesh == nil || g.Mesh.Location != OnNodes {
		return nil, fmt.Errorf("grid: contours on a mesh need values on its nodes (this grid is %s)", g.describe())
	}
	inv := invertPerm(g.XFile)
	tri, _ := g.Mesh.Triangles()
	for t := range tri {
		for k := range tri[t] {
			tri[t][k] = int32(inv[tri[t][k]])
		}
	}
	return &TriField{Lon: g.Lon, Lat: g.Lat, Value: values, Mask: mask, Tri: tri}, nil
}

func (g *Grid) describe() string {
	if g.Mesh != nil {
		return "a mesh with data on its " + g.Mesh.Location + "s"
	}
	return "a " + g.Kind.String() + " grid"
}

func invertPerm(p []int) []int {
	q := make([]int, len(p))
	for i, v := range p {
		q[v] = i
	}
	return q
}

// sameMesh reports whether two meshes have the same location and faces.
func sameMesh(a, b *Mesh) (bool, string) {
	if (a == nil) != (b == nil) {
		return false, "one grid is a mesh, the other not"
	}
	if a == nil {
		return true, ""
	}
	if a.Location != b.Location {
		return false, fmt.Sprintf("data on %ss vs %ss", a.Location, b.Location)
	}
	if a.NNodes() != b.NNodes() || a.NFaces() != b.NFaces() || len(a.FaceNode) != len(b.FaceNode) {
		return false, fmt.Sprintf("mesh of %d nodes and %d faces vs %d and %d", a.NNodes(), a.NFaces(), b.NNodes(), b.NFaces())
	}
	for i := range a.FaceOff {
		if a.FaceOff[i] != b.FaceOff[i] {
			return false, fmt.Sprintf("face %d has a different number of nodes", i)
		}
	}
	for i := range a.FaceNode {
		if a.FaceNode[i] != b.FaceNode[i] {
			return false, "the face-node connectivity differs"
		}
	}
	for i := range a.NodeLon {
		if !near(a.NodeLon[i], b.NodeLon[i]) || !near(a.NodeLat[i], b.NodeLat[i]) {
			return false, fmt.Sprintf("node %d at (%g, %g) vs (%g, %g)", i, a.NodeLon[i], a.NodeLat[i], b.NodeLon[i], b.NodeLat[i])
		}
	}
	return true, ""
}
