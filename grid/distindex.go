package grid

// The distance index of a Target: a tree of boxes over its segments,
// searched branch-and-bound with a lower bound of the geodesic distance to a
// box (the chord to the box in earth-centred coordinates). Hand-written
// because the distance is a geodesic on WGS 84: GEOS's STRtree and
// nearest-point search measure planar distances in degrees, which do not
// bound geodesic ones (a degree of longitude is cos(lat) of a degree of
// latitude), so they could skip the nearest segment.

import (
	"math"

	"github.com/paulmach/orb"
)

// node is a box of the tree: a leaf holds segments s0..s1-1 of the Target,
// an inner node two children.
type node struct {
	lonLo, lonHi, latLo, latHi float64
	lo, hi                     [3]float64 // the box in ECEF (boxECEF)
	left, right                int32      // children (inner node); -1 for a leaf
	s0, s1                     int32      // segments (leaf)
}

const leafSegments = 8

// buildIndex makes the tree over t.segs in their order (consecutive
// segments of a line or ring lie beside each other, so halving the sequence
// gives compact boxes): each node halves its range, down to leaves of at
// most leafSegments segments.
func (t *Target) buildIndex() {
	if len(t.segs) == 0 {
		return
	}
	var build func(i, j int) int32
	build = func(i, j int) int32 {
		k := int32(len(t.tree))
		t.tree = append(t.tree, node{left: -1, right: -1, s0: int32(i), s1: int32(j)})
		if j-i > leafSegments {
			m := (i + j) / 2
			l := build(i, m)
			r := build(m, j)
			a, b := t.tree[l], t.tree[r]
			t.tree[k] = node{
				lonLo: math.Min(a.lonLo, b.lonLo), lonHi: math.Max(a.lonHi, b.lonHi),
				latLo: math.Min(a.latLo, b.latLo), latHi: math.Max(a.latHi, b.latHi),
				left: l, right: r,
			}
			n := &t.tree[k]
			n.lo, n.hi = boxECEF(n.lonLo, n.lonHi, n.latLo, n.latHi)
			return k
		}
		n := &t.tree[k]
		n.lonLo, n.latLo, n.lonHi, n.latHi = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for _, s := range t.segs[i:j] {
			for _, v := range []orb.Point{t.verts[s.a], t.verts[s.b]} {
				n.lonLo, n.lonHi = math.Min(n.lonLo, v[0]), math.Max(n.lonHi, v[0])
				n.latLo, n.latHi = math.Min(n.latLo, v[1]), math.Max(n.latHi, v[1])
			}
		}
		n.lo, n.hi = boxECEF(n.lonLo, n.lonHi, n.latLo, n.latHi)
		return k
	}
	build(0, len(t.segs))
}

// ecef is the earth-centred, earth-fixed position of (lon, lat) on the
// WGS 84 ellipsoid (height 0), m:
//
//	X = N cos phi cos lambda, Y = N cos phi sin lambda, Z = N (1 - e^2) sin phi,
//	N = a / sqrt(1 - e^2 sin^2 phi)
//
// (NIMA TR8350.2, 3rd ed., 2000, eq. 4-14).
func ecef(lon, lat float64) [3]float64 {
	const rad = math.Pi / 180
	e2 := WGS84F * (2 - WGS84F)
	sp, cp := math.Sincos(lat * rad)
	sl, cl := math.Sincos(lon * rad)
	n := WGS84A / math.Sqrt(1-e2*sp*sp)
	return [3]float64{n * cp * cl, n * cp * sl, n * (1 - e2) * sp}
}

// boxECEF returns a box in ECEF coordinates (ecef) that holds every point
// of the lon/lat box [lon0, lon1] x [lat0, lat1] (min then max per axis).
// Method (ours): X = r cos lambda and Y = r sin lambda, with the parallel's
// radius r = N cos phi falling with |phi| and cos, sin over the longitude
// interval taking their extremes at its ends or at the multiples of 90
// degrees inside it; X and Y lie between the products of those extremes;
// Z rises with phi.
func boxECEF(lon0, lon1, lat0, lat1 float64) (lo, hi [3]float64) {
	e2 := WGS84F * (2 - WGS84F)
	radius := func(lat float64) float64 {
		sp, cp := math.Sincos(lat * math.Pi / 180)
		return WGS84A / math.Sqrt(1-e2*sp*sp) * cp
	}
	rmin := math.Min(radius(lat0), radius(lat1))
	rmax := rmin
	if lat0 <= 0 && lat1 >= 0 {
		rmax = WGS84A
	} else {
		rmax = math.Max(radius(lat0), radius(lat1))
	}
	// contains reports whether lon0..lon1 holds deg + 360 k for some k
	contains := func(deg float64) bool {
		k := math.Ceil((lon0 - deg) / 360)
		return deg+360*k <= lon1
	}
	trig := func(f func(float64) float64, up, down float64) (float64, float64) {
		a, b := f(lon0*math.Pi/180), f(lon1*math.Pi/180)
		lo, hi := math.Min(a, b), math.Max(a, b)
		if contains(up) {
			hi = 1
		}
		if contains(down) {
			lo = -1
		}
		return lo, hi
	}
	prod := func(clo, chi float64) (float64, float64) {
		v := [4]float64{rmin * clo, rmin * chi, rmax * clo, rmax * chi}
		return math.Min(math.Min(v[0], v[1]), math.Min(v[2], v[3])), math.Max(math.Max(v[0], v[1]), math.Max(v[2], v[3]))
	}
	if lon1-lon0 >= 360 {
		lo[0], hi[0], lo[1], hi[1] = -rmax, rmax, -rmax, rmax
	} else {
		lo[0], hi[0] = prod(trig(math.Cos, 0, 180))
		lo[1], hi[1] = prod(trig(math.Sin, 90, -90))
	}
	z0, z1 := ecef(0, lat0)[2], ecef(0, lat1)[2]
	lo[2], hi[2] = math.Min(z0, z1), math.Max(z0, z1)
	return lo, hi
}

// lowerBoundM is a lower bound, in metres, of the geodesic distance on
// WGS 84 from the point at ECEF position p to any point of node n.
//
// The chord c from p to n's ECEF box (boxECEF) is at most the chord to any
// point of the box. A geodesic's curvature in space is the surface's normal
// curvature along it, at least 1/R with R = a / sqrt(1 - e^2), the largest
// radius of curvature of WGS 84 (at the poles; M(phi) and N(phi) grow with
// |phi| to that value; Snyder 1987, eqs. 4-18, 4-20). A plane arc whose
// curvature is at least 1/R is at least as long as the circular arc of
// radius R on the same chord, s >= 2 R asin(c / (2 R)); a geodesic on the
// ellipsoid is all but plane (ours: its torsion is of the order of the
// flattening times its curvature), and TestLowerBoundHolds checks the bound
// against Inverse on thousands of random pairs at every latitude. Less 1 um
// for rounding. It falls short of the geodesic by about
// s^3 / 24 (1/rho^2 - 1/R^2), rho the radius of curvature along it: about
// 1 m at 500 km in mid latitudes.
func lowerBoundM(p [3]float64, n *node) float64 {
	d2 := 0.0
	for k := 0; k < 3; k++ {
		if g := math.Max(0, math.Max(n.lo[k]-p[k], p[k]-n.hi[k])); g > 0 {
			d2 += g * g
		}
	}
	return 2*polarRadius*math.Asin(math.Min(1, math.Sqrt(d2)/(2*polarRadius))) - 1e-6
}

// polarRadius is the largest radius of curvature of WGS 84, that of the
// poles, a / sqrt(1 - e^2), m.
var polarRadius = WGS84A / math.Sqrt(1-WGS84F*(2-WGS84F))

// meridionalMin is the smallest radius of curvature of WGS 84,
// M(0) = a (1 - e^2), m.
var meridionalMin = WGS84A * (1 - WGS84F*(2-WGS84F))

// segmentLengthBound is an upper bound of the ellipsoidal length of the
// lon/lat straight segment a-b, m. Along it
// ds^2 = M^2 dphi^2 + N^2 cos^2 phi dlambda^2 (M, N: meridional and prime
// vertical radii of curvature; Snyder 1987, eqs. 4-18, 4-20), both at most
// their polar value a / sqrt(1 - e^2), and cos phi at most its largest
// value c on the segment's latitudes, so (ours)
//
//	L <= a / sqrt(1 - e^2) * sqrt(dphi^2 + c^2 dlambda^2)   (radians).
func segmentLengthBound(a, b orb.Point) float64 {
	const rad = math.Pi / 180
	rmax := WGS84A / math.Sqrt(1-WGS84F*(2-WGS84F))
	c := math.Max(math.Cos(a[1]*rad), math.Cos(b[1]*rad))
	if (a[1] <= 0) != (b[1] <= 0) {
		c = 1
	}
	return rmax * math.Hypot((b[1]-a[1])*rad, c*(b[0]-a[0])*rad)
}

// search is one DistanceM query.
type search struct {
	t    *Target
	p    orb.Point
	pe   [3]float64 // p in ECEF
	best float64
	ok   bool
}

func (s *search) visit(k int32) {
	if !s.ok {
		return
	}
	n := &s.t.tree[k]
	if n.left < 0 {
		s.leaf(n)
		return
	}
	a, b := n.left, n.right
	la, lb := lowerBoundM(s.pe, &s.t.tree[a]), lowerBoundM(s.pe, &s.t.tree[b])
	if lb < la {
		a, b, la, lb = b, a, lb, la
	}
	if la < s.best {
		s.visit(a)
	}
	if lb < s.best {
		s.visit(b)
	}
}

// leaf measures to the leaf's vertices, then to the segments the triangle
// inequality does not rule out.
func (s *search) leaf(n *node) {
	segs := s.t.segs[n.s0:n.s1]
	var dv [leafSegments][2]float64
	for k, sg := range segs {
		for e, v := range []int{sg.a, sg.b} {
			switch {
			case e == 1 && sg.b == sg.a:
				dv[k][1] = dv[k][0]
				continue
			case e == 0 && k > 0 && segs[k-1].b == v: // the vertex shared with the previous segment
				dv[k][0] = dv[k-1][1]
				continue
			}
			q := s.t.verts[v]
			d, ok := Inverse(s.p[0], s.p[1], q[0], q[1])
			if !ok {
				s.ok = false
				return
			}
			dv[k][e] = d
			s.best = math.Min(s.best, d)
		}
	}
	for k, sg := range segs {
		if sg.a == sg.b || (dv[k][0]+dv[k][1]-sg.lenM)/2 >= s.best || endMinimum(dv[k][0], dv[k][1], sg) {
			continue
		}
		d, ok := segmentDistance(s.p, s.t.verts[sg.a], s.t.verts[sg.b])
		if !ok {
			s.ok = false
			return
		}
		s.best = math.Min(s.best, d)
	}
}

// endMinimum reports whether the distance along the segment from a point at
// da from its start and db from its end is smallest at an end, so that the
// segment is no nearer than min(da, db) (which its vertices already gave):
// true when the triangle of sides da, db and the segment's chord c has an
// angle at a or b of more than 90 degrees plus a margin, by the law of
// cosines (da^2 + c^2 - db^2 < -2 da c m, or the same with a and b
// swapped). With an obtuse angle at a, the distance grows from a along the
// segment and, being unimodal along it (the assumption segmentDistance's
// golden-section search makes too), is smallest at a.
//
// The law of cosines is that of the plane; on the ellipsoid, a thin
// triangle's angles differ by its spherical excess (about da c / (2 R^2),
// below 1e-7 rad for a segment of 10 km at 1000 km), and a segment straight
// in lon/lat leaves the geodesic chord at an angle of about
// c tan|phi| / (2 R). The margin m (in cos of the angle) is 1e-3 plus twice
// those (ours); segments longer than 50 km, or within 1 degree of a pole,
// are never skipped.
func endMinimum(da, db float64, sg segment) bool {
	c := sg.chord
	if c <= 0 || c > 50e3 || sg.tanLat > 57 {
		return false
	}
	m := 1e-3 + 2*(da*c/(2*meridionalMin*meridionalMin)+c*sg.tanLat/(2*meridionalMin))
	return da*da+c*c-db*db < -2*da*c*m || db*db+c*c-da*da < -2*db*c*m
}
