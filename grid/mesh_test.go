package grid

import (
	"math"
	"strings"
	"testing"
)

// TestHilbertIndex: the order-1 curve visits (0,0), (0,1), (1,1), (1,0)
// (Hilbert 1891, Fig. 1 orientation as in the Wikipedia article "Hilbert
// curve"; quoted from memory), and on the order-16 lattice (4 bits)
// consecutive indices are edge-adjacent cells, the defining property of the
// curve (same sources), visiting every cell once.
func TestHilbertIndex(t *testing.T) {
	for d, p := range [][2]uint32{{0, 0}, {0, 1}, {1, 1}, {1, 0}} {
		if got := HilbertIndex(1, p[0], p[1]); got != uint64(d) {
			t.Errorf("order 1: (%d, %d) -> %d, want %d", p[0], p[1], got, d)
		}
	}
	const bits, n = 4, 16
	at := make([][2]int, n*n)
	seen := make([]bool, n*n)
	for x := 0; x < n; x++ {
		for y := 0; y < n; y++ {
			d := HilbertIndex(bits, uint32(x), uint32(y))
			if d >= n*n || seen[d] {
				t.Fatalf("(%d, %d) -> %d: outside 0..255 or visited twice", x, y, d)
			}
			seen[d] = true
			at[d] = [2]int{x, y}
		}
	}
	for d := 1; d < n*n; d++ {
		dx, dy := at[d][0]-at[d-1][0], at[d][1]-at[d-1][1]
		if dx*dx+dy*dy != 1 {
			t.Errorf("steps %d -> %d jump from %v to %v", d-1, d, at[d-1], at[d])
		}
	}
}

// TestTriFoldRefused: a mesh folding over itself (two triangles on the same
// side of their shared edge) is refused rather than contoured twice.
func TestTriFoldRefused(t *testing.T) {
	f := jitteredMesh(21, 0, radial)
	f.Lon[22], f.Lon[23] = f.Lon[23]+0.05, f.Lon[22]
	if _, err := TriBands(f, []float64{0, 1}); err == nil || !strings.Contains(err.Error(), "folds") {
		t.Errorf("folded mesh: err = %v, want a refusal naming the fold", err)
	}
}

func TestNewMeshChecks(t *testing.T) {
	mk := func(faces [][]int32) *Mesh {
		m := &Mesh{Location: OnNodes, NodeLon: []float64{0, 1, 1, 0, 2}, NodeLat: []float64{0, 0, 1, 1, 0.5}, FaceOff: []int32{0}}
		for _, f := range faces {
			m.FaceNode = append(m.FaceNode, f...)
			m.FaceOff = append(m.FaceOff, int32(len(m.FaceNode)))
		}
		return m
	}
	for name, c := range map[string]struct {
		faces [][]int32
		want  string
	}{
		"two nodes":    {[][]int32{{0, 1}}, "at least 3"},
		"out of range": {[][]int32{{0, 1, 5}}, "outside 0..4"},
		"repeated":     {[][]int32{{0, 1, 1}}, "twice"},
		"zero area":    {[][]int32{{0, 1, 1}, {0, 0, 0}}, "twice"},
		"collinear":    {[][]int32{{0, 1, 4}}, "zero area"},
	} {
		m := mk(c.faces)
		if name == "collinear" {
			m.NodeLat[4] = 0
		}
		if _, err := NewMesh(m, nil, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: err = %v, want %q", name, err, c.want)
		}
	}
	// A quad and a triangle; data on faces at the face centroids.
	m := mk([][]int32{{0, 1, 2, 3}, {1, 4, 2}})
	m.Location = OnFaces
	g, err := NewMesh(m, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if g.NCells() != 2 || g.Kind != MeshKind || g.Structured() || !g.Unstructured() {
		t.Fatalf("grid %+v", g)
	}
	for c, f := range g.XFile {
		want := [2]float64{0.5, 0.5}
		if f == 1 {
			want = [2]float64{4.0 / 3, 0.5}
		}
		if math.Abs(g.Lon[c]-want[0]) > 1e-12 || math.Abs(g.Lat[c]-want[1]) > 1e-12 {
			t.Errorf("face %d at (%v, %v), want %v", f, g.Lon[c], g.Lat[c], want)
		}
	}
	tri, face := m.Triangles()
	if len(tri) != 3 || face[0] != 0 || face[1] != 0 || face[2] != 1 {
		t.Errorf("triangles %v of faces %v", tri, face)
	}
}
