package grid

// Validity of constraint geometries in lon/lat (WGS 84).

import (
	"fmt"
	"math"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// CheckPosition refuses a position that is not a WGS 84 longitude/latitude
// (not finite, |lat| > 90 or lon outside [-180, 360]): usually a layer in a
// projected CRS.
func CheckPosition(p orb.Point) error {
	if math.IsNaN(p[0]) || math.IsNaN(p[1]) || math.IsInf(p[0], 0) || math.IsInf(p[1], 0) {
		return fmt.Errorf("position (%v, %v) is not finite", p[0], p[1])
	}
	if p[1] < -90 || p[1] > 90 || p[0] < -180 || p[0] > 360 {
		return fmt.Errorf("position (%v, %v) is not a longitude/latitude in degrees (a projected CRS?); reproject the layer to WGS 84 (EPSG:4326), e.g. ogr2ogr -t_srs EPSG:4326", p[0], p[1])
	}
	return nil
}

// CheckLine refuses a line of fewer than 2 positions, a bad position, or an
// edge longer than 180 degrees of longitude (crossing the antimeridian,
// which these layers cannot express; split the feature there).
func CheckLine(ls []orb.Point) error {
	if len(ls) < 2 {
		return fmt.Errorf("line of %d positions; a line needs at least 2", len(ls))
	}
	for i, p := range ls {
		if err := CheckPosition(p); err != nil {
			return err
		}
		if i > 0 && math.Abs(p[0]-ls[i-1][0]) > 180 {
			return fmt.Errorf("edge from (%v, %v) to (%v, %v) spans more than 180 degrees of longitude (crosses the antimeridian?); split the feature at 180 degrees", ls[i-1][0], ls[i-1][1], p[0], p[1])
		}
	}
	return nil
}

// CheckPolygon refuses an invalid polygon, as the OGC simple-features rules
// (and GEOS's IsValid) would, for the cases that change a point-in-polygon
// answer: a ring not closed or of fewer than 4 positions, a bad position or
// antimeridian edge (CheckLine), a ring that crosses or overlaps itself, or
// a hole with a vertex outside its shell. (Holes crossing each other or the
// shell are not looked for.)
func CheckPolygon(p orb.Polygon) error {
	if len(p) == 0 {
		return fmt.Errorf("polygon without rings")
	}
	for k, r := range p {
		what := "outer ring"
		if k > 0 {
			what = fmt.Sprintf("hole %d", k)
		}
		if len(r) < 4 {
			return fmt.Errorf("%s has %d positions; a ring needs at least 4 (closed)", what, len(r))
		}
		if r[0] != r[len(r)-1] {
			return fmt.Errorf("%s is not closed (first position (%v, %v), last (%v, %v))", what, r[0][0], r[0][1], r[len(r)-1][0], r[len(r)-1][1])
		}
		if err := CheckLine(r); err != nil {
			return fmt.Errorf("%s: %w", what, err)
		}
		if i, j, ok := selfIntersection(r); ok {
			return fmt.Errorf("%s crosses itself (edges %d and %d: (%v, %v)-(%v, %v) and (%v, %v)-(%v, %v)); repair it (e.g. ogr2ogr -makevalid, or shapely make_valid)",
				what, i, j, r[i][0], r[i][1], r[i+1][0], r[i+1][1], r[j][0], r[j][1], r[j+1][0], r[j+1][1])
		}
		if k > 0 {
			for _, v := range r[:len(r)-1] {
				if !planar.RingContains(p[0], v) {
					return fmt.Errorf("%s has the vertex (%v, %v) outside the outer ring; a hole must lie inside its shell", what, v[0], v[1])
				}
			}
		}
	}
	return nil
}

// selfIntersection finds two non-adjacent edges of a closed ring that touch
// or cross, or two adjacent ones that overlap (fold back).
func selfIntersection(r orb.Ring) (int, int, bool) {
	n := len(r) - 1 // edges
	for i := 0; i < n; i++ {
		a, b := r[i], r[i+1]
		for j := i + 1; j < n; j++ {
			c, d := r[j], r[j+1]
			if math.Max(a[0], b[0]) < math.Min(c[0], d[0]) || math.Max(c[0], d[0]) < math.Min(a[0], b[0]) ||
				math.Max(a[1], b[1]) < math.Min(c[1], d[1]) || math.Max(c[1], d[1]) < math.Min(a[1], b[1]) {
				continue
			}
			adjacent := j == i+1 || (i == 0 && j == n-1)
			if adjacent {
				// they share one vertex; they are bad only when collinear and folding back
				var o, p, q orb.Point // shared vertex o, other ends p and q
				if j == i+1 {
					o, p, q = b, a, d
				} else {
					o, p, q = a, b, c
				}
				if cross(o, p, q) == 0 && (p[0]-o[0])*(q[0]-o[0])+(p[1]-o[1])*(q[1]-o[1]) > 0 {
					return i, j, true
				}
				continue
			}
			if segmentsTouch(a, b, c, d) {
				return i, j, true
			}
		}
	}
	return 0, 0, false
}

func cross(o, a, b orb.Point) float64 {
	return (a[0]-o[0])*(b[1]-o[1]) - (a[1]-o[1])*(b[0]-o[0])
}

func onSegment(a, b, p orb.Point) bool {
	return math.Min(a[0], b[0]) <= p[0] && p[0] <= math.Max(a[0], b[0]) && math.Min(a[1], b[1]) <= p[1] && p[1] <= math.Max(a[1], b[1])
}

// segmentsTouch reports whether segments ab and cd share a point (the
// orientation test of Cormen et al., Introduction to Algorithms, 3rd ed.,
// section 33.1).
func segmentsTouch(a, b, c, d orb.Point) bool {
	d1, d2 := cross(c, d, a), cross(c, d, b)
	d3, d4 := cross(a, b, c), cross(a, b, d)
	if ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0)) {
		return true
	}
	return (d1 == 0 && onSegment(c, d, a)) || (d2 == 0 && onSegment(c, d, b)) ||
		(d3 == 0 && onSegment(a, b, c)) || (d4 == 0 && onSegment(a, b, d))
}
