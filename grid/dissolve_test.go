package grid

import (
	"encoding/json"
	"math"
	"math/rand"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/internal/testtool"
)

// dissolveCases are cell sets on small grids: a hole, two cells meeting at
// a corner only (both ways round), a hole touching the shell at a corner, a
// ring of cells around an island, and random sets.
func dissolveCases() []struct {
	name   string
	nx, ny int
	in     []bool
} {
	parse := func(rows ...string) (int, int, []bool) {
		ny, nx := len(rows), len(rows[0])
		in := make([]bool, nx*ny)
		for r, s := range rows { // first row is the northernmost
			j := ny - 1 - r
			for i, ch := range s {
				in[j*nx+i] = ch == '#'
			}
		}
		return nx, ny, in
	}
	type c = struct {
		name   string
		nx, ny int
		in     []bool
	}
	var out []c
	for _, k := range []struct {
		name string
		rows []string
	}{
		{"hole", []string{"#####", "#...#", "#.#.#", "#...#", "#####"}},
		{"corner", []string{"#.", ".#"}},
		{"corner2", []string{".#", "#."}},
		{"hole-touching", []string{"####", "#..#", "#.##", "##.#", "####"}},
		{"diagonal-chain", []string{"#...", ".#..", "..#.", "...#"}},
		{"all", []string{"###", "###"}},
		{"none", []string{"...", "..."}},
	} {
		nx, ny, in := parse(k.rows...)
		out = append(out, c{k.name, nx, ny, in})
	}
	rng := rand.New(rand.NewSource(7))
	for n := 0; n < 6; n++ {
		nx, ny := 9+n, 7+n
		in := make([]bool, nx*ny)
		for i := range in {
			in[i] = rng.Float64() < 0.55
		}
		out = append(out, c{"random", nx, ny, in})
	}
	return out
}

// TestDissolveArea: the dissolved outline's ellipsoidal area equals the sum
// of its cells' areas (within 1e-6 relative), on a regular grid (exact edges)
// and on a curvilinear one.
func TestDissolveArea(t *testing.T) {
	for _, k := range dissolveCases() {
		lon, lat := make([]float64, k.nx), make([]float64, k.ny)
		for i := range lon {
			lon[i] = -8 + 0.25*float64(i) + 0.01*float64(i*i)
		}
		for j := range lat {
			lat[j] = 55 + 0.2*float64(j)
		}
		g, err := NewRegular(lon, lat)
		if err != nil {
			t.Fatal(err)
		}
		// a sheared curvilinear version of the same grid
		cl, ct := make([]float64, k.nx*k.ny), make([]float64, k.nx*k.ny)
		for j := 0; j < k.ny; j++ {
			for i := 0; i < k.nx; i++ {
				cl[j*k.nx+i] = lon[i] + 0.05*float64(j)
				ct[j*k.nx+i] = lat[j] + 0.03*float64(i)
			}
		}
		gc, err := NewCurvilinear(k.nx, k.ny, cl, ct)
		if err != nil {
			t.Fatal(err)
		}
		for _, gg := range []*Grid{g, gc} {
			c, _ := CellCorners(gg)
			areas := CellAreasM2(gg)
			sum := 0.0
			for i, x := range k.in {
				if x {
					sum += areas[i]
				}
			}
			mp := Dissolve(c, k.in, gg.Kind == Regular)
			got := MultiPolygonAreaM2(mp)
			if sum == 0 {
				if len(mp) != 0 {
					t.Errorf("%s %s: no cells, %d polygons", k.name, gg.Kind, len(mp))
				}
				continue
			}
			if rel := math.Abs(got-sum) / sum; rel > 1e-6 {
				t.Errorf("%s %s: dissolved area %.6g m2, sum of cells %.6g m2 (rel %.3g)", k.name, gg.Kind, got, sum, rel)
			}
			for _, p := range mp {
				if ringSigned(p[0]) <= 0 {
					t.Errorf("%s %s: shell not anticlockwise", k.name, gg.Kind)
				}
				for _, h := range p[1:] {
					if ringSigned(h) >= 0 {
						t.Errorf("%s %s: hole not clockwise", k.name, gg.Kind)
					}
				}
			}
		}
	}
}

// TestDissolveGEOS: every dissolved outline is valid under GEOS (Debian's
// python3-shapely, is_valid) and equals the union of its cell boxes there
// (unary_union; symmetric difference of zero planar area).
func TestDissolveGEOS(t *testing.T) {
	py := testtool.NeedPython(t, "shapely")
	dir := t.TempDir()
	var cases []map[string]any
	for n, k := range dissolveCases() {
		lon, lat := make([]float64, k.nx), make([]float64, k.ny)
		for i := range lon {
			lon[i] = 3 + 0.5*float64(i)
		}
		for j := range lat {
			lat[j] = -40 + 0.5*float64(j)
		}
		g, _ := NewRegular(lon, lat)
		c, _ := CellCorners(g)
		mp := Dissolve(c, k.in, true)
		var boxes [][][2]float64
		for j := 0; j < k.ny; j++ {
			for i := 0; i < k.nx; i++ {
				if k.in[j*k.nx+i] {
					var r [][2]float64
					for _, p := range c.CellRing(i, j) {
						r = append(r, [2]float64(p))
					}
					boxes = append(boxes, r)
				}
			}
		}
		b, _ := geojson.NewGeometry(orb.MultiPolygon(mp)).MarshalJSON()
		cases = append(cases, map[string]any{"name": k.name, "n": n, "dissolved": json.RawMessage(b), "boxes": boxes})
	}
	in := filepath.Join(dir, "cases.json")
	b, _ := json.Marshal(cases)
	os.WriteFile(in, b, 0o644)
	script := `
import json, sys
from shapely.geometry import shape, Polygon
from shapely.ops import unary_union
from shapely.validation import explain_validity
for c in json.load(open(sys.argv[1])):
    d = shape(c["dissolved"])
    u = unary_union([Polygon(b) for b in c["boxes"]]) if c["boxes"] else Polygon()
    print(c["n"], c["name"], d.is_valid, explain_validity(d), repr(d.symmetric_difference(u).area), repr(u.area))
`
	out, err := exec.Command(py, "-c", script, in).CombinedOutput()
	if err != nil {
		t.Fatalf("shapely: %v\n%s", err, out)
	}
	lines := 0
	for _, l := range splitLines(string(out)) {
		var n int
		var name, valid, why string
		var diff, area float64
		if _, err := fmtSscan(l, &n, &name, &valid, &why, &diff, &area); err != nil {
			t.Fatalf("shapely output %q: %v", l, err)
		}
		lines++
		if valid != "True" {
			t.Errorf("case %d %s: not valid under GEOS: %s", n, name, l)
		}
		if diff > 1e-12*math.Max(area, 1) {
			t.Errorf("case %d %s: dissolved outline differs from the union of the cells by %g deg2 (of %g)", n, name, diff, area)
		}
	}
	if lines != len(cases) {
		t.Fatalf("shapely answered %d cases of %d:\n%s", lines, len(cases), out)
	}
	t.Logf("%d dissolved outlines valid under GEOS and equal to shapely's union of their cells", lines)
}
