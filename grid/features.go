package grid

// Point-in-polygon and distances from a point to the features of a layer
// (points, lines, polygons) in lon/lat on WGS 84.
//
// Geometry follows RFC 7946 (GeoJSON), section 3.1.1: a line between two
// positions is straight in longitude and latitude. So point-in-polygon is
// planar in lon/lat (github.com/paulmach/orb/planar's ring test; exact for
// rings whose edges are straight in lon/lat, which is what GeoJSON and
// GeoPackage layers in EPSG:4326 mean), and the distance to a line is the
// shortest geodesic (Inverse) from the point to any point of that lon/lat
// straight segment. Rings must not cross the antimeridian (Validate refuses
// an edge longer than 180 degrees of longitude); a layer may give its
// longitudes in -180..180 (cut at 180 degrees as RFC 7946 asks) or in
// 0..360, and the point tested against it in either: the point is tried at
// its longitude and 360 degrees east and west of it. Distances are geodesics
// (Inverse takes the difference of longitudes modulo 360).

import (
	"math"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// Covers reports whether the polygon (outer ring, then holes) covers the
// point: inside or on its boundary, as GEOS's covers (shapely
// Polygon.covers): a point on the outer ring or on a hole's ring is covered,
// a point strictly inside a hole is not.
func Covers(p orb.Polygon, pt orb.Point) bool {
	if len(p) == 0 || !planar.RingContains(p[0], pt) { // boundary counts as in
		return false
	}
	for _, h := range p[1:] {
		if planar.RingContains(h, pt) && !onRing(h, pt) {
			return false
		}
	}
	return true
}

// MultiCovers reports whether any polygon of mp covers pt, the point taken
// at its longitude and at 360 degrees east and west of it (a layer and a
// grid may use different longitude frames, -180..180 and 0..360).
func MultiCovers(mp orb.MultiPolygon, pt orb.Point) bool {
	for _, p := range mp {
		for _, dx := range []float64{0, 360, -360} {
			if Covers(p, orb.Point{pt[0] + dx, pt[1]}) {
				return true
			}
		}
	}
	return false
}

// onRing reports whether pt lies exactly on an edge of r (collinear within
// floating point and inside the edge's bounding box).
func onRing(r orb.Ring, pt orb.Point) bool {
	for i := 0; i+1 < len(r); i++ {
		a, b := r[i], r[i+1]
		if pt[0] < math.Min(a[0], b[0]) || pt[0] > math.Max(a[0], b[0]) || pt[1] < math.Min(a[1], b[1]) || pt[1] > math.Max(a[1], b[1]) {
			continue
		}
		if (b[0]-a[0])*(pt[1]-a[1])-(b[1]-a[1])*(pt[0]-a[0]) == 0 {
			return true
		}
	}
	return false
}

// Target is a layer's geometry prepared for distances: its points, its
// segments (lines and polygon rings) and its polygons (a point they cover is
// at distance 0).
type Target struct {
	verts []orb.Point
	segs  []segment
	polys orb.MultiPolygon
}

type segment struct {
	a, b int     // vertex indices
	lenM float64 // upper bound of the segment's length on the ellipsoid, m
}

// NewTarget prepares the geometries (Point, MultiPoint, LineString,
// MultiLineString, Polygon, MultiPolygon; others are ignored) for DistanceM.
func NewTarget(geoms []orb.Geometry) *Target {
	t := &Target{}
	vid := map[orb.Point]int{}
	vertex := func(p orb.Point) int {
		if k, ok := vid[p]; ok {
			return k
		}
		vid[p] = len(t.verts)
		t.verts = append(t.verts, p)
		return len(t.verts) - 1
	}
	line := func(ls []orb.Point) {
		for i := 0; i+1 < len(ls); i++ {
			a, b := vertex(ls[i]), vertex(ls[i+1])
			if a != b {
				t.segs = append(t.segs, segment{a: a, b: b, lenM: pathLengthBound(ls[i], ls[i+1])})
			}
		}
		if len(ls) == 1 {
			vertex(ls[0])
		}
	}
	var add func(g orb.Geometry)
	add = func(g orb.Geometry) {
		switch g := g.(type) {
		case orb.Point:
			vertex(g)
		case orb.MultiPoint:
			for _, p := range g {
				vertex(p)
			}
		case orb.LineString:
			line(g)
		case orb.MultiLineString:
			for _, l := range g {
				line(l)
			}
		case orb.Ring:
			line(g)
		case orb.Polygon:
			t.polys = append(t.polys, g)
			for _, r := range g {
				line(r)
			}
		case orb.MultiPolygon:
			for _, p := range g {
				add(p)
			}
		case orb.Collection:
			for _, x := range g {
				add(x)
			}
		}
	}
	for _, g := range geoms {
		add(g)
	}
	return t
}

// Empty reports whether the target has nothing to measure to.
func (t *Target) Empty() bool { return len(t.verts) == 0 }

// pathLengthBound is an upper bound of the ellipsoidal length of the lon/lat
// straight segment a-b: the sum of the geodesics between 32 points along it
// (a chord sum, below the length by a relative O((kappa l)^2 / 24) for
// pieces of length l and geodesic curvature kappa), enlarged by 1e-5.
func pathLengthBound(a, b orb.Point) float64 {
	const n = 32
	s := 0.0
	prev := a
	for i := 1; i <= n; i++ {
		q := lerp(a, b, float64(i)/n)
		d, ok := Inverse(prev[0], prev[1], q[0], q[1])
		if !ok {
			return math.Inf(1)
		}
		s += d
		prev = q
	}
	return s * (1 + 1e-5)
}

func lerp(a, b orb.Point, t float64) orb.Point {
	return orb.Point{a[0] + t*(b[0]-a[0]), a[1] + t*(b[1]-a[1])}
}

// DistanceM is the geodesic distance in metres on WGS 84 from (lon, lat) to
// the nearest point of the target: 0 inside (or on) a polygon, else the
// minimum over its points and over every point of its lon/lat straight
// segments. ok is false if the target is empty or a geodesic could not be
// solved (see Inverse).
//
// Method: d = min over vertices of Inverse; a segment a-b of length at most
// L is skipped when (d_a + d_b - L)/2 >= d (by the triangle inequality no
// point of it is nearer); else the distance to it is minimised over its
// parameter t in [0, 1]: 16 samples, then golden-section search on the
// bracket around the best sample to |dt| < 1e-10.
func (t *Target) DistanceM(lon, lat float64) (float64, bool) {
	if len(t.verts) == 0 {
		return math.NaN(), false
	}
	p := orb.Point{lon, lat}
	if MultiCovers(t.polys, p) {
		return 0, true
	}
	dv := make([]float64, len(t.verts))
	best := math.Inf(1)
	for i, v := range t.verts {
		d, ok := Inverse(lon, lat, v[0], v[1])
		if !ok {
			return math.NaN(), false
		}
		dv[i] = d
		best = math.Min(best, d)
	}
	for _, s := range t.segs {
		if (dv[s.a]+dv[s.b]-s.lenM)/2 >= best {
			continue
		}
		d, ok := segmentDistance(p, t.verts[s.a], t.verts[s.b])
		if !ok {
			return math.NaN(), false
		}
		best = math.Min(best, d)
	}
	return best, true
}

// segmentDistance minimises Inverse(p, a + t (b - a)) over t in [0, 1].
func segmentDistance(p, a, b orb.Point) (float64, bool) {
	ok := true
	f := func(t float64) float64 {
		q := lerp(a, b, t)
		d, good := Inverse(p[0], p[1], q[0], q[1])
		if !good {
			ok = false
			return math.Inf(1)
		}
		return d
	}
	const n = 16
	bi, bd := 0, math.Inf(1)
	for i := 0; i <= n; i++ {
		if d := f(float64(i) / n); d < bd {
			bi, bd = i, d
		}
	}
	lo, hi := math.Max(0, float64(bi-1)/n), math.Min(1, float64(bi+1)/n)
	const g = 0.6180339887498949 // (sqrt 5 - 1)/2
	x1, x2 := hi-g*(hi-lo), lo+g*(hi-lo)
	f1, f2 := f(x1), f(x2)
	for hi-lo > 1e-10 {
		if f1 < f2 {
			hi, x2, f2 = x2, x1, f1
			x1 = hi - g*(hi-lo)
			f1 = f(x1)
		} else {
			lo, x1, f1 = x1, x2, f2
			x2 = lo + g*(hi-lo)
			f2 = f(x2)
		}
	}
	return math.Min(bd, math.Min(f1, f2)), ok
}
