package grid

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/internal/testtool"
)

func axis(x0, dx float64, n int) []float64 {
	a := make([]float64, n)
	for i := range a {
		a[i] = x0 + dx*float64(i)
	}
	return a
}

// The frame of a region: 0..360 only for one continuous across 180 degrees
// (our rule, LonFrame's doc comment).
func TestLonFrame(t *testing.T) {
	jump := []float64{172, 174, 176, 178, -180, -178, -176}
	for _, tc := range []struct {
		name string
		lons []float64
		west float64
	}{
		{"atlantic", axis(-60, 0.5, 101), -180},
		{"across 0", axis(-10, 1, 21), -180},
		{"pacific stored 0..360", axis(172, 2, 9), 0},
		{"pacific stored -180..180 with the jump inside", jump, 0},
		{"pacific east end on 180", axis(170, 1, 11), 0},
		{"global 0..359.5", axis(0, 0.5, 720), -180},
		{"global -180..179.5", axis(-180, 0.5, 720), -180},
		{"one point", []float64{190}, -180},
		{"none", []float64{math.NaN()}, -180},
	} {
		if got := LonFrame(tc.lons); got.West != tc.west {
			t.Errorf("%s: frame %v, want west %v", tc.name, got, tc.west)
		}
	}
	// a region crossing neither 0 nor 180 keeps -180..180 whatever the
	// rounding of its two representations (longitudes of a curvilinear
	// fixture, testdata/curvilinear_bulk.nc, and a sweep round the globe)
	if fr := LonFrame([]float64{-30.3877345077309, -29.9345806142125, -28.5751189336575, -27.4575020157505}); fr.West != -180 {
		t.Errorf("curvilinear region west of 0: frame %v, want -180..180", fr)
	}
	for x := -179.9; x < 170; x += 0.7311 {
		lons := []float64{x, x + 0.1234567, x + 3.3333333, x + 9.87654321}
		want := -180.0
		if x+9.87654321 > 180 {
			want = 0
		}
		if fr := LonFrame(lons); fr.West != want {
			t.Errorf("region %v..%v: frame %v, want west %v", x, x+9.87654321, fr, want)
		}
	}
	fr := LonFrame(jump)
	if fr.Centre != 178 {
		t.Errorf("centre of 172..184 = %v, want 178", fr.Centre)
	}
	for in, want := range map[float64]float64{-180: 180, -172.5: 187.5, 10: 10, 359.5: 359.5, 360: 0, 720.25: 0.25} {
		if got := fr.Shift(in); got != want {
			t.Errorf("0..360: Shift(%v) = %v, want %v", in, got, want)
		}
	}
	w := Frame{West: -180}
	for _, v := range []float64{-180, -0.1, 3.141592653589793, 179.99999999999997} {
		if got := w.Shift(v); math.Float64bits(got) != math.Float64bits(v) {
			t.Errorf("-180..180: Shift(%v) = %v, want it unchanged", v, got)
		}
	}
}

// Both storages of a grid across 180 degrees give one canonical order: the
// columns ascending in the 0..360 frame, lon in [-180, 180).
func TestRegularAcrossDateLine(t *testing.T) {
	a, err := NewRegular(axis(172, 2, 9), []float64{-21, -19})
	if err != nil {
		t.Fatal(err)
	}
	b, err := NewRegular([]float64{-176, -174, -172, 172, 174, 176, 178, -180, -178}, []float64{-19, -21})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{172, 174, 176, 178, -180, -178, -176, -174, -172}
	for i, w := range want {
		if a.Lon[i] != w || b.Lon[i] != w || a.Lon[9+i] != w {
			t.Errorf("column %d: lon %v (0..360 storage), %v (jump inside), want %v", i, a.Lon[i], b.Lon[i], w)
		}
	}
	if ok, why := a.Same(b); !ok {
		t.Errorf("the two storages differ: %s", why)
	}
	if b.XFile[0] != 3 || b.XFile[4] != 7 || b.XFile[8] != 2 {
		t.Errorf("file columns of the jump storage: %v", b.XFile)
	}
	w0, s, e, n := a.Bounds()
	if w0 != 172 || e != -172 || s != -21 || n != -19 {
		t.Errorf("Bounds = %v %v %v %v, want 172 -21 -172 -19 (RFC 7946 5.2: west > east)", w0, s, e, n)
	}
	// cell widths: 2 degrees everywhere, 180 included
	c, _ := CellCorners(a)
	for i := 0; i <= 9; i++ {
		if got, want := c.At(i, 0)[0], 171+2*float64(i); got != want {
			t.Errorf("corner %d lon %v, want %v", i, got, want)
		}
	}
	areas := CellAreasM2(a)
	for i := 1; i < 9; i++ {
		if math.Abs(areas[i]-areas[0]) > 1e-6*areas[0] {
			t.Errorf("cell %d area %v, cell 0 %v: a row has cells of one size", i, areas[i], areas[0])
		}
	}
}

// RFC 7946 section 5.2's example box across the antimeridian is
// [177.0, -20.0, -178.0, -16.0] (quoted from memory).
func TestBBoxAcross180(t *testing.T) {
	b, ok := BBox([]float64{177, 179.5, -179, -178}, []float64{-20, -18, -17, -16})
	if !ok || b != [4]float64{177, -20, -178, -16} {
		t.Errorf("BBox = %v, want [177 -20 -178 -16]", b)
	}
	b, _ = BBox([]float64{170, 175, 180}, []float64{0, 1, 2})
	if b != [4]float64{170, 0, 180, 2} {
		t.Errorf("BBox east end on 180 = %v, want [170 0 180 2]", b)
	}
	b, _ = BBox([]float64{-10, 5}, []float64{0, 1})
	if b != [4]float64{-10, 0, 5, 1} {
		t.Errorf("BBox = %v", b)
	}
}

// The examples of RFC 7946 section 3.1.9: a line from 170 E to 170 W at
// 45 N becomes [[170, 45], [180, 45]] and [[-180, 45], [-170, 45]]; the
// rectangle 170 E to 170 W, 40 N to 50 N becomes the polygons [170, 180] x
// [40, 50] and [-180, -170] x [40, 50].
func TestCutRFC7946Examples(t *testing.T) {
	lines := CutLines(orb.MultiLineString{{{170, 45}, {190, 45}}})
	want := orb.MultiLineString{{{170, 45}, {180, 45}}, {{-180, 45}, {-170, 45}}}
	if !orb.Equal(lines, want) {
		t.Errorf("CutLines = %v, want %v", lines, want)
	}
	// back to one line in the 0..360 frame
	if j := RejoinLines(lines, Frame{West: 0, Centre: 180}); !orb.Equal(j, orb.MultiLineString{{{170, 45}, {180, 45}, {190, 45}}}) {
		t.Errorf("RejoinLines = %v", j)
	}
	rect := orb.MultiPolygon{{{{170, 40}, {190, 40}, {190, 50}, {170, 50}, {170, 40}}}}
	mp := CutPolygons(rect)
	if len(mp) != 2 {
		t.Fatalf("CutPolygons gave %d polygons, want 2: %v", len(mp), mp)
	}
	wantBounds := []orb.Bound{{Min: orb.Point{170, 40}, Max: orb.Point{180, 50}}, {Min: orb.Point{-180, 40}, Max: orb.Point{-170, 50}}}
	for _, p := range mp {
		ok := false
		for _, b := range wantBounds {
			ok = ok || p.Bound() == b
		}
		if !ok || len(p) != 1 || len(p[0]) != 5 || ringArea(p[0]) != 100 {
			t.Errorf("part %v: want one of the boxes %v, anticlockwise, 4 corners", p, wantBounds)
		}
	}
	j := RejoinPolygons(mp, Frame{West: 0, Centre: 180})
	if len(j) != 1 || j[0].Bound() != rect[0].Bound() || ringArea(j[0][0]) != 200 {
		t.Errorf("RejoinPolygons = %v, want the rectangle back", j)
	}
	// geometry already in [-180, 180] is left as it is
	in := orb.MultiPolygon{{{{10, 0}, {20, 0}, {20, 5}, {10, 0}}}}
	if out := CutPolygons(in); !orb.Equal(out, in) {
		t.Errorf("CutPolygons changed a polygon away from 180: %v", out)
	}
}

// cutCases are polygons (right-hand rule, lon/lat in a 0..360 frame) that
// cross 180 degrees in the ways a band or an outline can: a rectangle, a
// comb crossing the meridian six times, holes across it and on either side,
// vertices and edges on it, a notch touching it from the east and a spike
// touching it from the west, and a polygon beyond -180 of a -180..180 frame.
func cutCases() map[string]orb.MultiPolygon {
	sq := orb.Ring{{170, 0}, {190, 0}, {190, 10}, {170, 10}, {170, 0}}
	hole := func(x0, x1, y0, y1 float64) orb.Ring {
		return orb.Ring{{x0, y0}, {x0, y1}, {x1, y1}, {x1, y0}, {x0, y0}} // clockwise
	}
	return map[string]orb.MultiPolygon{
		"rect":             {{sq}},
		"comb":             {{{{170, 0}, {185, 0}, {185, 1}, {172, 1}, {172, 2}, {185, 2}, {185, 3}, {172, 3}, {172, 4}, {185, 4}, {185, 5}, {170, 5}, {170, 0}}}},
		"hole across":      {{sq, hole(178, 182, 4, 6)}},
		"hole west":        {{sq, hole(172, 175, 4, 6)}},
		"hole east":        {{sq, hole(185, 188, 4, 6)}},
		"vertices on 180":  {{{{175, 0}, {180, 0}, {185, 0}, {185, 10}, {180, 10}, {175, 10}, {175, 0}}}},
		"edge on 180 west": {{{{170, 0}, {180, 0}, {180, 10}, {170, 10}, {170, 0}}}},
		"edge on 180 east": {{{{180, 0}, {190, 0}, {190, 10}, {180, 10}, {180, 0}}}},
		"notch from east":  {{{{170, 0}, {190, 0}, {190, 4}, {180, 5}, {190, 6}, {190, 10}, {170, 10}, {170, 0}}}},
		"spike to 180":     {{{{185, 0}, {190, 0}, {190, 10}, {185, 10}, {185, 6}, {180, 5}, {185, 4}, {185, 0}}}},
		"seam notch":       {{{{170, 0}, {190, 0}, {190, 3}, {180, 3}, {180, 7}, {190, 7}, {190, 10}, {170, 10}, {170, 0}}}},
		"two parts":        {{{{175, 0}, {185, 0}, {185, 2}, {175, 2}, {175, 0}}}, {{{176, 5}, {184, 5}, {184, 7}, {176, 5}}}},
		"beyond -180":      {{{{-185, 0}, {-170, 0}, {-170, 3}, {-185, 3}, {-185, 0}}}},
		"slanted":          {{{{178.3, -1.7}, {181.9, 0.4}, {179.2, 2.9}, {181.1, 5.3}, {177.4, 4.4}, {178.3, -1.7}}}},
	}
}

// TestCutPolygonsGEOS: every cut is valid under GEOS (Debian's
// python3-shapely, is_valid), conforms to RFC 7946 (longitudes in [-180,
// 180], no segment longer than 180 degrees of longitude, exterior rings
// anticlockwise, holes clockwise), and its parts, shifted back by 360
// degrees, cover the polygon exactly (symmetric difference of zero area);
// RejoinPolygons gives a valid polygon equal to the original.
func TestCutPolygonsGEOS(t *testing.T) {
	py := testtool.NeedPython(t, "shapely")
	var cases []map[string]any
	for name, mp := range cutCases() {
		cut := CutPolygons(mp)
		fr := Frame{West: 0, Centre: 180}
		if name == "beyond -180" {
			fr = Frame{West: -180, Centre: -177.5}
		}
		back := RejoinPolygons(cut, fr)
		enc := func(g orb.Geometry) json.RawMessage { b, _ := geojson.NewGeometry(g).MarshalJSON(); return b }
		cases = append(cases, map[string]any{"name": strings.ReplaceAll(name, " ", "_"), "orig": enc(mp), "cut": enc(cut), "back": enc(back)})
		checkRFC7946(t, name, cut)
	}
	in := filepath.Join(t.TempDir(), "cases.json")
	b, _ := json.Marshal(cases)
	os.WriteFile(in, b, 0o644)
	script := `
import json, sys
from shapely.geometry import shape, MultiPolygon, Polygon
from shapely.affinity import translate
from shapely.ops import unary_union
for c in json.load(open(sys.argv[1])):
    o, cut, back = shape(c["orig"]), shape(c["cut"]), shape(c["back"])
    # the parts shifted back beside the original: east of 180 by +360, west of -180 by -360
    minx = o.bounds[0]
    parts = []
    for p in cut.geoms:
        dx = 0.0
        if minx < -180 and p.bounds[2] > 0: dx = -360.0
        elif minx >= -180 and p.bounds[0] < o.bounds[0] - 1e-9: dx = 360.0
        parts.append(translate(p, dx))
    u = unary_union(parts)
    print(c["name"], cut.is_valid, back.is_valid, len(cut.geoms), len(back.geoms),
          repr(u.symmetric_difference(o).area), repr(back.symmetric_difference(o).area), repr(o.area))
`
	out, err := exec.Command(py, "-c", script, in).CombinedOutput()
	if err != nil {
		t.Fatalf("shapely: %v\n%s", err, out)
	}
	n := 0
	for _, l := range splitLines(string(out)) {
		f := strings.Fields(l)
		if len(f) != 8 {
			t.Fatalf("shapely output %q", l)
		}
		n++
		var d1, d2, area float64
		json.Unmarshal([]byte(f[5]), &d1)
		json.Unmarshal([]byte(f[6]), &d2)
		json.Unmarshal([]byte(f[7]), &area)
		if f[1] != "True" {
			t.Errorf("%s: the cut is not valid under GEOS: %s", f[0], l)
		}
		if f[2] != "True" {
			t.Errorf("%s: the rejoined polygon is not valid under GEOS: %s", f[0], l)
		}
		if d1 > 1e-9*area || d2 > 1e-9*area {
			t.Errorf("%s: parts differ from the polygon by %g deg2, rejoined by %g (of %g)", f[0], d1, d2, area)
		}
		t.Logf("%s: %s parts, rejoined into %s; differences %s, %s deg2", f[0], f[3], f[4], f[5], f[6])
	}
	if n != len(cases) {
		t.Fatalf("shapely answered %d cases of %d:\n%s", n, len(cases), out)
	}
}

// checkRFC7946 checks what RFC 7946 asks of a MultiPolygon in GeoJSON:
// positions in range (3.1.1; longitude in [-180, 180]), rings closed with
// at least 4 positions (3.1.6), the right-hand rule (3.1.6), no edge across
// the antimeridian (3.1.9: longer than 180 degrees of longitude).
func checkRFC7946(t *testing.T, name string, mp orb.MultiPolygon) {
	t.Helper()
	for pi, p := range mp {
		for ri, r := range p {
			if len(r) < 4 || r[0] != r[len(r)-1] {
				t.Errorf("%s: polygon %d ring %d not closed or too short: %v", name, pi, ri, r)
			}
			if a := ringArea(r); (ri == 0) != (a > 0) {
				t.Errorf("%s: polygon %d ring %d has signed area %v (exterior anticlockwise, holes clockwise)", name, pi, ri, a)
			}
			for k, q := range r {
				if q[0] < -180 || q[0] > 180 || q[1] < -90 || q[1] > 90 {
					t.Errorf("%s: position %v out of range", name, q)
				}
				if k > 0 && math.Abs(q[0]-r[k-1][0]) > 180 {
					t.Errorf("%s: edge %v-%v spans more than 180 degrees of longitude", name, r[k-1], q)
				}
			}
		}
	}
}

// Lines: a closed isoline across 180 is cut into pieces whose longitudes
// are in [-180, 180]; the pieces rejoin into the loop.
func TestCutLinesLoop(t *testing.T) {
	loop := orb.LineString{{176, 0}, {184, 0}, {184, 4}, {180, 5}, {176, 4}, {176, 0}}
	cut := CutLines(orb.MultiLineString{loop})
	if len(cut) != 2 {
		t.Fatalf("cut into %d pieces, want 2 (west, east): %v", len(cut), cut)
	}
	for _, p := range cut {
		for k, q := range p {
			if q[0] < -180 || q[0] > 180 || (k > 0 && math.Abs(q[0]-p[k-1][0]) > 180) {
				t.Errorf("piece %v breaks RFC 7946", p)
			}
		}
	}
	back := RejoinLines(cut, Frame{West: 0, Centre: 180})
	if len(back) != 1 || back[0][0] != back[0][len(back[0])-1] {
		t.Fatalf("rejoined into %v, want one closed line", back)
	}
	if l := len(back[0]); l != len(loop)+1 { // plus the crossing point at 180 on the way out
		t.Errorf("rejoined loop has %d points, want %d: %v", l, len(loop)+1, back[0])
	}
}

// Contours of a grid across 180 degrees, computed in its 0..360 frame
// (GeoField), equal those of the same values on the grid 170 degrees west,
// shifted by 170 degrees; stored -180..180 with the jump inside, today's
// refusal ("spans the antimeridian") is gone.
func TestContoursAcrossDateLine(t *testing.T) {
	nx, ny := 9, 4
	val := make([]float64, nx*ny)
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			d2 := math.Pow(2*float64(i-4), 2) + math.Pow(2*(float64(j)-1.5), 2)
			val[j*nx+i] = 1 + 1.6*math.Exp(-d2/32) + 0.05*float64(i)
		}
	}
	lonlat := func(x0 float64) ([]float64, []float64) {
		g, err := NewRegular(axis(x0, 2, nx), axis(-21, 2, ny))
		if err != nil {
			t.Fatal(err)
		}
		return g.Lon, g.Lat
	}
	lon, lat := lonlat(172)
	alon, alat := lonlat(2)
	f, fr := GeoField(nx, ny, lon, lat, val, nil)
	if !fr.Crosses180() || f.SeamCells() != 0 {
		t.Fatalf("frame %v, %d seam cells", fr, f.SeamCells())
	}
	af, _ := GeoField(nx, ny, alon, alat, val, nil)
	levels := []float64{1.5, 2, 2.5}
	edges := []float64{math.Inf(-1), 1.5, 2, 2.5, math.Inf(1)}
	iso, err := Isolines(f, levels)
	if err != nil {
		t.Fatal(err)
	}
	aiso, _ := Isolines(af, levels)
	bands, err := Bands(f, edges)
	if err != nil {
		t.Fatal(err)
	}
	abands, _ := Bands(af, edges)
	same := func(a, b orb.Point) bool { return math.Abs(a[0]-b[0]-170) < 1e-9 && math.Abs(a[1]-b[1]) < 1e-12 }
	crossing := 0
	for k := range iso {
		if len(iso[k]) != len(aiso[k]) {
			t.Fatalf("level %v: %d lines, %d away from 180", levels[k], len(iso[k]), len(aiso[k]))
		}
		for l := range iso[k] {
			for m := range iso[k][l] {
				if !same(iso[k][l][m], aiso[k][l][m]) {
					t.Fatalf("level %v line %d point %d: %v, away %v", levels[k], l, m, iso[k][l][m], aiso[k][l][m])
				}
				if iso[k][l][m][0] > 180 {
					crossing++
				}
			}
		}
	}
	for b := range bands {
		for p := range bands[b] {
			for r := range bands[b][p] {
				for m, q := range bands[b][p][r] {
					if !same(q, abands[b][p][r][m]) {
						t.Fatalf("band %d: %v, away %v", b, q, abands[b][p][r][m])
					}
				}
			}
		}
	}
	if crossing == 0 {
		t.Error("no isoline point east of 180: the fixture does not test the date line")
	}
	// unshifted (the longitudes as cells.parquet holds them), the cells
	// across the seam are left out, not refused
	raw := &Field{NX: nx, NY: ny, Lon: lon, Lat: lat, Value: val}
	if n := raw.SeamCells(); n != ny-1 {
		t.Errorf("%d seam cells in [-180, 180), want %d", n, ny-1)
	}
}
