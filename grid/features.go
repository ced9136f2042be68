package grid

// Point-in-polygon and distances from a point to the features of a layer
// (points, lines, polygons) in lon/lat on WGS 84.
//
// Geometry follows RFC 7946 (GeoJSON), section 3.1.1: a line between two
// positions is straight in longitude and latitude. So point-in-polygon is
// planar in lon/lat and done by GEOS (Coverage, geos.go: exact for rings
// whose edges are straight in lon/lat, which is what GeoJSON and GeoPackage
// layers in EPSG:4326 mean), and the distance to a line is the shortest
// geodesic (Inverse) from the point to any point of that lon/lat straight
// segment, hand-written (GEOS's distances are planar; see geos.go and
// distindex.go). Rings must not cross the antimeridian (CheckLine refuses
// an edge longer than 180 degrees of longitude); a layer may give its
// longitudes in -180..180 (cut at 180 degrees as RFC 7946 asks) or in
// 0..360: its parts are placed in the grid's frame (Frame.Place) and the
// point is tried at its longitude and 360 degrees east and west of it.
// Distances are geodesics (Inverse takes the difference of longitudes
// modulo 360).

import (
	"math"

	"github.com/paulmach/orb"
)

// Target is a layer's geometry prepared for distances: its points, its
// segments (lines and polygon rings), a tree of bounding boxes over them
// (distIndex), and its polygons as a GEOS coverage (a point they cover is at
// distance 0).
type Target struct {
	verts []orb.Point
	segs  []segment
	cover *Coverage
	tree  []node // tree[0] is the root (when there are segments)
}

type segment struct {
	a, b   int     // vertex indices (a == b: a lone point)
	lenM   float64 // upper bound of the segment's length on the ellipsoid, m (segmentLengthBound)
	chord  float64 // straight-line distance between its ends in ECEF, m (endMinimum)
	tanLat float64 // tan of the largest |latitude| of its ends (endMinimum)
}

func newSegment(a, b int, pa, pb orb.Point) segment {
	ea, eb := ecef(pa[0], pa[1]), ecef(pb[0], pb[1])
	phi := math.Max(math.Abs(pa[1]), math.Abs(pb[1])) * math.Pi / 180
	return segment{a: a, b: b, lenM: segmentLengthBound(pa, pb),
		chord:  math.Sqrt((ea[0]-eb[0])*(ea[0]-eb[0]) + (ea[1]-eb[1])*(ea[1]-eb[1]) + (ea[2]-eb[2])*(ea[2]-eb[2])),
		tanLat: math.Tan(phi)}
}

// NewTarget prepares the geometries (Point, MultiPoint, LineString,
// MultiLineString, Polygon, MultiPolygon; others are ignored) for DistanceM,
// each part placed in the frame fr (Frame.Place, the one function that puts
// a layer into a continuous frame). Polygons must be valid (CheckPolygon).
func NewTarget(geoms []orb.Geometry, fr Frame) (*Target, error) {
	t := &Target{}
	nv := 0
	for _, g := range geoms {
		nv += countPoints(g)
	}
	vid := make(map[orb.Point]int, nv)
	t.verts = make([]orb.Point, 0, nv)
	t.segs = make([]segment, 0, nv)
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
				t.segs = append(t.segs, newSegment(a, b, ls[i], ls[i+1]))
			}
		}
		if len(ls) == 1 {
			k := vertex(ls[0])
			t.segs = append(t.segs, segment{a: k, b: k})
		}
	}
	var add func(g orb.Geometry)
	add = func(g orb.Geometry) {
		switch g := g.(type) {
		case orb.Point:
			line([]orb.Point{g})
		case orb.MultiPoint:
			for _, p := range g {
				line([]orb.Point{p})
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
	placed := make([]orb.Geometry, len(geoms))
	for k, g := range geoms {
		placed[k] = fr.Place(g)
		add(placed[k])
	}
	cv, err := NewCoverage(placed, fr)
	if err != nil {
		return nil, err
	}
	t.cover = cv
	t.buildIndex()
	return t, nil
}

// Empty reports whether the target has nothing to measure to.
func (t *Target) Empty() bool { return len(t.verts) == 0 }

// Err is the first GEOS error met by DistanceM (whose answer was then not
// ok); nil if none.
func (t *Target) Err() error { return t.cover.Err() }

func lerp(a, b orb.Point, t float64) orb.Point {
	return orb.Point{a[0] + t*(b[0]-a[0]), a[1] + t*(b[1]-a[1])}
}

// DistanceM is the geodesic distance in metres on WGS 84 from (lon, lat) to
// the nearest point of the target: 0 inside (or on) a polygon (GEOS covers,
// Coverage), else the minimum over its points and over every point of its
// lon/lat straight segments. ok is false if the target is empty or a
// geodesic could not be solved (see Inverse). Safe for concurrent use.
//
// Method: a branch-and-bound search of the segment tree (distindex.go),
// nearer box first, which skips a box of segments when a lower bound of the
// geodesic distance to any point of it (lowerBoundM) is not below the best
// distance d found so far; in a leaf, d = min over its vertices of Inverse, and a segment a-b of
// length at most L is skipped when (d_a + d_b - L)/2 >= d (by the triangle
// inequality no point of it is nearer), and so is one whose nearest point
// is an end (endMinimum); else the distance to it is
// minimised over its parameter t in [0, 1]: 16 samples, then golden-section
// search on the bracket around the best sample to |dt| < 1e-10. The
// segments skipped are only ones that cannot hold a nearer point, so the
// result is the minimum over every vertex and segment, as an exhaustive
// search would find it.
func (t *Target) DistanceM(lon, lat float64) (float64, bool) {
	if len(t.verts) == 0 {
		return math.NaN(), false
	}
	if t.cover.Covers(lon, lat) {
		return 0, true
	}
	p := orb.Point{lon, lat}
	s := search{t: t, p: p, pe: ecef(lon, lat), best: math.Inf(1), ok: true}
	if len(t.tree) > 0 {
		s.visit(0)
	}
	if !s.ok || t.cover.Err() != nil {
		return math.NaN(), false
	}
	return s.best, true
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

// countPoints is the number of positions of g (a capacity hint).
func countPoints(g orb.Geometry) int {
	switch g := g.(type) {
	case orb.Point:
		return 1
	case orb.MultiPoint:
		return len(g)
	case orb.LineString:
		return len(g)
	case orb.Ring:
		return len(g)
	case orb.MultiLineString:
		n := 0
		for _, l := range g {
			n += len(l)
		}
		return n
	case orb.Polygon:
		n := 0
		for _, r := range g {
			n += len(r)
		}
		return n
	case orb.MultiPolygon:
		n := 0
		for _, p := range g {
			n += countPoints(p)
		}
		return n
	case orb.Collection:
		n := 0
		for _, x := range g {
			n += countPoints(x)
		}
		return n
	}
	return 0
}
