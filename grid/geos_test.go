package grid

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"sync"
	"testing"

	"github.com/paulmach/orb"
)

// geosFixture is testdata/screening/geos_fixture.json (synthetic shapes);
// geos_reference.py made geos_reference.json from it with Debian's
// python3-shapely (explain_validity, covers) and python3-pyproj (Geod.inv).
type geosFixture struct {
	Invalid   map[string][][][2]float64 `json:"invalid"`
	Valid     map[string][][][2]float64 `json:"valid"`
	Across180 struct {
		Cut     [][][][2]float64 `json:"cut"`
		Shifted [][][2]float64   `json:"shifted"`
		Coast   [][][2]float64   `json:"coast"`
		Points  [][2]float64     `json:"points"`
	} `json:"across180"`
}

type geosRef struct {
	Validity  map[string]string `json:"validity"`
	Valid     map[string]string `json:"valid"`
	Covers180 []bool            `json:"covers180"`
	Coast     []float64         `json:"coast_distance_m"`
}

func loadGeosFixture(t *testing.T) (*geosFixture, *geosRef) {
	t.Helper()
	var fx geosFixture
	var ref geosRef
	for f, v := range map[string]any{"geos_fixture.json": &fx, "geos_reference.json": &ref} {
		b, err := os.ReadFile("../testdata/screening/" + f)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, v); err != nil {
			t.Fatal(f, err)
		}
	}
	return &fx, &ref
}

func toPolygon(rs [][][2]float64) orb.Polygon {
	var p orb.Polygon
	for _, r := range rs {
		ring := make(orb.Ring, len(r))
		for i, q := range r {
			ring[i] = orb.Point(q)
		}
		p = append(p, ring)
	}
	return p
}

// Validity: CheckPolygon's reason and location are shapely's
// explain_validity ("Reason[x y]"; shapely 1.8.5 calls the same GEOS
// validity rules through its own binding).
func TestValidityAgainstShapely(t *testing.T) {
	fx, ref := loadGeosFixture(t)
	for name, rs := range fx.Invalid {
		err := CheckPolygon(toPolygon(rs))
		want := ref.Validity[name]
		if err == nil {
			t.Errorf("%s: accepted; shapely: %s", name, want)
			continue
		}
		k := strings.Index(want, "[")
		reason, loc := want[:k], strings.Fields(strings.Trim(want[k:], "[]"))
		wantText := fmt.Sprintf(" at (%s, %s) (GEOS: %s)", loc[0], loc[1], reason)
		if !strings.Contains(err.Error(), wantText) {
			t.Errorf("%s: %v; want the reason and location %q (shapely %s)", name, err, wantText, want)
		}
	}
	for name, rs := range fx.Valid {
		if err := CheckPolygon(toPolygon(rs)); err != nil || ref.Valid[name] != "Valid Geometry" {
			t.Errorf("%s: %v; shapely: %s", name, err, ref.Valid[name])
		}
	}
	// the words the message gives a user for the common reasons
	for name, words := range map[string]string{"bow tie": "crosses itself", "hole outside": "hole outside the outer ring",
		"nested holes": "hole inside another hole", "interior cut in two": "cut its interior in two"} {
		if err := CheckPolygon(toPolygon(fx.Invalid[name])); err == nil || !strings.Contains(err.Error(), words) {
			t.Errorf("%s: %v, want %q", name, err, words)
		}
	}
}

// A large simple polygon is valid, and one crossing of two of its edges
// far from the start is found with its location (the O(n^2) check it
// replaces found it too, slowly): the location must be on the two edges.
func TestValidityLargeRing(t *testing.T) {
	n := 200_000
	r := make(orb.Ring, n+1)
	for k := 0; k < n; k++ {
		th := 2 * math.Pi * float64(k) / float64(n)
		rad := 2 * (1 + 0.1*math.Sin(37*th))
		r[k] = orb.Point{30 + rad*math.Cos(th), -40 + rad*math.Sin(th)}
	}
	r[n] = r[0]
	if err := CheckPolygon(orb.Polygon{r}); err != nil {
		t.Fatalf("star-shaped ring refused: %v", err)
	}
	// swap two neighbouring vertices: edges k-1..k+2 now cross
	k := 150_001
	bad := append(orb.Ring(nil), r...)
	bad[k], bad[k+1] = bad[k+1], bad[k]
	err := CheckPolygon(orb.Polygon{bad})
	if err == nil || !strings.Contains(err.Error(), "crosses itself at (") {
		t.Fatalf("crossing not found: %v", err)
	}
	inv, _ := polygonInvalidity(orb.Polygon{bad})
	lo, hi := bad[k-1], bad[k+2]
	x, y := inv.Location[0], inv.Location[1]
	if x < math.Min(lo[0], hi[0])-1e-9 || x > math.Max(lo[0], hi[0])+1e-9 || y < math.Min(lo[1], hi[1])-1e-9 || y > math.Max(lo[1], hi[1])+1e-9 {
		t.Errorf("location %v not among the swapped edges %v..%v", inv.Location, lo, hi)
	}
}

// Across 180 degrees: a polygon cut at 180 (RFC 7946) placed in the frame
// of a grid across 180 (0..360) covers the points shapely says the same
// polygon given in 0..360 covers, and its union is one polygon; distances to
// a coast cut at 180 are pyproj's (Geod.inv).
func TestAcross180AgainstReferences(t *testing.T) {
	fx, ref := loadGeosFixture(t)
	a := fx.Across180
	var lons []float64
	for _, p := range a.Points {
		lons = append(lons, p[0])
	}
	fr := LonFrame(lons)
	if !fr.Crosses180() {
		t.Fatalf("points across 180 should give the 0..360 frame, got %v", fr)
	}
	var cut orb.MultiPolygon
	for _, p := range a.Cut {
		cut = append(cut, toPolygon(p))
	}
	for _, c := range []struct {
		name  string
		geoms []orb.Geometry
		fr    Frame
	}{
		{"cut, frame 0..360", []orb.Geometry{cut}, fr},
		{"cut, frame -180..180", []orb.Geometry{cut}, Frame{West: -180}},
		{"given in 0..360", []orb.Geometry{toPolygon(a.Shifted)}, Frame{West: -180}},
	} {
		cv, err := NewCoverage(c.geoms, c.fr)
		if err != nil {
			t.Fatal(err)
		}
		for i, p := range a.Points {
			if got := cv.Covers(p[0], p[1]); got != ref.Covers180[i] {
				t.Errorf("%s: covers %v: %v, shapely %v", c.name, p, got, ref.Covers180[i])
			}
		}
		if c.fr.Crosses180() {
			if n := len(geosToMultiPolygon(cv.union)); n != 1 {
				t.Errorf("%s: the union of the two pieces has %d polygons, want 1", c.name, n)
			}
			got, _ := cv.AreaM2()
			want := PolygonAreaM2(toPolygon(a.Shifted))
			if math.Abs(got-want) > 1e-6*want {
				t.Errorf("%s: union area %.1f m2, the uncut polygon's %.1f m2", c.name, got, want)
			}
		}
	}
	var coast []orb.Geometry
	for _, l := range a.Coast {
		ls := make(orb.LineString, len(l))
		for i, q := range l {
			ls[i] = orb.Point(q)
		}
		coast = append(coast, ls)
	}
	for _, f := range []Frame{fr, {West: -180}} {
		tg, err := NewTarget(coast, f)
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i, p := range a.Points {
			d, ok := tg.DistanceM(p[0], p[1])
			if !ok || math.Abs(d-ref.Coast[i]) > 1e-3 {
				t.Errorf("frame %v: distance from %v to the coast: %.4f m (ok %v), pyproj %.4f m", f, p, d, ok, ref.Coast[i])
			}
			worst = math.Max(worst, math.Abs(d-ref.Coast[i]))
		}
		t.Logf("frame %v: largest |distance - pyproj| %.3g m", f, worst)
	}
}

// exhaustiveDistance is the search without the index: the minimum over
// every vertex (Inverse) and every segment (segmentDistance), as
// DistanceM computed it before the index.
func exhaustiveDistance(t *Target, lon, lat float64) float64 {
	if t.cover.Covers(lon, lat) {
		return 0
	}
	best := math.Inf(1)
	for _, v := range t.verts {
		d, _ := Inverse(lon, lat, v[0], v[1])
		best = math.Min(best, d)
	}
	for _, s := range t.segs {
		if s.a != s.b {
			d, _ := segmentDistance(orb.Point{lon, lat}, t.verts[s.a], t.verts[s.b])
			best = math.Min(best, d)
		}
	}
	return best
}

// The index prunes only what cannot be nearer: on a wiggly ring of 800
// vertices (synthetic) and a coast of two lines, DistanceM equals the
// exhaustive search bit for bit from points near, far and at high latitude.
func TestDistanceIndexExhaustive(t *testing.T) {
	n := 800
	r := make(orb.Ring, n+1)
	for k := 0; k < n; k++ {
		th := 2 * math.Pi * float64(k) / float64(n)
		rad := 3 * (1 + 0.2*math.Sin(7*th) + 0.03*math.Sin(61*th))
		r[k] = orb.Point{-20 + rad*math.Cos(th)/math.Cos(60*math.Pi/180), 60 + rad*math.Sin(th)}
	}
	r[n] = r[0]
	line := orb.LineString{{-40, 70}, {-35, 72}, {-30, 71.5}, {-28, 74}, {-10, 80}, {5, 79}}
	tg, err := NewTarget([]orb.Geometry{orb.Polygon{r}, line}, Frame{West: -180})
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	var mu sync.Mutex
	bad := 0
	pts := 0
	for i := -60.0; i <= 20; i += 8 {
		for j := 45.0; j <= 85; j += 5 {
			pts++
			wg.Add(1)
			go func(lon, lat float64) { // concurrent DistanceM calls on one Target
				defer wg.Done()
				got, ok := tg.DistanceM(lon, lat)
				want := exhaustiveDistance(tg, lon, lat)
				if !ok || got != want {
					mu.Lock()
					bad++
					if bad < 5 {
						t.Errorf("(%v, %v): indexed %.9f m, exhaustive %.9f m", lon, lat, got, want)
					}
					mu.Unlock()
				}
			}(i, j)
		}
	}
	wg.Wait()
	if bad > 0 {
		t.Errorf("%d of %d points differ", bad, pts)
	}
}

// lowerBoundM never exceeds the geodesic (Inverse, checked against pyproj
// in screening_ref_test.go) to any point of a box, at every latitude, and
// for a box that is a single point it is within 2e-5 of the geodesic out
// to 1000 km (the bound's shortfall, s^3/24 (1/rho^2 - 1/R^2), is below
// 1e-5 s there).
func TestLowerBoundHolds(t *testing.T) {
	rng := func(seed *uint64) float64 { // a small LCG: reproducible, no global state
		*seed = *seed*6364136223846793005 + 1442695040888963407
		return float64(*seed>>11) / (1 << 53)
	}
	seed := uint64(7)
	worstTight := 0.0
	for k := 0; k < 4000; k++ {
		plon, plat := -180+360*rng(&seed), -85+170*rng(&seed)
		// a box within about 10 degrees, some across 0 or 180 degrees of longitude
		lon0 := plon - 10 + 20*rng(&seed)
		lat0 := math.Max(-89, math.Min(88, plat-10+20*rng(&seed)))
		w, h := 3*rng(&seed), 3*rng(&seed)
		if k%4 == 0 {
			w, h = 0, 0
		}
		if k%4 == 1 { // a box across a multiple of 90 degrees, p at that longitude
			m := 90 * math.Round(plon/90)
			plon, lon0, w = m, m-w/2-0.01, w+0.02
		}
		n := &node{lonLo: lon0, lonHi: lon0 + w, latLo: lat0, latHi: math.Min(90, lat0+h)}
		n.lo, n.hi = boxECEF(n.lonLo, n.lonHi, n.latLo, n.latHi)
		lb := lowerBoundM(ecef(plon, plat), n)
		qlons := []float64{}
		for i := 0; i <= 8; i++ {
			qlons = append(qlons, n.lonLo+(n.lonHi-n.lonLo)*float64(i)/8)
		}
		for m := 90 * math.Ceil(n.lonLo/90); m <= n.lonHi; m += 90 {
			qlons = append(qlons, m) // where the box's extent in ECEF has an extreme
		}
		for _, qlon := range qlons {
			for j := 0; j <= 8; j++ {
				qlat := n.latLo + (n.latHi-n.latLo)*float64(j)/8
				d, ok := Inverse(plon, plat, qlon, qlat)
				if ok && lb > d {
					t.Fatalf("p (%v, %v), box %+v: bound %.6f m above the geodesic %.6f m to (%v, %v)", plon, plat, *n, lb, d, qlon, qlat)
				}
				if ok && w == 0 && d < 1e6 {
					worstTight = math.Max(worstTight, (d-lb)/math.Max(d, 1))
					if d-lb > 2e-5*d+1e-5 {
						t.Fatalf("p (%v, %v), point (%v, %v): bound %.6f m, geodesic %.6f m: not tight", plon, plat, qlon, qlat, lb, d)
					}
				}
			}
		}
	}
	t.Logf("largest relative shortfall of the bound for single points within 1000 km: %.3g", worstTight)
}
