package synth

import (
	"math"

	"github.com/fhs/go-netcdf/netcdf"
)

// A Mesh scenario is an invented unstructured triangular mesh (UGRID 1.0):
// the NX x NY lattice of the box with every inner node moved by a
// deterministic jitter of up to a quarter of the spacing, each lattice quad
// cut into two triangles, and only sea nodes and all-sea triangles kept
// (land is where the mesh is not). Data are on the nodes.

// meshJitter is the deterministic offset of lattice node (ix, iy), as a
// fraction of the spacing in [-0.25, 0.25] (a fixed hash of the indices,
// so the mesh is the same on every machine).
func meshJitter(ix, iy, axis int) float64 {
	h := uint32(ix*73856093) ^ uint32(iy*19349663) ^ uint32(axis*83492791)
	h ^= h >> 13
	h *= 0x5bd1e995
	h ^= h >> 15
	return (float64(h%10001)/10000 - 0.5) / 2
}

// meshPerm is the file's node order: the sea sites, in site order.
func meshPerm(sites []site) []int {
	var perm []int
	for i, s := range sites {
		if s.sea {
			perm = append(perm, i)
		}
	}
	return perm
}

// meshTriangles are the all-sea triangles of the lattice as file node
// indices (counter-clockwise: the lattice runs west to east, south to north).
func (c *Scenario) meshTriangles(sites []site, perm []int) []int32 {
	g := c.Grid
	file := make([]int32, len(sites))
	for i := range file {
		file[i] = -1
	}
	for j, si := range perm {
		file[si] = int32(j)
	}
	var out []int32
	add := func(a, b, d int) {
		if file[a] >= 0 && file[b] >= 0 && file[d] >= 0 {
			out = append(out, file[a], file[b], file[d])
		}
	}
	for iy := 0; iy+1 < g.NY; iy++ {
		for ix := 0; ix+1 < g.NX; ix++ {
			k := iy*g.NX + ix
			if (ix+iy)%2 == 0 {
				add(k, k+1, k+g.NX+1)
				add(k, k+g.NX+1, k+g.NX)
			} else {
				add(k, k+1, k+g.NX)
				add(k+1, k+g.NX+1, k+g.NX)
			}
		}
	}
	return out
}

// defineMesh defines the UGRID topology and connectivity of a Mesh
// scenario's bulk file on the node dimension nd; the connectivity is
// written by the returned function after the definitions end.
func (c *Scenario) defineMesh(d *defs, nd netcdf.Dim, sites []site, perm []int) func() error {
	tri := c.meshTriangles(sites, perm)
	fd := d.dim("face", len(tri)/3)
	three := d.dim("max_face_nodes", 3)
	mv := d.v("mesh", netcdf.INT)
	d.text(mv.Attr("cf_role"), "mesh_topology")
	d.text(mv.Attr("long_name"), "topology of the invented 2-D triangular mesh (synthetic)")
	if d.err == nil {
		d.err = mv.Attr("topology_dimension").WriteInt32s([]int32{2})
	}
	d.text(mv.Attr("node_coordinates"), "lon lat")
	d.text(mv.Attr("face_node_connectivity"), "face_nodes")
	cv := d.v("face_nodes", netcdf.INT, fd, three)
	d.text(cv.Attr("cf_role"), "face_node_connectivity")
	if d.err == nil {
		d.err = cv.Attr("start_index").WriteInt32s([]int32{0})
	}
	_ = nd
	return func() error { return cv.WriteInt32s(tri) }
}

// jitterSite moves a lattice site of a Mesh scenario (inner nodes only).
func (g Grid) jitterSite(ix, iy int, lon, lat float64) (float64, float64) {
	if g.Kind != Mesh || ix == 0 || iy == 0 || ix == g.NX-1 || iy == g.NY-1 {
		return lon, lat
	}
	dx := (g.LonMax - g.LonMin) / math.Max(1, float64(g.NX-1))
	dy := (g.LatMax - g.LatMin) / math.Max(1, float64(g.NY-1))
	return lon + meshJitter(ix, iy, 0)*dx, lat + meshJitter(ix, iy, 1)*dy
}
