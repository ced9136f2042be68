package grid

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// shoelace is the planar area of a closed ring, positive anticlockwise.
func shoelace(r orb.Ring) float64 {
	s := 0.0
	for k := 0; k+1 < len(r); k++ {
		s += r[k][0]*r[k+1][1] - r[k+1][0]*r[k][1]
	}
	return s / 2
}

// The median dual cell of a node takes exactly a third of each triangle
// round it and a quarter of each parallelogram (the segments from a
// triangle's centroid to its edge midpoints split it into three
// quadrilaterals of equal area; a parallelogram's centre and edge midpoints
// split it into four equal parts: elementary geometry, common practice for
// the median dual). The dual cells tile the mesh: their areas sum to the
// mesh's, every one anticlockwise and simple. A face's outline is the face,
// anticlockwise even when the file lists it clockwise.
func TestMeshOutlines(t *testing.T) {
	// a 3 x 2 block of unit squares, the left column split into triangles
	// (one of them listed clockwise), the rest quads, slightly sheared
	// into parallelograms
	nx, ny := 4, 3
	var lon, lat []float64
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			lon = append(lon, float64(i)+0.3*float64(j))
			lat = append(lat, float64(j))
		}
	}
	id := func(i, j int) int { return j*nx + i }
	var off, nodes []int
	add := func(f ...int) {
		off = append(off, len(nodes))
		nodes = append(nodes, f...)
	}
	for j := 0; j < ny-1; j++ {
		add(id(0, j), id(1, j), id(1, j+1))
		if j == 0 {
			add(id(0, j), id(0, j+1), id(1, j+1)) // clockwise
		} else {
			add(id(0, j), id(1, j+1), id(0, j+1))
		}
		for i := 1; i < nx-1; i++ {
			add(id(i, j), id(i+1, j), id(i+1, j+1), id(i, j+1))
		}
	}
	off = append(off, len(nodes))
	share := make([]float64, len(lon))
	total := 0.0
	for f := 0; f+1 < len(off); f++ {
		r := orb.Ring{}
		for _, a := range nodes[off[f]:off[f+1]] {
			r = append(r, orb.Point{lon[a], lat[a]})
		}
		r = append(r, r[0])
		a := math.Abs(shoelace(r))
		total += a
		k := float64(off[f+1] - off[f])
		for _, n := range nodes[off[f]:off[f+1]] {
			share[n] += a / k
		}
	}
	duals := MeshOutlines(OnNodes, lon, lat, off, nodes)
	sum := 0.0
	for n, r := range duals {
		if r == nil {
			t.Fatalf("node %d has no dual cell", n)
		}
		a := shoelace(r)
		if a <= 0 {
			t.Errorf("node %d: dual cell not anticlockwise (area %g)", n, a)
		}
		if math.Abs(a-share[n]) > 1e-12 {
			t.Errorf("node %d: dual area %.15g, want %.15g", n, a, share[n])
		}
		if !r.Closed() {
			t.Errorf("node %d: ring not closed", n)
		}
		sum += a
	}
	if math.Abs(sum-total) > 1e-12 {
		t.Errorf("dual cells cover %.15g, the mesh %.15g", sum, total)
	}
	faces := MeshOutlines(OnFaces, lon, lat, off, nodes)
	for f, r := range faces {
		if a := shoelace(r); a <= 0 || math.Abs(a-math.Abs(planar.Area(r))) > 1e-12 {
			t.Errorf("face %d: area %g, not anticlockwise", f, a)
		}
	}
	// a node shared by two fans (two triangles touching at one corner) has none
	bow := MeshOutlines(OnNodes, []float64{0, 1, 1, 2, 2}, []float64{0, 0, 1, 0, 1}, []int{0, 3, 6}, []int{0, 1, 2, 1, 3, 4})
	if bow[1] != nil {
		t.Errorf("non-manifold node 1 got a dual cell %v", bow[1])
	}
}

// DissolveRings on the dual cells of TestMeshOutlines' mesh: all of them give
// one shell of the mesh's area; all but an interior node give that shell
// with the node's dual cell as a hole (clockwise); two faces meeting at one
// corner give two shells. Areas by the shoelace formula, validity by the
// right-hand rule (RFC 7946 3.1.6).
func TestDissolveRings(t *testing.T) {
	lon := []float64{0, 1, 2, 3, 0, 1, 2, 3, 0, 1, 2, 3}
	lat := []float64{0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2}
	id := func(i, j int) int { return j*4 + i }
	var off, nodes []int
	for j := 0; j < 2; j++ {
		for i := 0; i < 3; i++ {
			off = append(off, len(nodes))
			nodes = append(nodes, id(i, j), id(i+1, j), id(i+1, j+1), id(i, j+1))
		}
	}
	off = append(off, len(nodes))
	duals := MeshOutlines(OnNodes, lon, lat, off, nodes)
	all := make([]bool, len(duals))
	for i := range all {
		all[i] = true
	}
	mp := DissolveRings(duals, all)
	if len(mp) != 1 || len(mp[0]) != 1 || math.Abs(shoelace(mp[0][0])-6) > 1e-12 {
		t.Fatalf("all nodes: %d polygons, area %v; want one of 6", len(mp), mp)
	}
	hole := append([]bool(nil), all...)
	hole[id(1, 1)] = false
	mp = DissolveRings(duals, hole)
	if len(mp) != 1 || len(mp[0]) != 2 {
		t.Fatalf("all but node (1,1): %d polygons, %d rings; want a shell with a hole", len(mp), len(mp[0]))
	}
	if a, h := shoelace(mp[0][0]), shoelace(mp[0][1]); math.Abs(a-6) > 1e-12 || math.Abs(h+1) > 1e-12 {
		t.Errorf("shell %v (want 6), hole %v (want -1, clockwise)", a, h)
	}
	faces := MeshOutlines(OnFaces, lon, lat, off, nodes)
	corner := []bool{true, false, false, false, true, false} // faces (0,0) and (1,1) meet at node (1,1)
	mp = DissolveRings(faces, corner)
	if len(mp) != 2 || math.Abs(shoelace(mp[0][0])-1) > 1e-12 || math.Abs(shoelace(mp[1][0])-1) > 1e-12 {
		t.Errorf("two faces at a corner: %v; want two unit shells", mp)
	}
}
