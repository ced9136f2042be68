package grid

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/internal/testtool"
)

// jitteredMesh is an irregular triangle mesh of [-1, 1]^2: an n x n lattice
// with every inner node moved by up to a fifth of the spacing, each quad cut
// along a random diagonal, and the triangles whose centroid lies within
// radius hole of (0.5, 0.5) removed (land inside the domain).
func jitteredMesh(n int, hole float64, fn func(x, y float64) float64) *TriField {
	rng := rand.New(rand.NewSource(7))
	h := 2 / float64(n-1)
	f := &TriField{}
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			x, y := -1+float64(i)*h, -1+float64(j)*h
			if i > 0 && i < n-1 && j > 0 && j < n-1 {
				x += (rng.Float64() - 0.5) * h * 2 / 5
				y += (rng.Float64() - 0.5) * h * 2 / 5
			}
			f.Lon, f.Lat, f.Value = append(f.Lon, x), append(f.Lat, y), append(f.Value, fn(x, y))
		}
	}
	add := func(a, b, c int) {
		cx := (f.Lon[a] + f.Lon[b] + f.Lon[c]) / 3
		cy := (f.Lat[a] + f.Lat[b] + f.Lat[c]) / 3
		if math.Hypot(cx-0.5, cy-0.5) < hole {
			return
		}
		f.Tri = append(f.Tri, [3]int32{int32(a), int32(b), int32(c)})
	}
	for j := 0; j+1 < n; j++ {
		for i := 0; i+1 < n; i++ {
			k := j*n + i
			if rng.Intn(2) == 0 {
				add(k, k+1, k+n+1)
				add(k, k+n+1, k+n) // counter-clockwise
			} else {
				add(k, k+n, k+1) // clockwise on purpose: orientation is not assumed
				add(k+1, k+n+1, k+n)
			}
		}
	}
	return f
}

const cx0, cy0 = 0.1, -0.05

func radial(x, y float64) float64 { return math.Hypot(x-cx0, y-cy0) }

// TestTriIsolinesCircles: the isolines of the radial field r (distance from
// (cx0, cy0)) are circles of radius = level (exact curve, geometry). The
// linear interpolant of r on a triangle of size h departs from r by at most
// about h^2/(8 r) (interpolation error bound |f”| h^2 / 8 with f” = 1/r
// across the circle; common practice), so every isoline point must lie
// within 2e-3 of the circle on this mesh (h about 0.033 with jitter) and
// each closed line's length within 0.5% of 2 pi r.
func TestTriIsolinesCircles(t *testing.T) {
	f := jitteredMesh(61, 0, radial)
	levels := []float64{0.3, 0.6, 0.85}
	lines, err := TriIsolines(f, levels)
	if err != nil {
		t.Fatal(err)
	}
	for k, level := range levels {
		mls := lines[k]
		if len(mls) != 1 {
			t.Fatalf("level %v: %d lines, want one closed circle", level, len(mls))
		}
		l := mls[0]
		if l[0] != l[len(l)-1] {
			t.Errorf("level %v: the circle is not closed", level)
		}
		worst := 0.0
		for _, p := range l {
			worst = math.Max(worst, math.Abs(math.Hypot(p[0]-cx0, p[1]-cy0)-level))
		}
		length := mlsLength(mls)
		rel := math.Abs(length-2*math.Pi*level) / (2 * math.Pi * level)
		t.Logf("level %v: %d points, max distance from the exact circle %.2e, length %.6f vs 2 pi r %.6f (rel %.2e)", level, len(l), worst, length, 2*math.Pi*level, rel)
		if worst > 2e-3 {
			t.Errorf("level %v: a point lies %.3g from the exact circle (> 2e-3)", level, worst)
		}
		if rel > 5e-3 {
			t.Errorf("level %v: length off by %.3g (> 0.5%%)", level, rel)
		}
		// Values above the level (outside the circle) on the left: the
		// line runs clockwise, so its shoelace area is negative.
		if a := ringArea(orb.Ring(l)); !(a < 0) {
			t.Errorf("level %v: circle runs counter-clockwise (area %v); values above the level must be on the left", level, a)
		}
	}
}

// TestTriBandsAnnulus: bands of the radial field are discs and annuli with
// the exact areas pi (r2^2 - r1^2) (geometry) to within 0.5%, with holes
// where the mesh is not (land), right-hand-rule rings and no band
// overlapping another: the band areas add up to the mesh's area.
func TestTriBandsAnnulus(t *testing.T) {
	f := jitteredMesh(61, 0, radial)
	edges := []float64{math.Inf(-1), 0.3, 0.6, 0.85, math.Inf(1)}
	bands, err := TriBands(f, edges)
	if err != nil {
		t.Fatal(err)
	}
	exact := []float64{math.Pi * 0.09, math.Pi * (0.36 - 0.09), math.Pi * (0.85*0.85 - 0.36)}
	for b, want := range exact {
		got := mpArea(bands[b])
		rel := math.Abs(got-want) / want
		t.Logf("band [%v, %v): area %.6f, exact %.6f (rel %.2e), %d polygons", edges[b], edges[b+1], got, want, rel, len(bands[b]))
		if rel > 5e-3 {
			t.Errorf("band [%v, %v): area %.6f, exact %.6f (rel %.3g > 0.5%%)", edges[b], edges[b+1], got, want, rel)
		}
	}
	if len(bands[1]) != 1 || len(bands[1][0]) != 2 {
		t.Errorf("band [0.3, 0.6) should be one annulus (1 polygon with 1 hole), got %d polygons", len(bands[1]))
	}
	total := 0.0
	for _, mp := range bands {
		total += mpArea(mp)
		for _, p := range mp {
			if ringArea(p[0]) <= 0 {
				t.Errorf("exterior ring not counter-clockwise")
			}
			for _, h := range p[1:] {
				if ringArea(h) >= 0 {
					t.Errorf("hole not clockwise")
				}
			}
		}
	}
	if math.Abs(total-4) > 1e-9 {
		t.Errorf("the bands cover %.12f, the mesh covers 4", total)
	}
}

// TestTriLandIsHole: triangles removed from the mesh (land) are left out of
// every band and isoline: the bands' areas add up to the mesh's area, and
// the band holding the removed disc gets it as a hole.
func TestTriLandIsHole(t *testing.T) {
	f := jitteredMesh(61, 0.15, radial)
	meshArea := 0.0
	for _, tr := range f.Tri {
		meshArea += math.Abs(triArea(f, tr)) / 2
	}
	bands, err := TriBands(f, []float64{math.Inf(-1), 0.3, 0.6, 0.85, math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	total := 0.0
	for _, mp := range bands {
		total += mpArea(mp)
	}
	if math.Abs(total-meshArea) > 1e-9 {
		t.Errorf("bands cover %.12f, mesh %.12f", total, meshArea)
	}
	// (0.5, 0.5) is at r = 0.667 from the centre: in band [0.6, 0.85), but land.
	holes := 0
	for _, p := range bands[2] {
		holes += len(p) - 1
	}
	if holes != 1 {
		t.Errorf("band [0.6, 0.85) has %d holes, want 1 (the land disc)", holes)
	}
	lines, err := TriIsolines(f, []float64{0.667})
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range lines[0] {
		for _, p := range l {
			if math.Hypot(p[0]-0.5, p[1]-0.5) < 0.15-2*2.0/60 {
				t.Errorf("isoline point %v lies on land", p)
			}
		}
	}
	if len(lines[0]) != 1 || lines[0][0][0] == lines[0][0][len(lines[0][0])-1] {
		t.Errorf("the circle through the land disc should be cut into one open line, got %d lines", len(lines[0]))
	}
}

// TestTriBandsPinch: two triangles touching at one vertex are two polygons,
// never one ring passing twice through the vertex (OGC simple features: a
// ring must not touch itself).
func TestTriBandsPinch(t *testing.T) {
	f := &TriField{
		Lon:   []float64{0, -1, -1, 1, 1},
		Lat:   []float64{0, 1, -1, -1, 1},
		Value: []float64{1, 1, 1, 1, 1},
		Tri:   [][3]int32{{0, 1, 2}, {0, 3, 4}},
	}
	bands, err := TriBands(f, []float64{0, 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(bands[0]) != 2 {
		t.Fatalf("bowtie gives %d polygons, want 2: %v", len(bands[0]), bands[0])
	}
	for _, p := range bands[0] {
		if len(p[0]) != 4 {
			t.Errorf("bowtie polygon %v is not a triangle", p[0])
		}
	}
}

// TestTriBandsValidGEOS asks GEOS (through GDAL's Python bindings, Debian
// python3-gdal) whether every band MultiPolygon of several irregular meshes
// is valid, and checks its area against ours.
func TestTriBandsValidGEOS(t *testing.T) {
	py := testtool.NeedPython(t, "osgeo")
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	quant := func(x, y float64) float64 { return math.Round(fn(x, y)*10) / 10 }
	masked := jitteredMesh(41, 0.3, fn)
	masked.Mask = make([]bool, len(masked.Value))
	for k := range masked.Mask {
		i, j := k%41, k/41
		masked.Mask[k] = i < 12 && j < 12 && (i+j)%3 == 0 // pinch points
	}
	fields := map[string]*TriField{
		"radial":    jitteredMesh(41, 0.15, radial),
		"saddles":   jitteredMesh(41, 0, fn),
		"quantised": jitteredMesh(41, 0, quant),
		"masked":    masked,
	}
	edges := []float64{math.Inf(-1), -0.8, -0.3, 0, 0.2, 0.5, 0.7, math.Inf(1)}
	dir := t.TempDir()
	var paths []string
	want := map[string]float64{}
	for name, f := range fields {
		bands, err := TriBands(f, edges)
		if err != nil {
			t.Fatal(err)
		}
		fc := geojson.NewFeatureCollection()
		for b, mp := range bands {
			fc.Append(geojson.NewFeature(mp))
			want[fmt.Sprintf("%s %d", name, b)] = mpArea(mp)
		}
		data, err := json.Marshal(fc)
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, name+".geojson")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	script := filepath.Join("..", "testdata", "export", "check_valid.py")
	out, err := exec.Command(py, append([]string{script}, paths...)...).CombinedOutput()
	if err != nil {
		t.Fatalf("%s: %v\n%s", script, err, out)
	}
	n := 0
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) != 5 {
			continue
		}
		key := strings.TrimSuffix(filepath.Base(fs[0]), ".geojson") + " " + fs[1]
		n++
		if fs[3] != "1" {
			t.Errorf("%s: GEOS says the %s is not valid", key, fs[2])
		}
		area, _ := strconv.ParseFloat(fs[4], 64)
		if w := want[key]; math.Abs(area-w) > 1e-9*math.Max(1, w) {
			t.Errorf("%s: GEOS area %v, ours %v", key, area, w)
		}
	}
	if n != len(want) {
		t.Errorf("GEOS checked %d features, want %d:\n%s", n, len(want), out)
	}
}
