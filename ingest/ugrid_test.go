package ingest

import (
	"context"
	"math"
	"strings"
	"testing"

	"swellgrid/grid"
)

// The fixtures are written by testdata/ugrid/make_ugrid.py with Debian's
// python3-netcdf4; their values are formulas of the file's node or face
// index and the step (see the script), so every value read is checked
// against the formula at the file index of its cell.

// readMesh reads every block of a file for cells c0..c1-1 (c1 = 0: all).
func readMesh(t *testing.T, path string, c0, c1 int) (*Catalog, map[int][]float64) {
	t.Helper()
	cat, err := Open([]string{path}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	out := make(chan *Block, 8)
	errc := make(chan error, 1)
	go func() {
		errc <- cat.Read(context.Background(), ReadRange{C0: c0, C1: c1, MaxSteps: 7}, out)
		close(out)
	}()
	hs := map[int][]float64{} // cell -> series
	for b := range out {
		for tt := 0; tt < b.NT; tt++ {
			for c := b.C0; c < b.C1; c++ {
				hs[c] = append(hs[c], b.Bulk[Hm0][tt*b.NC()+c-b.C0])
			}
		}
	}
	if err := <-errc; err != nil {
		t.Fatal(err)
	}
	return cat, hs
}

func TestUGRIDMixedFacesOnNodes(t *testing.T) {
	cat, hs := readMesh(t, "../testdata/ugrid/mixed0.nc", 0, 0)
	g := cat.Grid
	if g.Kind != grid.MeshKind || g.Mesh.Location != grid.OnNodes || g.NCells() != 8 || g.Mesh.NFaces() != 4 {
		t.Fatalf("grid %s with %d cells, %d faces", g.Kind, g.NCells(), g.Mesh.NFaces())
	}
	// Faces as written (start_index 0, fill -1 ends the triangles).
	want := [][]int32{{0, 1, 4, 3}, {1, 2, 5, 4}, {2, 6, 5}, {2, 7, 6}}
	for f, w := range want {
		if got := g.Mesh.Face(f); len(got) != len(w) || got[0] != w[0] || got[len(got)-1] != w[len(w)-1] {
			t.Errorf("face %d: %v, want %v", f, got, w)
		}
	}
	nodeLon := []float64{-20, -19, -18, -20, -19, -18, -17, -17.5}
	for c, node := range g.XFile {
		if g.Lon[c] != nodeLon[node] {
			t.Errorf("cell %d (node %d) at lon %v, want %v", c, node, g.Lon[c], nodeLon[node])
		}
		if d := cat.Depth[c]; d != 30+float64(node) {
			t.Errorf("cell %d (node %d): depth %v, want %v", c, node, d, 30+float64(node))
		}
		for k, x := range hs[c] {
			if w := 1 + 0.01*float64(node) + 0.001*float64(k); math.Abs(x-w) > 1e-12 {
				t.Fatalf("cell %d (node %d) step %d: hs %v, want %v", c, node, k, x, w)
			}
		}
		if len(hs[c]) != 48 {
			t.Errorf("cell %d: %d steps", c, len(hs[c]))
		}
	}
	// A range of cells reads the right nodes too.
	_, part := readMesh(t, "../testdata/ugrid/mixed0.nc", 3, 6)
	for c := 3; c < 6; c++ {
		if w := 1 + 0.01*float64(g.XFile[c]) + 0.005; math.Abs(part[c][5]-w) > 1e-12 {
			t.Errorf("cells 3..5: cell %d step 5 hs %v, want %v", c, part[c][5], w)
		}
	}
}

func TestUGRIDDataOnFaces(t *testing.T) {
	cat, hs := readMesh(t, "../testdata/ugrid/faces1.nc", 0, 0)
	g := cat.Grid
	if g.Mesh.Location != grid.OnFaces || g.NCells() != 4 {
		t.Fatalf("location %s, %d cells", g.Mesh.Location, g.NCells())
	}
	// Transposed connectivity, start_index 1, fill 999999: the same faces.
	if f := g.Mesh.Face(2); len(f) != 3 || f[0] != 2 || f[1] != 6 || f[2] != 5 {
		t.Errorf("face 2: %v, want [2 6 5]", f)
	}
	nlon := []float64{-20, -19, -18, -20, -19, -18, -17, -17.5}
	nlat := []float64{40, 40, 40, 41, 41, 41, 40.5, 39.2}
	faces := [][]int{{0, 1, 4, 3}, {1, 2, 5, 4}, {2, 6, 5}, {2, 7, 6}}
	for c, f := range g.XFile {
		lo, la := 0.0, 0.0
		for _, n := range faces[f] {
			lo += nlon[n] / float64(len(faces[f]))
			la += nlat[n] / float64(len(faces[f]))
		}
		// face_lat is written 0.01 north of the centroid: read, not computed.
		if math.Abs(g.Lon[c]-lo) > 1e-12 || math.Abs(g.Lat[c]-(la+0.01)) > 1e-12 {
			t.Errorf("cell %d (face %d) at (%v, %v), want (%v, %v)", c, f, g.Lon[c], g.Lat[c], lo, la+0.01)
		}
		if cat.Depth[c] != 40+float64(f) {
			t.Errorf("cell %d (face %d): depth %v", c, f, cat.Depth[c])
		}
		for k, x := range hs[c] {
			if w := 2 + 0.01*float64(f) + 0.001*float64(k); math.Abs(x-w) > 1e-12 {
				t.Fatalf("cell %d (face %d) step %d: hs %v, want %v", c, f, k, x, w)
			}
		}
	}
}

func TestUGRIDRefusals(t *testing.T) {
	for file, want := range map[string][]string{
		"bad_range.nc":      {`variable "conn"`, "face 1, node 2 is 8", "outside the 8 nodes", "start_index = 1"},
		"bad_start0.nc":     {`variable "conn"`, "start_index = 1"},
		"bad_start2.nc":     {`variable "conn"`, "start_index is [2]"},
		"bad_two.nc":        {`variable "conn"`, "face 3 has 2 nodes"},
		"bad_fillmid.nc":    {`variable "conn"`, "after a fill value"},
		"bad_nan.nc":        {`variable "node_lon"`, "value 4 is NaN"},
		"bad_depthnodes.nc": {`variable "depth"`, "on the mesh's nodes", "on its faces"},
	} {
		path := "../testdata/ugrid/" + file
		_, err := Open([]string{path}, Options{})
		if err == nil {
			t.Errorf("%s: accepted", file)
			continue
		}
		for _, w := range append(want, path) {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: error %q does not say %q", file, err, w)
			}
		}
	}
}
