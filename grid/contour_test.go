package grid

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

// regularField samples fn on an nx x ny regular grid over [x0,x1] x [y0,y1];
// lon = x, lat = y, so lengths and areas are in coordinate units.
func regularField(nx, ny int, x0, x1, y0, y1 float64, fn func(x, y float64) float64) *Field {
	f := &Field{NX: nx, NY: ny}
	for j := 0; j < ny; j++ {
		y := y0 + (y1-y0)*float64(j)/float64(ny-1)
		for i := 0; i < nx; i++ {
			x := x0 + (x1-x0)*float64(i)/float64(nx-1)
			f.Lon = append(f.Lon, x)
			f.Lat = append(f.Lat, y)
			f.Value = append(f.Value, fn(x, y))
		}
	}
	return f
}

func cone(x, y float64) float64 { return math.Hypot(x, y) }

func mlsLength(m orb.MultiLineString) float64 {
	s := 0.0
	for _, l := range m {
		for k := 1; k < len(l); k++ {
			s += math.Hypot(l[k][0]-l[k-1][0], l[k][1]-l[k-1][1])
		}
	}
	return s
}

// mpArea is the net area: exteriors counter-clockwise (positive), holes
// clockwise (negative).
func mpArea(m orb.MultiPolygon) float64 {
	s := 0.0
	for _, p := range m {
		for _, r := range p {
			s += ringArea(r)
		}
	}
	return s
}

func checkRightHand(t *testing.T, name string, m orb.MultiPolygon) {
	t.Helper()
	for pi, p := range m {
		for ri, r := range p {
			if r[0] != r[len(r)-1] {
				t.Errorf("%s: polygon %d ring %d is not closed", name, pi, ri)
			}
			a := ringArea(r)
			if ri == 0 && a <= 0 {
				t.Errorf("%s: polygon %d exterior is not counter-clockwise (area %g); RFC 7946 section 3.1.6", name, pi, a)
			}
			if ri > 0 && a >= 0 {
				t.Errorf("%s: polygon %d hole %d is not clockwise (area %g); RFC 7946 section 3.1.6", name, pi, ri, a)
			}
		}
	}
}

// Analytic check: the level-r set of the cone sqrt(x^2+y^2) is a circle of
// radius r, length 2*pi*r, enclosing pi*r^2 (elementary geometry). With a node
// spacing h = 0.01 the marching-squares polygon differs from the circle by
// O(h^2/r^2) relative; we allow 1e-3 relative.
func TestIsolinesConeCircle(t *testing.T) {
	f := regularField(201, 201, -1, 1, -1, 1, cone)
	levels := []float64{0.25, 0.5, 0.8}
	lines, err := Isolines(f, levels)
	if err != nil {
		t.Fatal(err)
	}
	for k, r := range levels {
		if len(lines[k]) != 1 {
			t.Fatalf("level %v: %d lines, want 1 closed circle", r, len(lines[k]))
		}
		l := lines[k][0]
		if l[0] != l[len(l)-1] {
			t.Errorf("level %v: circle not closed", r)
		}
		got, want := mlsLength(lines[k]), 2*math.Pi*r
		if rel := math.Abs(got-want) / want; rel > 1e-3 {
			t.Errorf("level %v: length %.6f, want 2*pi*r = %.6f (rel err %.2g > 1e-3)", r, got, want, rel)
		} else {
			t.Logf("level %v: length %.6f vs 2*pi*r %.6f, rel err %.2g", r, got, want, rel)
		}
		for _, p := range l {
			if d := math.Abs(math.Hypot(p[0], p[1]) - r); d > 1e-4 {
				t.Fatalf("level %v: point %v is %g off the circle", r, p, d)
			}
		}
		// Values above the level (outside the circle) on the left: the
		// circle runs clockwise.
		if a := ringArea(orb.Ring(l)); a >= 0 {
			t.Errorf("level %v: circle runs counter-clockwise; high values should be on the left", r)
		}
	}
}

// Analytic check: band [0.3, 0.7) of the cone is an annulus of area
// pi*(0.7^2 - 0.3^2); band (-inf, 0.5) is the disk pi*0.5^2 (elementary geometry).
func TestBandsConeAnnulus(t *testing.T) {
	f := regularField(201, 201, -1, 1, -1, 1, cone)
	bands, err := Bands(f, []float64{math.Inf(-1), 0.3, 0.7, math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	disk, ann, outer := bands[0], bands[1], bands[2]
	for name, m := range map[string]orb.MultiPolygon{"disk": disk, "annulus": ann, "outer": outer} {
		checkRightHand(t, name, m)
	}
	if len(disk) != 1 || len(disk[0]) != 1 {
		t.Errorf("disk: %d polygons, want 1 without holes", len(disk))
	}
	if len(ann) != 1 || len(ann[0]) != 2 {
		t.Fatalf("annulus: want 1 polygon with 1 hole, got %d polygons", len(ann))
	}
	check := func(name string, got, want float64) {
		if rel := math.Abs(got-want) / want; rel > 1e-3 {
			t.Errorf("%s: area %.6f, want %.6f (rel err %.2g > 1e-3)", name, got, want, rel)
		} else {
			t.Logf("%s: area %.6f vs exact %.6f, rel err %.2g", name, got, want, rel)
		}
	}
	check("disk r=0.3", mpArea(disk), math.Pi*0.09)
	check("annulus 0.3..0.7", mpArea(ann), math.Pi*(0.49-0.09))
	check("square minus disk r=0.7", mpArea(outer), 4-math.Pi*0.49)
	// The three bands tile the square exactly (partition identity).
	if tot := mpArea(disk) + mpArea(ann) + mpArea(outer); math.Abs(tot-4) > 1e-9 {
		t.Errorf("bands cover %.12f, want the whole square 4", tot)
	}
}

// A curvilinear grid: the same cone sampled on a grid rotated by 30 degrees and
// stretched; the circle's length and area do not depend on the grid.
func TestContoursCurvilinear(t *testing.T) {
	nx, ny := 181, 241
	f := &Field{NX: nx, NY: ny}
	a := math.Pi / 6
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			u := -1.2 + 2.4*float64(i)/float64(nx-1)
			v := -1.2 + 2.4*float64(j)/float64(ny-1)
			x := u*math.Cos(a) - v*math.Sin(a)
			y := u*math.Sin(a) + v*math.Cos(a)
			f.Lon = append(f.Lon, x)
			f.Lat = append(f.Lat, y)
			f.Value = append(f.Value, cone(x, y))
		}
	}
	lines, err := Isolines(f, []float64{0.6})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := mlsLength(lines[0]), 2*math.Pi*0.6; math.Abs(got-want)/want > 1e-3 {
		t.Errorf("curvilinear circle length %.6f, want %.6f", got, want)
	}
	bands, err := Bands(f, []float64{math.Inf(-1), 0.6})
	if err != nil {
		t.Fatal(err)
	}
	checkRightHand(t, "curvilinear disk", bands[0])
	if got, want := mpArea(bands[0]), math.Pi*0.36; math.Abs(got-want)/want > 1e-3 {
		t.Errorf("curvilinear disk area %.6f, want %.6f", got, want)
	}
}

// Analytic check: for the plane f = x + 2y on the unit square, the level-1.23
// isoline is the straight segment x + 2y = 1.23 from (0, 0.615) to (1, 0.115),
// length sqrt(1 + 0.5^2); the region f >= 1.23 has area 1 - (0.615+0.115)/2
// (elementary geometry). Linear interpolation is exact for a linear field.
func TestContoursPlane(t *testing.T) {
	f := regularField(11, 11, 0, 1, 0, 1, func(x, y float64) float64 { return x + 2*y })
	lines, err := Isolines(f, []float64{1.23})
	if err != nil {
		t.Fatal(err)
	}
	if len(lines[0]) != 1 {
		t.Fatalf("%d lines, want one straight line", len(lines[0]))
	}
	for _, p := range lines[0][0] {
		if d := p[0] + 2*p[1] - 1.23; math.Abs(d) > 1e-12 {
			t.Errorf("point %v is off the line x+2y=1.23 by %g", p, d)
		}
	}
	if got, want := mlsLength(lines[0]), math.Sqrt(1.25); math.Abs(got-want) > 1e-12 {
		t.Errorf("length %.15f, want %.15f", got, want)
	}
	bands, err := Bands(f, []float64{1.23, math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	checkRightHand(t, "plane", bands[0])
	if got, want := mpArea(bands[0]), 1-(0.615+0.115)/2; math.Abs(got-want) > 1e-12 {
		t.Errorf("area %.15f, want %.15f", got, want)
	}
	// Latitude descending (rows from north to south): orientation must still
	// follow the right-hand rule in lon/lat.
	g := regularField(11, 11, 0, 1, 1, 0, func(x, y float64) float64 { return x + 2*y })
	gb, err := Bands(g, []float64{1.23, math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	checkRightHand(t, "plane, lat descending", gb[0])
	if got, want := mpArea(gb[0]), 1-(0.615+0.115)/2; math.Abs(got-want) > 1e-12 {
		t.Errorf("descending: area %.15f, want %.15f", got, want)
	}
}

// Saddle: corners 1, 0, 1, 0 (counter-clockwise from (0,0)); the centre value
// of the bilinear interpolant is their mean 0.5. At level 0.5 the high corners
// are joined (one hexagon of area 1 - 2*(0.5*0.5*0.5) = 0.75); at level 0.6 they
// are cut off separately (two triangles of area 0.5*0.4*0.4 = 0.08 each).
// Source of the rule: common practice (centre-value disambiguation).
func TestSaddleConsistent(t *testing.T) {
	f := &Field{NX: 2, NY: 2, Lon: []float64{0, 1, 0, 1}, Lat: []float64{0, 0, 1, 1}, Value: []float64{1, 0, 0, 1}}
	// Row-major: (0,0)=1, (1,0)=0, (0,1)=0, (1,1)=1.
	for _, tc := range []struct {
		level       float64
		nHigh, nLow int
		high        float64
	}{{0.5, 1, 2, 0.75}, {0.6, 2, 1, 0.16}} {
		lines, err := Isolines(f, []float64{tc.level})
		if err != nil {
			t.Fatal(err)
		}
		if len(lines[0]) != 2 {
			t.Errorf("level %v: %d isoline pieces, want 2", tc.level, len(lines[0]))
		}
		b, err := Bands(f, []float64{math.Inf(-1), tc.level, math.Inf(1)})
		if err != nil {
			t.Fatal(err)
		}
		if len(b[1]) != tc.nHigh || len(b[0]) != tc.nLow {
			t.Errorf("level %v: %d high and %d low polygons, want %d and %d", tc.level, len(b[1]), len(b[0]), tc.nHigh, tc.nLow)
		}
		if got := mpArea(b[1]); math.Abs(got-tc.high) > 1e-9 {
			t.Errorf("level %v: high area %v, want %v", tc.level, got, tc.high)
		}
		if got := mpArea(b[0]); math.Abs(got-(1-tc.high)) > 1e-9 {
			t.Errorf("level %v: low area %v, want %v", tc.level, got, 1-tc.high)
		}
		// The chords of the bands are the isoline segments: the high band's
		// perimeter is the isoline length plus the part of the square's
		// boundary where f >= level.
		perim := 0.0
		for _, p := range b[1] {
			for _, r := range p {
				perim += mlsLength(orb.MultiLineString{orb.LineString(r)})
			}
		}
		boundary := 4 * (1 - tc.level) // each edge goes 1 -> 0 linearly
		if got, want := perim, mlsLength(lines[0])+boundary; math.Abs(got-want) > 1e-9 {
			t.Errorf("level %v: band perimeter %v, want isolines + boundary = %v", tc.level, got, want)
		}
	}
}

// Consistency on a field with many saddles, f = sin(3x) cos(2y) + 0.3 sin(5(x+y)):
// (1) bands over (-inf, e1, ..., +inf) tile the domain (partition identity);
// (2) the perimeter of each band equals the lengths of its two isolines plus the
// part of the domain boundary inside the band (linear along boundary edges).
func TestBandsMatchIsolines(t *testing.T) {
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	f := regularField(61, 47, 0, 3, 0, 2.3, fn)
	edges := []float64{math.Inf(-1), -0.8, -0.3, 0, 0.25, 0.7, math.Inf(1)}
	bands, err := Bands(f, edges)
	if err != nil {
		t.Fatal(err)
	}
	lines, err := Isolines(f, edges[1:len(edges)-1])
	if err != nil {
		t.Fatal(err)
	}
	total := 0.0
	for b, m := range bands {
		checkRightHand(t, "band", m)
		total += mpArea(m)
		perim := 0.0
		for _, p := range m {
			for _, r := range p {
				perim += mlsLength(orb.MultiLineString{orb.LineString(r)})
			}
		}
		want := boundaryInBand(f, edges[b], edges[b+1])
		if b > 0 {
			want += mlsLength(lines[b-1])
		}
		if b < len(lines) {
			want += mlsLength(lines[b])
		}
		if math.Abs(perim-want) > 1e-6*want {
			t.Errorf("band %d: perimeter %.9f, want isolines + boundary %.9f", b, perim, want)
		}
	}
	if math.Abs(total-3*2.3) > 1e-9 {
		t.Errorf("bands cover %.12f, want %.12f", total, 3*2.3)
	}
}

// boundaryInBand is the length of the outer boundary of a regular field where
// lo <= f < hi, with f linear along each boundary edge.
func boundaryInBand(f *Field, lo, hi float64) float64 {
	s := 0.0
	edge := func(a, b int) {
		va, vb := f.Value[a], f.Value[b]
		l := math.Hypot(f.Lon[b]-f.Lon[a], f.Lat[b]-f.Lat[a])
		// fraction of [0,1] where lo <= va + t (vb - va) < hi
		t0, t1 := 0.0, 1.0
		clip := func(level float64, keepAbove bool) {
			if va == vb {
				if (va >= level) != keepAbove {
					t0, t1 = 1, 0
				}
				return
			}
			tc := CrossingFraction(va, vb, level)
			rising := vb > va
			if rising == keepAbove {
				t0 = math.Max(t0, tc)
			} else {
				t1 = math.Min(t1, tc)
			}
			if (va >= level) != (vb >= level) {
				return
			}
			if (va >= level) != keepAbove {
				t0, t1 = 1, 0
			}
		}
		if !math.IsInf(lo, -1) {
			clip(lo, true)
		}
		if !math.IsInf(hi, 1) {
			clip(hi, false)
		}
		if t1 > t0 {
			s += (t1 - t0) * l
		}
	}
	nx, ny := f.NX, f.NY
	for i := 0; i+1 < nx; i++ {
		edge(i, i+1)
		edge((ny-1)*nx+i, (ny-1)*nx+i+1)
	}
	for j := 0; j+1 < ny; j++ {
		edge(j*nx, (j+1)*nx)
		edge(j*nx+nx-1, (j+1)*nx+nx-1)
	}
	return s
}

// Masked cells are left out: with every node x > 0 masked, the cone's circle
// becomes a half circle (length pi*r, one open line) and the disk a half disk
// (area pi*r^2/2) (elementary geometry).
func TestContoursMasked(t *testing.T) {
	f := regularField(201, 201, -1, 1, -1, 1, cone)
	f.Mask = make([]bool, len(f.Value))
	for k := range f.Mask {
		f.Mask[k] = f.Lon[k] > 1e-12
	}
	f.Value[0] = math.NaN() // a NaN corner is masked too
	lines, err := Isolines(f, []float64{0.5})
	if err != nil {
		t.Fatal(err)
	}
	if len(lines[0]) != 1 {
		t.Fatalf("%d lines, want 1 half circle", len(lines[0]))
	}
	l := lines[0][0]
	if l[0] == l[len(l)-1] {
		t.Errorf("half circle should be open")
	}
	for _, p := range l {
		if p[0] > 1e-12 {
			t.Fatalf("point %v lies in the masked half", p)
		}
	}
	if got, want := mlsLength(lines[0]), math.Pi*0.5; math.Abs(got-want)/want > 1e-3 {
		t.Errorf("half circle length %.6f, want %.6f", got, want)
	}
	b, err := Bands(f, []float64{math.Inf(-1), 0.5})
	if err != nil {
		t.Fatal(err)
	}
	checkRightHand(t, "half disk", b[0])
	if got, want := mpArea(b[0]), math.Pi*0.25/2; math.Abs(got-want)/want > 1e-3 {
		t.Errorf("half disk area %.6f, want %.6f", got, want)
	}
}

// Values exactly equal to a level (common with packed data) count as above it
// and must not make rings touch themselves or lines stop.
func TestLevelOnNodes(t *testing.T) {
	// Quantised cone: values rounded to 0.1, level 0.5 hits many nodes exactly.
	f := regularField(41, 41, -1, 1, -1, 1, func(x, y float64) float64 { return math.Round(cone(x, y)*10) / 10 })
	lines, err := Isolines(f, []float64{0.5})
	if err != nil {
		t.Fatal(err)
	}
	if len(lines[0]) != 1 || lines[0][0][0] != lines[0][0][len(lines[0][0])-1] {
		t.Errorf("want one closed line, got %d lines", len(lines[0]))
	}
	b, err := Bands(f, []float64{math.Inf(-1), 0.5, math.Inf(1)})
	if err != nil {
		t.Fatal(err)
	}
	checkRightHand(t, "quantised", b[0])
	checkRightHand(t, "quantised", b[1])
	if tot := mpArea(b[0]) + mpArea(b[1]); math.Abs(tot-4) > 1e-9 {
		t.Errorf("bands cover %v, want 4", tot)
	}
	for _, m := range b {
		for _, p := range m {
			for _, r := range p {
				if c := selfCrossings(r); c > 0 {
					t.Errorf("ring with %d self-crossings", c)
				}
			}
		}
	}
}

// selfCrossings counts proper crossings between non-adjacent segments of a ring
// (orientation test, common practice). O(n^2): for small test rings only.
func selfCrossings(r orb.Ring) int {
	n := len(r) - 1
	cross := func(a, b, c orb.Point) float64 { return (b[0]-a[0])*(c[1]-a[1]) - (b[1]-a[1])*(c[0]-a[0]) }
	cnt := 0
	for i := 0; i < n; i++ {
		for j := i + 2; j < n; j++ {
			if i == 0 && j == n-1 {
				continue
			}
			p1, p2, q1, q2 := r[i], r[i+1], r[j], r[j+1]
			d1, d2 := cross(q1, q2, p1), cross(q1, q2, p2)
			d3, d4 := cross(p1, p2, q1), cross(p1, p2, q2)
			if ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0)) {
				cnt++
			}
		}
	}
	return cnt
}

func TestNiceLevels(t *testing.T) {
	for _, tc := range []struct {
		min, max float64
		n        int
		want     []float64
	}{
		{0, 10, 5, []float64{0, 2.5, 5, 7.5, 10}},
		{0.13, 0.87, 8, []float64{0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8}},
		{3.2, 47.9, 10, []float64{5, 10, 15, 20, 25, 30, 35, 40, 45}},
		{-1.3, 1.3, 6, []float64{-1, -0.5, 0, 0.5, 1}},
	} {
		got := NiceLevels(tc.min, tc.max, tc.n)
		if len(got) != len(tc.want) {
			t.Errorf("NiceLevels(%v, %v, %d) = %v, want %v", tc.min, tc.max, tc.n, got, tc.want)
			continue
		}
		for k := range got {
			if got[k] != tc.want[k] {
				t.Errorf("NiceLevels(%v, %v, %d) = %v, want %v", tc.min, tc.max, tc.n, got, tc.want)
				break
			}
		}
	}
	if NiceLevels(1, 1, 5) != nil || NiceLevels(0, 1, 0) != nil || NiceLevels(math.NaN(), 1, 3) != nil {
		t.Error("degenerate input should give nil")
	}
}

func TestFieldErrors(t *testing.T) {
	if _, err := Isolines(&Field{NX: 1, NY: 5, Lon: make([]float64, 5), Lat: make([]float64, 5), Value: make([]float64, 5)}, []float64{1}); err == nil {
		t.Error("1-wide field accepted")
	}
	if _, err := Isolines(&Field{NX: 2, NY: 2, Lon: make([]float64, 3), Lat: make([]float64, 4), Value: make([]float64, 4)}, []float64{1}); err == nil {
		t.Error("short Lon accepted")
	}
	// a cell across the seam of its frame is left out (GeoField shifts a
	// region across 180 degrees into 0..360 first, so only a grid that
	// wraps round the globe has such cells)
	f := &Field{NX: 2, NY: 2, Lon: []float64{179, -179, 179, -179}, Lat: []float64{0, 0, 1, 1}, Value: []float64{0, 1, 0, 1}}
	if iso, err := Isolines(f, []float64{0.5}); err != nil || len(iso[0]) != 0 || f.SeamCells() != 1 {
		t.Errorf("antimeridian cell: isolines %v, %v, %d seam cells; want none, left out", iso, err, f.SeamCells())
	}
	if iso, _ := Isolines(&Field{NX: 2, NY: 2, Lon: []float64{179, 181, 179, 181}, Lat: f.Lat, Value: f.Value}, []float64{0.5}); len(iso[0]) != 1 || iso[0][0][0][0] != 180 {
		t.Errorf("the same cell in 0..360: isolines %v, want one through 180", iso)
	}
	g := regularField(3, 3, 0, 1, 0, 1, cone)
	if _, err := Bands(g, []float64{1, 0.5}); err == nil {
		t.Error("decreasing band edges accepted")
	}
}

func BenchmarkIsolines(b *testing.B) {
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	f := regularField(500, 500, 0, 6, 0, 6, fn)
	levels := NiceLevels(-1.3, 1.3, 10)
	b.ResetTimer()
	for n := 0; n < b.N; n++ {
		if _, err := Isolines(f, levels); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBands(b *testing.B) {
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	f := regularField(500, 500, 0, 6, 0, 6, fn)
	edges := append(append([]float64{math.Inf(-1)}, NiceLevels(-1.3, 1.3, 10)...), math.Inf(1))
	b.ResetTimer()
	for n := 0; n < b.N; n++ {
		if _, err := Bands(f, edges); err != nil {
			b.Fatal(err)
		}
	}
}
