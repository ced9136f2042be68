package grid

// Longitude wrap: the continuous longitude frame of a region (-180..180, or
// 0..360 for a region across 180 degrees), which every geometric step works
// in, and the cut of geometry at the antimeridian that RFC 7946 asks of
// GeoJSON (and its inverse, for the products kept in the frame).

import (
	"math"
	"sort"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// Frame is a continuous longitude frame: longitudes in [West, West+360).
// West is -180 (the usual frame) or 0 (the frame of a region across 180
// degrees east/west). Centre is the middle of the region's extent in the
// frame, which Rejoin uses to put pieces of geometry back beside the region.
type Frame struct {
	West   float64
	Centre float64
}

// Crosses180 reports whether the frame is 0..360, the frame of a region
// across 180 degrees.
func (f Frame) Crosses180() bool { return f.West == 0 }

// String is the frame as "-180..180" or "0..360".
func (f Frame) String() string {
	if f.Crosses180() {
		return "0..360"
	}
	return "-180..180"
}

// Shift maps lon (degrees, any 360-degree convention) into the frame,
// [West, West+360); a longitude already in it is returned as it is (bit for
// bit), NaN stays NaN.
func (f Frame) Shift(lon float64) float64 {
	if lon >= f.West && lon < f.West+360 || math.IsNaN(lon) {
		return lon
	}
	l := math.Mod(lon-f.West, 360)
	if l < 0 {
		l += 360
	}
	r := l + f.West
	if r >= f.West+360 { // l within rounding of 360
		r = f.West
	}
	return r
}

// ShiftAll returns the longitudes mapped into the frame (a new slice).
func (f Frame) ShiftAll(lons []float64) []float64 {
	out := make([]float64, len(lons))
	for i, v := range lons {
		out[i] = f.Shift(v)
	}
	return out
}

// LonFrame returns the continuous longitude frame of a region given by the
// longitudes of its points (degrees, any 360-degree convention; NaN and ±Inf
// are ignored): 0..360 when the region crosses 180 degrees and not 0, else
// -180..180, the frame of every region that does not cross 180 degrees (and
// of one that wraps round the globe). This is the one function that says in
// which frame a region's geometry is computed: grid construction (the
// canonical column order), contours, cell edges and areas, outlines,
// rasters, layers and maps all use it.
//
// Method (ours): the widest stretch of the circle of longitudes without a
// point is where a region ends. g180 is the empty stretch that holds 180
// degrees (the points in [-180, 180): min + 360 - max), g0 the one that
// holds 0 degrees (the points in [0, 360): min + 360 - max). When g0 > g180
// the region's ends lie about 0 and it is continuous across 180: 0..360.
// When the region crosses neither, g0 and g180 are the same stretch (equal
// but for rounding: within 1e-9 degree counts as equal); when it crosses
// both (a global grid), both are one spacing: a tie keeps -180..180.
func LonFrame(lons []float64) Frame {
	min180, max180 := math.Inf(1), math.Inf(-1)
	min0, max0 := math.Inf(1), math.Inf(-1)
	w180, w0 := Frame{West: -180}, Frame{West: 0}
	n := 0
	for _, v := range lons {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		n++
		a, b := w180.Shift(v), w0.Shift(v)
		min180, max180 = math.Min(min180, a), math.Max(max180, a)
		min0, max0 = math.Min(min0, b), math.Max(max0, b)
	}
	if n == 0 {
		return Frame{West: -180}
	}
	// the two are computed from different representations of the same
	// longitudes and may differ by rounding where they are the same
	// stretch: 0..360 only when g0 is wider by more than that
	g180, g0 := min180+360-max180, min0+360-max0
	if g0 > g180+1e-9 {
		return Frame{West: 0, Centre: (min0 + max0) / 2}
	}
	return Frame{West: -180, Centre: (min180 + max180) / 2}
}

// BBox is the RFC 7946 (section 5) bounding box [west, south, east, north]
// of the points with finite positions, in degrees: west and east are the
// region's ends in its frame (LonFrame) given in [-180, 180], so that a
// region across 180 degrees has west > east (RFC 7946 section 5.2, and
// GeoParquet's bbox, which follows it). ok is false when no point has a
// finite position.
func BBox(lons, lats []float64) (bb [4]float64, ok bool) {
	fr := LonFrame(lons)
	w, e := math.Inf(1), math.Inf(-1)
	s, n := math.Inf(1), math.Inf(-1)
	for i := range lons {
		x, y := lons[i], lats[i]
		if math.IsNaN(x) || math.IsNaN(y) || math.IsInf(x, 0) || math.IsInf(y, 0) {
			continue
		}
		x = fr.Shift(x)
		w, e = math.Min(w, x), math.Max(e, x)
		s, n = math.Min(s, y), math.Max(n, y)
	}
	if math.IsInf(w, 1) {
		return [4]float64{math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)}, false
	}
	// back to [-180, 180] (exact: x - 360 for x in [180, 360) loses no bit)
	if w >= 180 {
		w -= 360
	}
	if e > 180 {
		e -= 360
	}
	return [4]float64{w, s, e, n}, true
}

// isSeam reports whether x is an antimeridian (180 + 360 k degrees).
func isSeam(x float64) bool { return NormLon(x) == -180 }

// seamsIn lists the antimeridians 180 + 360 k strictly between lo and hi.
func seamsIn(lo, hi float64) []float64 {
	var out []float64
	for x := 180 + 360*math.Floor((lo-180)/360); x < hi; x += 360 {
		if x > lo {
			out = append(out, x)
		}
	}
	return out
}

// shiftInto returns the shift by a multiple of 360 degrees that brings the
// middle of [lo, hi] nearest to centre.
func shiftInto(lo, hi, centre float64) float64 {
	return -360 * math.Round(((lo+hi)/2-centre)/360)
}

func translate(pts []orb.Point, dx float64) {
	if dx == 0 {
		return
	}
	for k := range pts {
		pts[k][0] += dx
	}
}

// CutLines cuts lines given in a continuous longitude frame (0..360, or any
// other) at the antimeridian, as RFC 7946 section 3.1.9 asks of GeoJSON:
// a line is split where it crosses a meridian 180 + 360 k, the crossing
// point (linear in lon/lat, RFC 7946 section 3.1.1) ending one piece and
// starting the next, and every piece is shifted by a multiple of 360 degrees
// into [-180, 180]. So no segment spans more than 180 degrees of longitude
// and a line from 170 E to 170 W becomes two pieces, [170, 180] and [-180,
// -170]. A closed line cut into pieces is rejoined where its first and last
// pieces meet. Lines already in [-180, 180] come back as they are.
func CutLines(mls orb.MultiLineString) orb.MultiLineString {
	out := orb.MultiLineString{}
	for _, ls := range mls {
		if len(ls) == 0 {
			continue
		}
		b := ls.Bound()
		pieces := []orb.LineString{append(orb.LineString(nil), ls...)}
		for _, X := range seamsIn(b.Min[0], b.Max[0]) {
			var next []orb.LineString
			for _, p := range pieces {
				next = append(next, splitLine(p, X)...)
			}
			pieces = next
		}
		closed := len(ls) > 2 && ls[0] == ls[len(ls)-1]
		if closed && len(pieces) > 1 {
			first, last := pieces[0], pieces[len(pieces)-1]
			if last[len(last)-1] == first[0] && !isSeam(first[0][0]) {
				pieces[0] = append(append(orb.LineString(nil), last...), first[1:]...)
				pieces = pieces[:len(pieces)-1]
			}
		}
		for _, p := range pieces {
			pb := p.Bound()
			translate(p, shiftInto(pb.Min[0], pb.Max[0], 0))
			out = append(out, p)
		}
	}
	return out
}

// splitLine splits a line at the meridian X. A point on X goes with the side
// of the points before it (the first side reached, for a line starting on
// X); the line is split where it passes from x < X to x > X or back,
// through a point on X or the crossing point of a segment.
func splitLine(ls orb.LineString, X float64) []orb.LineString {
	side := func(p orb.Point) int {
		switch {
		case p[0] < X:
			return -1
		case p[0] > X:
			return 1
		}
		return 0
	}
	var out []orb.LineString
	cur := orb.LineString{}
	s := 0 // side of the current piece (0: not yet known)
	for k, p := range ls {
		ps := side(p)
		if k == 0 || ps == 0 || s == 0 || ps == s {
			cur = append(cur, p)
			if s == 0 {
				s = ps
			}
			continue
		}
		// p is on the other side than the current piece
		prev := ls[k-1]
		var c orb.Point
		if side(prev) == 0 {
			c = prev
		} else {
			c = crossAt(prev, p, X)
			cur = append(cur, c)
		}
		if len(cur) >= 2 {
			out = append(out, cur)
		}
		cur = orb.LineString{c, p}
		s = ps
	}
	if len(cur) >= 2 {
		out = append(out, cur)
	}
	return out
}

// onMeridian is where the edge a-b, whose ends lie on either side of the
// meridian X or on it, meets it: the end on X (in, the inner end, when both
// are), else the crossing point.
func onMeridian(a, b orb.Point, X float64, inner orb.Point) orb.Point {
	switch {
	case inner[0] == X:
		return inner
	case a[0] == X:
		return a
	case b[0] == X:
		return b
	}
	return crossAt(a, b, X)
}

// crossAt is the point of segment a-b (a and b strictly on either side of
// X) on the meridian X, linear in lon/lat: y = ya + (X - xa)/(xb - xa) (yb - ya).
// It is computed from a and b in the order given, so the two sides of a cut
// get the same point bit for bit.
func crossAt(a, b orb.Point, X float64) orb.Point {
	t := (X - a[0]) / (b[0] - a[0])
	return orb.Point{X, a[1] + t*(b[1]-a[1])}
}

// CutPolygons cuts polygons given in a continuous longitude frame at the
// antimeridian, as RFC 7946 section 3.1.9 asks of GeoJSON: a polygon across
// a meridian 180 + 360 k is split into the parts west and east of it (each
// a valid polygon of its own, right-hand rule kept: exterior rings
// counter-clockwise, holes clockwise), and every part is shifted by a
// multiple of 360 degrees into [-180, 180]. A rectangle from 170 E to 170 W
// becomes two polygons, [170, 180] and [-180, -170] (the example of RFC
// 7946 section 3.1.9). Polygons already in [-180, 180] come back as they are.
//
// Method (ours; a polygon split by a line): each ring is cut into chains of
// consecutive vertices on one side, a chain starting and ending on the
// meridian (a vertex on it counts as west of it, so both sides see the same
// crossing points); on the west side the boundary then runs north along the
// meridian from where a chain ends to the nearest point where one starts,
// on the east side south, which closes the parts' exterior rings; rings on
// one side only are kept whole, holes going to the part around them.
func CutPolygons(mp orb.MultiPolygon) orb.MultiPolygon {
	out := orb.MultiPolygon{}
	for _, p := range mp {
		if len(p) == 0 || len(p[0]) < 4 {
			continue
		}
		b := p[0].Bound()
		parts := []orb.Polygon{clonePolygon(p)}
		for _, X := range seamsIn(b.Min[0], b.Max[0]) {
			var next []orb.Polygon
			for _, q := range parts {
				next = append(next, splitPolygon(q, X, true)...)
				next = append(next, splitPolygon(q, X, false)...)
			}
			parts = next
		}
		for _, q := range parts {
			qb := q[0].Bound()
			dx := shiftInto(qb.Min[0], qb.Max[0], 0)
			for _, r := range q {
				translate(r, dx)
			}
			out = append(out, q)
		}
	}
	return out
}

func clonePolygon(p orb.Polygon) orb.Polygon {
	q := make(orb.Polygon, len(p))
	for k, r := range p {
		q[k] = append(orb.Ring(nil), r...)
	}
	return q
}

// chain is a run of ring vertices on one side of the meridian, from an
// entry point on it to an exit point on it.
type chain struct {
	pts           []orb.Point
	inKey, outKey seamKey // where it starts and ends on the meridian
	used          bool
}

// seamKey orders points on the meridian X: by latitude, then by the slope
// dy/dx of the edge that crosses there. Ties of latitude happen where a
// vertex lies on X; the cut is made as if X were moved east by an
// infinitesimal distance (the vertex then lies west of it), where each
// crossing lies at y + slope * epsilon.
type seamKey [2]float64

func (a seamKey) less(b seamKey) bool { return a[0] < b[0] || a[0] == b[0] && a[1] < b[1] }

func slope(a, b orb.Point) float64 { return (b[1] - a[1]) / (b[0] - a[0]) }

// splitPolygon returns the part of p west of X (west true; a point on X
// counts as west) or east of it.
func splitPolygon(p orb.Polygon, X float64, west bool) []orb.Polygon {
	in := func(q orb.Point) bool {
		if west {
			return q[0] <= X
		}
		return q[0] > X
	}
	var whole []orb.Ring
	var chains []*chain
	for _, r := range p {
		n := len(r) - 1 // r is closed
		start, nIn := -1, 0
		for k := 0; k < n; k++ {
			if in(r[k]) {
				nIn++
			} else if start < 0 {
				start = k
			}
		}
		if nIn == 0 {
			continue
		}
		if nIn == n {
			whole = append(whole, append(orb.Ring(nil), r...))
			continue
		}
		// walk the edges from a vertex outside
		var cur *chain
		for s := 0; s < n; s++ {
			a, b := r[(start+s)%n], r[(start+s+1)%n]
			ia, ib := in(a), in(b)
			switch {
			case !ia && ib: // entering
				cur = &chain{inKey: seamKey{0, slope(a, b)}}
				c := onMeridian(a, b, X, b)
				cur.inKey[0] = c[1]
				cur.pts = append(cur.pts, c)
				if c != b {
					cur.pts = append(cur.pts, b)
				}
			case ia && ib:
				if cur.pts[len(cur.pts)-1] != b {
					cur.pts = append(cur.pts, b)
				}
			case ia && !ib: // leaving
				c := onMeridian(a, b, X, a)
				if cur.pts[len(cur.pts)-1] != c {
					cur.pts = append(cur.pts, c)
				}
				cur.outKey = seamKey{c[1], slope(a, b)}
				chains = append(chains, cur)
				cur = nil
			}
		}
	}
	// link the chains along the meridian into rings
	var rings []orb.Ring
	for c0, ch := range chains {
		if ch.used {
			continue
		}
		ring := orb.Ring{}
		c := c0
		for guard := 0; guard <= len(chains); guard++ {
			chains[c].used = true
			for _, q := range chains[c].pts {
				if len(ring) == 0 || ring[len(ring)-1] != q {
					ring = append(ring, q)
				}
			}
			// the nearest start along the meridian: north of this end
			// on the west side, south of it on the east side
			out := chains[c].outKey
			best := -1
			for k, o := range chains {
				if o.used && k != c0 {
					continue
				}
				after := out.less(o.inKey)
				if !west {
					after = o.inKey.less(out)
				}
				if !after {
					continue
				}
				if best < 0 || (west && o.inKey.less(chains[best].inKey)) || (!west && chains[best].inKey.less(o.inKey)) {
					best = k
				}
			}
			if best < 0 || best == c0 {
				break
			}
			c = best
		}
		if ring[0] != ring[len(ring)-1] {
			ring = append(ring, ring[0])
		}
		rings = append(rings, ring)
	}
	return assemble(append(whole, rings...), X)
}

// assemble makes polygons of closed rings: anticlockwise rings are exterior
// rings, clockwise ones holes, each hole in the smallest exterior ring
// around the middle of its first edge. Rings of fewer than 3 distinct points
// or with every point on the meridian X (no area) are dropped.
func assemble(rings []orb.Ring, X float64) []orb.Polygon {
	type shell struct {
		r    orb.Ring
		area float64
	}
	var shells []shell
	var holes []orb.Ring
	for _, r := range rings {
		if len(r) < 4 {
			continue
		}
		onX := true
		for _, q := range r {
			onX = onX && q[0] == X
		}
		if onX {
			continue
		}
		a := ringArea(r)
		switch {
		case a > 0:
			shells = append(shells, shell{r, a})
		case a < 0:
			holes = append(holes, r)
		}
	}
	sort.SliceStable(shells, func(i, j int) bool { return shells[i].area < shells[j].area })
	polys := make([]orb.Polygon, len(shells))
	for k, s := range shells {
		polys[k] = orb.Polygon{s.r}
	}
	for _, h := range holes {
		m := orb.Point{(h[0][0] + h[1][0]) / 2, (h[0][1] + h[1][1]) / 2}
		for k, s := range shells {
			if planar.RingContains(s.r, m) {
				polys[k] = append(polys[k], h)
				break
			}
		}
	}
	// deterministic order: by the first vertex of the exterior ring
	sort.SliceStable(polys, func(a, b int) bool {
		pa, pb := polys[a][0][0], polys[b][0][0]
		if pa[0] != pb[0] {
			return pa[0] < pb[0]
		}
		return pa[1] < pb[1]
	})
	return polys
}

// RejoinLines is the inverse of CutLines for the products kept in a
// region's continuous frame (atlas.gpkg): every piece is shifted by a
// multiple of 360 degrees to lie beside the region (its middle nearest to
// fr.Centre), and pieces that meet on an antimeridian (one ending where the
// next starts) are joined into one line again.
func RejoinLines(mls orb.MultiLineString, fr Frame) orb.MultiLineString {
	pieces := make([]orb.LineString, 0, len(mls))
	for _, ls := range mls {
		if len(ls) == 0 {
			continue
		}
		p := append(orb.LineString(nil), ls...)
		b := p.Bound()
		translate(p, shiftInto(b.Min[0], b.Max[0], fr.Centre))
		pieces = append(pieces, p)
	}
	for joined := true; joined; {
		joined = false
		for a := 0; a < len(pieces) && !joined; a++ {
			end := pieces[a][len(pieces[a])-1]
			if !isSeam(end[0]) {
				continue
			}
			for b := range pieces {
				if b != a && pieces[b][0] == end {
					pieces[a] = append(pieces[a], pieces[b][1:]...)
					pieces = append(pieces[:b], pieces[b+1:]...)
					joined = true
					break
				}
			}
		}
	}
	out := orb.MultiLineString{}
	for _, p := range pieces {
		out = append(out, p)
	}
	return out
}

// RejoinPolygons is the inverse of CutPolygons for the products kept in a
// region's continuous frame (atlas.gpkg): every polygon is shifted by a
// multiple of 360 degrees to lie beside the region (its middle nearest to
// fr.Centre), then the parts that meet along an antimeridian are merged: an
// edge on an antimeridian that another part has in the opposite direction
// is inner (the cut) and removed, the remaining edges of those parts are
// linked into rings again (split into simple loops where a ring passes a
// vertex twice), and the rings sorted into exterior rings and holes as
// CutPolygons gives them. Polygons that meet no other come back as they are
// (shifted), first, in their order.
func RejoinPolygons(mp orb.MultiPolygon, fr Frame) orb.MultiPolygon {
	type edge struct{ a, b orb.Point }
	var polys []orb.Polygon
	count := map[edge]int{} // edges on an antimeridian, by direction
	for _, p := range mp {
		if len(p) == 0 || len(p[0]) < 4 {
			continue
		}
		q := clonePolygon(p)
		b := q[0].Bound()
		dx := shiftInto(b.Min[0], b.Max[0], fr.Centre)
		for _, r := range q {
			translate(r, dx)
			for k := 0; k+1 < len(r); k++ {
				if r[k][0] == r[k+1][0] && r[k][1] != r[k+1][1] && isSeam(r[k][0]) {
					count[edge{r[k], r[k+1]}]++
				}
			}
		}
		polys = append(polys, q)
	}
	// the cut: edges on an antimeridian present in both directions
	remove := map[edge]int{}
	for e, n := range count {
		if m := min(n, count[edge{e.b, e.a}]); m > 0 {
			remove[e] = m
		}
	}
	out := orb.MultiPolygon{}
	var edges []edge
	for _, q := range polys {
		cut := false
		for _, r := range q {
			for k := 0; k+1 < len(r) && !cut; k++ {
				cut = remove[edge{r[k], r[k+1]}] > 0
			}
		}
		if !cut {
			out = append(out, q)
			continue
		}
		for _, r := range q {
			for k := 0; k+1 < len(r); k++ {
				e := edge{r[k], r[k+1]}
				if e.a == e.b {
					continue
				}
				if remove[e] > 0 {
					remove[e]--
					continue
				}
				edges = append(edges, e)
			}
		}
	}
	outOf := map[orb.Point][]int{}
	for k, e := range edges {
		outOf[e.a] = append(outOf[e.a], k)
	}
	used := make([]bool, len(edges))
	var rings []orb.Ring
	for k0 := range edges {
		if used[k0] {
			continue
		}
		var path []orb.Point
		k := k0
		for {
			used[k] = true
			path = append(path, edges[k].a)
			next := -1
			for _, c := range outOf[edges[k].b] {
				if !used[c] {
					next = c
					break
				}
			}
			if next < 0 {
				break
			}
			k = next
		}
		for _, loop := range splitLoops(path) {
			rings = append(rings, append(orb.Ring(loop), loop[0]))
		}
	}
	for _, p := range assemble(rings, math.NaN()) {
		out = append(out, p)
	}
	return out
}

// Place puts a layer's geometry into the frame, for the planar steps (GEOS
// union and covers, the distance index) that must see it in one continuous
// longitude frame: each part (a point, a line, a polygon with its holes) is
// moved whole by a multiple of 360 degrees so that the middle of its
// longitude extent lies within 180 degrees of the frame's Centre. Parts are
// not cut or unwrapped: a part must already be continuous (no edge longer
// than 180 degrees of longitude, which CheckLine refuses), as a layer cut at
// 180 degrees (RFC 7946, 3.1.9) or given in 0..360 is; the pieces of a
// polygon cut at 180 degrees come out beside each other, so that their union
// is the one polygon. Coordinates of a part already in place are returned
// bit for bit. Geometries other than points, lines and polygons (and their
// Multi forms and collections) come back as they are.
func (f Frame) Place(g orb.Geometry) orb.Geometry {
	shift := func(pts []orb.Point) float64 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range pts {
			lo, hi = math.Min(lo, p[0]), math.Max(hi, p[0])
		}
		mid := (lo + hi) / 2
		if math.IsNaN(mid) || math.IsInf(mid, 0) {
			return 0
		}
		return 360 * math.Round((f.Centre-mid)/360)
	}
	moved := func(pts []orb.Point, dx float64) []orb.Point {
		out := make([]orb.Point, len(pts))
		for i, p := range pts {
			out[i] = orb.Point{p[0] + dx, p[1]}
		}
		return out
	}
	switch g := g.(type) {
	case orb.Point:
		if dx := shift([]orb.Point{g}); dx != 0 {
			return orb.Point{g[0] + dx, g[1]}
		}
		return g
	case orb.MultiPoint:
		out := make(orb.MultiPoint, len(g))
		for i, p := range g {
			out[i] = f.Place(p).(orb.Point)
		}
		return out
	case orb.LineString:
		if dx := shift(g); dx != 0 {
			return orb.LineString(moved(g, dx))
		}
		return g
	case orb.MultiLineString:
		out := make(orb.MultiLineString, len(g))
		for i, l := range g {
			out[i] = f.Place(l).(orb.LineString)
		}
		return out
	case orb.Polygon:
		if len(g) == 0 {
			return g
		}
		dx := shift(g[0])
		if dx == 0 {
			return g
		}
		out := make(orb.Polygon, len(g))
		for k, r := range g {
			out[k] = orb.Ring(moved(r, dx))
		}
		return out
	case orb.MultiPolygon:
		out := make(orb.MultiPolygon, len(g))
		for i, p := range g {
			out[i] = f.Place(p).(orb.Polygon)
		}
		return out
	case orb.Collection:
		out := make(orb.Collection, len(g))
		for i, x := range g {
			out[i] = f.Place(x)
		}
		return out
	}
	return g
}
