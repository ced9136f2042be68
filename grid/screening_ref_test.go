package grid

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/paulmach/orb"
)

// The geometry of screening against Debian's python3-pyproj (Geod: Karney
// 2013 geodesics, GeographicLib) and python3-shapely (GEOS) on
// testdata/screening/fixture.json; reference.py made reference.json.

type screenFixture struct {
	Pairs    [][4]float64               `json:"pairs"`
	Polygons map[string]json.RawMessage `json:"polygons"`
	Points   [][2]float64               `json:"points"`
	Lines    map[string][][][2]float64  `json:"lines"`
	Ports    [][2]float64               `json:"ports"`
	Rings    [][][2]float64             `json:"rings"`
}

type screenRef struct {
	Inverse  []float64            `json:"inverse_m"`
	Covers   map[string][]bool    `json:"covers"`
	Distance map[string][]float64 `json:"distance_m"`
	Area     []float64            `json:"ring_area_m2"`
}

func loadScreenFixture(t *testing.T) (*screenFixture, *screenRef, map[string]orb.MultiPolygon) {
	t.Helper()
	var fx screenFixture
	var ref screenRef
	for f, v := range map[string]any{"fixture.json": &fx, "reference.json": &ref} {
		b, err := os.ReadFile("../testdata/screening/" + f)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, v); err != nil {
			t.Fatal(f, err)
		}
	}
	ring := func(r [][2]float64) orb.Ring {
		out := make(orb.Ring, len(r))
		for i, p := range r {
			out[i] = orb.Point(p)
		}
		return out
	}
	poly := func(rs [][][2]float64) orb.Polygon {
		var p orb.Polygon
		for _, r := range rs {
			p = append(p, ring(r))
		}
		return p
	}
	shapes := map[string]orb.MultiPolygon{}
	for _, k := range []string{"holey", "concave"} {
		var rs [][][2]float64
		if err := json.Unmarshal(fx.Polygons[k], &rs); err != nil {
			t.Fatal(err)
		}
		shapes[k] = orb.MultiPolygon{poly(rs)}
	}
	var mp [][][][2]float64
	if err := json.Unmarshal(fx.Polygons["multi"], &mp); err != nil {
		t.Fatal(err)
	}
	for _, p := range mp {
		shapes["multi"] = append(shapes["multi"], poly(p))
	}
	return &fx, &ref, shapes
}

func TestInverseAgainstPyproj(t *testing.T) {
	fx, ref, _ := loadScreenFixture(t)
	worst := 0.0
	for k, p := range fx.Pairs {
		d, ok := Inverse(p[0], p[1], p[2], p[3])
		if !ok {
			t.Errorf("pair %d %v: Inverse did not converge", k, p)
			continue
		}
		diff := math.Abs(d - ref.Inverse[k])
		worst = math.Max(worst, diff)
		// Vincenty (1975) is good to about 0.1 mm; allow 1 mm.
		if diff > 1e-3 {
			t.Errorf("pair %d %v: %.6f m, pyproj Geod.inv %.6f m (diff %.3g m)", k, p, d, ref.Inverse[k], diff)
		}
	}
	t.Logf("largest |Vincenty - Geod.inv| over %d pairs: %.3g m", len(fx.Pairs), worst)
	// nearly antipodal: Vincenty's iteration fails there, and says so
	if d, ok := Inverse(0, 0, 179.8, 0.1); ok {
		t.Logf("nearly antipodal pair converged: %v m", d)
	} else if !math.IsNaN(d) {
		t.Errorf("a failed Inverse must give NaN, got %v", d)
	}
}

func TestCoversAgainstShapely(t *testing.T) {
	fx, ref, shapes := loadScreenFixture(t)
	n := 0
	for k, mp := range shapes {
		cv, err := NewCoverage([]orb.Geometry{mp}, Frame{West: -180})
		if err != nil {
			t.Fatal(err)
		}
		for i, p := range fx.Points {
			got := cv.Covers(p[0], p[1])
			if got != ref.Covers[k][i] {
				t.Errorf("%s covers %v: %v, shapely %v", k, p, got, ref.Covers[k][i])
			}
			n++
		}
	}
	t.Logf("%d point-in-polygon answers equal shapely's covers", n)
}

func TestDistanceAgainstPyproj(t *testing.T) {
	fx, ref, shapes := loadScreenFixture(t)
	targets := map[string]*Target{}
	target := func(gs []orb.Geometry) *Target {
		tg, err := NewTarget(gs, Frame{West: -180})
		if err != nil {
			t.Fatal(err)
		}
		return tg
	}
	for k, mp := range shapes {
		targets[k] = target([]orb.Geometry{mp})
	}
	var coast []orb.Geometry
	for _, l := range fx.Lines["coast"] {
		ls := make(orb.LineString, len(l))
		for i, p := range l {
			ls[i] = orb.Point(p)
		}
		coast = append(coast, ls)
	}
	targets["coast"] = target(coast)
	var ports orb.MultiPoint
	for _, p := range fx.Ports {
		ports = append(ports, orb.Point(p))
	}
	targets["ports"] = target([]orb.Geometry{ports})
	worst := 0.0
	for k, tg := range targets {
		for i, p := range fx.Points {
			d, ok := tg.DistanceM(p[0], p[1])
			if !ok {
				t.Fatalf("%s from %v: no distance", k, p)
			}
			want := ref.Distance[k][i]
			diff := math.Abs(d - want)
			worst = math.Max(worst, diff)
			if diff > 1e-3 {
				t.Errorf("distance to %s from %v: %.4f m, pyproj %.4f m (diff %.3g m)", k, p, d, want, diff)
			}
		}
	}
	t.Logf("largest |distance - pyproj reference| over %d layer x point pairs: %.3g m", len(targets)*len(fx.Points), worst)
}

func TestRingAreaAgainstPyproj(t *testing.T) {
	fx, ref, _ := loadScreenFixture(t)
	worst := 0.0
	for k, r := range fx.Rings {
		ring := make(orb.Ring, len(r))
		for i, p := range r {
			ring[i] = orb.Point(p)
		}
		a := math.Abs(RingAreaM2(ring))
		rel := math.Abs(a-ref.Area[k]) / ref.Area[k]
		worst = math.Max(worst, rel)
		// pyproj's polygon of 4000 geodesic pieces per edge approximates the
		// lon/lat straight edge to about 1e-9 relative
		if rel > 1e-8 {
			t.Errorf("ring %d: %.3f m2, pyproj Geod.polygon_area_perimeter %.3f m2 (rel. diff %.3g)", k, a, ref.Area[k], rel)
		}
	}
	t.Logf("largest relative area difference vs pyproj: %.3g", worst)
}

func TestCellAreasAgainstPyproj(t *testing.T) {
	b, err := os.ReadFile("../testdata/screening/fixture.json")
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		Grid struct{ Lon, Lat []float64 } `json:"grid"`
	}
	var ref struct {
		Cells []float64 `json:"cell_area_m2"`
	}
	json.Unmarshal(b, &fx)
	rb, _ := os.ReadFile("../testdata/screening/reference.json")
	if err := json.Unmarshal(rb, &ref); err != nil {
		t.Fatal(err)
	}
	g, err := NewRegular(fx.Grid.Lon, fx.Grid.Lat) // latitudes stored descending
	if err != nil {
		t.Fatal(err)
	}
	a := CellAreasM2(g)
	if len(a) != len(ref.Cells) {
		t.Fatalf("%d cells, reference %d", len(a), len(ref.Cells))
	}
	worst := 0.0
	for i := range a {
		rel := math.Abs(a[i]-ref.Cells[i]) / ref.Cells[i]
		worst = math.Max(worst, rel)
		if rel > 1e-8 {
			t.Errorf("cell %d: %.2f m2, pyproj %.2f m2 (rel %.3g)", i, a[i], ref.Cells[i], rel)
		}
	}
	t.Logf("largest relative cell-area difference vs pyproj: %.3g", worst)
	pts, _ := NewPoints([]float64{0, 1}, []float64{0, 1})
	if CellAreasM2(pts) != nil {
		t.Error("a point set has no cell areas")
	}
}
