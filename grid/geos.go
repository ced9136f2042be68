package grid

// Planar geometry by GEOS (Debian's libgeos-dev, through
// github.com/twpayne/go-geos): polygon validity with GEOS's reason and
// location, unions of a layer's polygons and point-in-polygon on prepared
// geometries.
//
// What GEOS does here is planar in lon/lat, which is exact for these
// questions: a GeoJSON or GeoPackage layer in EPSG:4326 has edges straight
// in longitude and latitude (RFC 7946, 3.1.1), so validity, union and
// covers are planar facts of its coordinates, once the geometry sits in one
// continuous longitude frame (Frame.Place). What stays hand-written, and
// why: distances (features.go) are geodesics on WGS 84, which GEOS's planar
// distance in degrees would get wrong by up to the cosine of the latitude;
// areas (area.go) are on the ellipsoid, where GEOS's Area would give square
// degrees; the outline of a set of cells (dissolve.go) is traced along the
// cell edges in index space, exactly and in a fixed vertex order, which a
// union of cell squares would give only up to vertex order (so the files
// would change), and dissolve_test.go checks it against GEOS's union.
//
// Concurrency: a GEOS context handle must not be used by two threads at
// once. go-geos guards each geos.Context with its own mutex (every call on a
// geometry locks its context), and this package never shares a context
// between callers: every function here makes its own, and a Coverage owns
// one, so its Covers may be called from several goroutines (the calls are
// serialised by that mutex; they are short, one prepared point test each).
// GEOS errors, which go-geos raises as panics, are returned as errors.
//
// Note: GEOS 3.11's C API has no GEOSPreparedContainsXY (3.12 added it);
// go-geos v0.20.1 compiles a stub that always answers false there, so this
// package makes a point geometry. It asks the prepared polygons whether
// they intersect the point, which for a point is the same as covers (in
// the interior or on the boundary), because GEOS 3.11's prepared covers has
// no fast path for a point: about 40 us a call on a ring of 10^5 vertices
// against about 1 us for intersects.

import (
	"fmt"
	"math"
	"regexp"
	"strconv"
	"sync"

	"github.com/paulmach/orb"
	"github.com/twpayne/go-geos"
)

// geosCall runs f, turning a GEOS error (a panic in go-geos) into an error.
func geosCall(what string, f func()) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("GEOS %s: %v", what, r)
		}
	}()
	f()
	return nil
}

func geosCoords(r []orb.Point) [][]float64 {
	flat := make([]float64, 2*len(r))
	out := make([][]float64, len(r))
	for i, p := range r {
		flat[2*i], flat[2*i+1] = p[0], p[1]
		out[i] = flat[2*i : 2*i+2 : 2*i+2]
	}
	return out
}

func geosPolygon(c *geos.Context, p orb.Polygon) *geos.Geom {
	rings := make([][][]float64, len(p))
	for k, r := range p {
		rings[k] = geosCoords(r)
	}
	return c.NewPolygon(rings)
}

// Invalidity is why GEOS finds a polygon invalid, and where.
type Invalidity struct {
	Reason   string    // GEOS's reason, e.g. "Self-intersection", "Hole lies outside shell"
	Location orb.Point // the point GEOS names
	HasPoint bool      // Location is set
}

var geosReason = regexp.MustCompile(`^(.*)\[(\S+) (\S+)\]$`)

// polygonInvalidity asks GEOS (IsValid, then IsValidReason, whose text is
// "Reason[x y]") whether p is a valid polygon under the OGC simple-features
// rules; nil when it is valid. p must have closed rings of at least 4
// positions (GEOS refuses to build others).
func polygonInvalidity(p orb.Polygon) (*Invalidity, error) {
	c := geos.NewContext()
	var inv *Invalidity
	err := geosCall("validity", func() {
		g := geosPolygon(c, p)
		defer g.Destroy()
		if g.IsValid() {
			return
		}
		reason := g.IsValidReason()
		inv = &Invalidity{Reason: reason}
		if m := geosReason.FindStringSubmatch(reason); m != nil {
			x, errx := strconv.ParseFloat(m[2], 64)
			y, erry := strconv.ParseFloat(m[3], 64)
			if errx == nil && erry == nil {
				inv.Reason, inv.Location, inv.HasPoint = m[1], orb.Point{x, y}, true
			}
		}
	})
	return inv, err
}

// Coverage is the polygons of a layer prepared for point-in-polygon: their
// union (GEOS UnaryUnion, when there are several), placed in a longitude
// frame (Frame.Place) and prepared (GEOS's indexed point-in-area locator).
type Coverage struct {
	ctx   *geos.Context
	union *geos.Geom
	prep  *geos.PrepGeom
	empty bool
	bbox  [4]float64 // lon min, lat min, lon max, lat max of the union

	mu  sync.Mutex // guards err
	err error
}

// NewCoverage prepares the polygons of geoms (Polygon and MultiPolygon;
// other geometries are ignored) in the frame fr. The polygons must be valid
// (CheckPolygon).
func NewCoverage(geoms []orb.Geometry, fr Frame) (*Coverage, error) {
	var polys orb.MultiPolygon
	for _, g := range geoms {
		switch g := fr.Place(g).(type) {
		case orb.Polygon:
			polys = append(polys, g)
		case orb.MultiPolygon:
			polys = append(polys, g...)
		}
	}
	cv := &Coverage{ctx: geos.NewContext(), empty: len(polys) == 0}
	if cv.empty {
		return cv, nil
	}
	err := geosCall("union of the layer's polygons", func() {
		parts := make([]*geos.Geom, len(polys))
		for k, p := range polys {
			parts[k] = geosPolygon(cv.ctx, p)
		}
		if len(parts) == 1 {
			cv.union = parts[0]
		} else {
			coll := cv.ctx.NewCollection(geos.TypeIDGeometryCollection, parts)
			cv.union = coll.UnaryUnion()
			coll.Destroy()
		}
		cv.prep = cv.union.Prepare()
		b := cv.union.Bounds()
		cv.bbox = [4]float64{b.MinX, b.MinY, b.MaxX, b.MaxY}
	})
	if err != nil {
		return nil, err
	}
	return cv, nil
}

// Covers reports whether the layer's polygons cover (lon, lat): inside or
// on a boundary, as GEOS's covers; a point strictly inside a hole is not
// covered. The point is tried at its longitude and 360 degrees east and west
// of it (the layer and the grid may use different frames). Safe for
// concurrent use (see the file comment).
func (cv *Coverage) Covers(lon, lat float64) bool {
	if cv.empty || math.IsNaN(lon) || math.IsNaN(lat) {
		return false
	}
	in := false
	err := geosCall("covers", func() {
		for _, dx := range []float64{0, 360, -360} {
			x := lon + dx
			if x < cv.bbox[0] || x > cv.bbox[2] || lat < cv.bbox[1] || lat > cv.bbox[3] {
				continue // outside the union's bounding box: not covered
			}
			pt := cv.ctx.NewPointFromXY(x, lat)
			in = cv.prep.Intersects(pt)
			pt.Destroy()
			if in {
				return
			}
		}
	})
	if err != nil {
		// a point and a valid polygon: GEOS has no reason to fail; if it
		// does, the first error is kept for Err and the point is not covered
		cv.mu.Lock()
		if cv.err == nil {
			cv.err = err
		}
		cv.mu.Unlock()
		return false
	}
	return in
}

// Err is the first GEOS error a Covers call met (nil if none): a caller
// that got answers from Covers checks it once at the end.
func (cv *Coverage) Err() error {
	cv.mu.Lock()
	defer cv.mu.Unlock()
	return cv.err
}

// Empty reports whether the coverage has no polygon.
func (cv *Coverage) Empty() bool { return cv.empty }

// AreaM2 is the area of the union on WGS 84 in m^2 (MultiPolygonAreaM2 of
// the union's rings: overlaps of the layer's polygons counted once).
func (cv *Coverage) AreaM2() (float64, error) {
	if cv.empty {
		return 0, nil
	}
	var mp orb.MultiPolygon
	err := geosCall("union rings", func() {
		mp = geosToMultiPolygon(cv.union)
	})
	return MultiPolygonAreaM2(mp), err
}

func geosToMultiPolygon(g *geos.Geom) orb.MultiPolygon {
	var mp orb.MultiPolygon
	ring := func(r *geos.Geom) orb.Ring {
		cs := r.CoordSeq().ToCoords()
		out := make(orb.Ring, len(cs))
		for i, c := range cs {
			out[i] = orb.Point{c[0], c[1]}
		}
		return out
	}
	poly := func(p *geos.Geom) {
		q := orb.Polygon{ring(p.ExteriorRing())}
		for k := 0; k < p.NumInteriorRings(); k++ {
			q = append(q, ring(p.InteriorRing(k)))
		}
		mp = append(mp, q)
	}
	switch g.TypeID() {
	case geos.TypeIDPolygon:
		poly(g)
	case geos.TypeIDMultiPolygon, geos.TypeIDGeometryCollection:
		for k := 0; k < g.NumGeometries(); k++ {
			if p := g.Geometry(k); p.TypeID() == geos.TypeIDPolygon {
				poly(p)
			}
		}
	}
	return mp
}
