package grid

// Contouring of a scalar field on a triangle mesh by marching triangles.
//
// The field is sampled at the vertices; on each triangle it is the linear
// interpolant of its three vertex values, so an isoline is one straight
// segment per crossed triangle (there are no saddles), joining the linearly
// interpolated crossings of two edges (CrossingFraction, shared with the
// grid contours). A band [lo, hi) within a triangle is the convex polygon
// where lo <= v < hi. Triangles with a masked or non-finite vertex are left
// out, and so is everywhere the mesh does not cover: band boundaries follow
// the mesh's outer edges and the edges of left-out triangles. Work is done
// in lon/lat, where the mesh is planar.

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"
)

// TriField is a scalar field on the vertices of a triangle mesh. Tri lists
// the vertices of each triangle (any orientation). A vertex is masked, and
// every triangle touching it left out, when its Value is NaN or ±Inf or
// Mask[k] is true. Mask may be nil.
type TriField struct {
	Lon, Lat, Value []float64
	Mask            []bool
	Tri             [][3]int32
}

// triPrep is a TriField checked and oriented: the valid triangles,
// counter-clockwise in lon/lat, and the mesh's edges.
type triPrep struct {
	f     *TriField
	tri   [][3]int32 // valid triangles, counter-clockwise
	tedge [][3]int32 // edge id of edge k (corner k to k+1) of each
	ea    []int32    // edge id -> its lower vertex
	eb    []int32    // edge id -> its higher vertex
	ecnt  []int8     // valid triangles using the edge
	edir  []int8     // +1 when its first triangle runs it from ea to eb
}

func (f *TriField) prepare() (*triPrep, error) {
	if f == nil {
		return nil, errors.New("grid: nil TriField")
	}
	n := len(f.Value)
	if len(f.Lon) != n || len(f.Lat) != n || f.Mask != nil && len(f.Mask) != n {
		return nil, fmt.Errorf("grid: triangle field with %d values, %d lon, %d lat and %d mask entries", n, len(f.Lon), len(f.Lat), len(f.Mask))
	}
	ok := func(k int32) bool {
		if k < 0 || int(k) >= n {
			return false
		}
		v := f.Value[k]
		return !math.IsNaN(v) && !math.IsInf(v, 0) && (f.Mask == nil || !f.Mask[k])
	}
	p := &triPrep{f: f}
	edges := map[[2]int32]int32{}
	for t, tr := range f.Tri {
		for _, k := range tr {
			if k < 0 || int(k) >= n {
				return nil, fmt.Errorf("grid: triangle %d refers to vertex %d of %d", t, k, n)
			}
		}
		if !ok(tr[0]) || !ok(tr[1]) || !ok(tr[2]) {
			continue
		}
		for k := 0; k < 3; k++ {
			a, b := tr[k], tr[(k+1)%3]
			if math.IsNaN(f.Lon[a]) || math.IsNaN(f.Lat[a]) || math.IsInf(f.Lon[a], 0) || math.IsInf(f.Lat[a], 0) {
				return nil, fmt.Errorf("grid: vertex %d has a value but no finite lon/lat", a)
			}
			if math.Abs(f.Lon[a]-f.Lon[b]) > 180 {
				return nil, fmt.Errorf("grid: triangle %d spans the antimeridian (lon %v to %v); contours across ±180° are not supported", t, f.Lon[a], f.Lon[b])
			}
		}
		area := triArea(f, tr)
		if area == 0 {
			continue // no extent: nothing to contour
		}
		if area < 0 {
			tr[1], tr[2] = tr[2], tr[1]
		}
		var te [3]int32
		for k := 0; k < 3; k++ {
			a, b := tr[k], tr[(k+1)%3]
			if a > b {
				a, b = b, a
			}
			id, seen := edges[[2]int32{a, b}]
			if !seen {
				id = int32(len(p.ea))
				edges[[2]int32{a, b}] = id
				dir := int8(1)
				if tr[k] != a {
					dir = -1
				}
				p.ea, p.eb, p.ecnt, p.edir = append(p.ea, a), append(p.eb, b), append(p.ecnt, 0), append(p.edir, dir)
			} else if (tr[k] == a) == (p.edir[id] == 1) {
				return nil, fmt.Errorf("grid: the two triangles at the edge between vertices %d and %d lie on the same side of it; the mesh folds over itself there", a, b)
			}
			if p.ecnt[id] == 2 {
				return nil, fmt.Errorf("grid: the edge between vertices %d and %d belongs to more than two triangles; the mesh overlaps itself", a, b)
			}
			p.ecnt[id]++
			te[k] = id
		}
		p.tri = append(p.tri, tr)
		p.tedge = append(p.tedge, te)
	}
	return p, nil
}

// triArea is twice the signed area of a triangle in lon/lat (shoelace
// formula, common practice), positive when counter-clockwise.
func triArea(f *TriField, t [3]int32) float64 {
	ax, ay := f.Lon[t[0]], f.Lat[t[0]]
	return (f.Lon[t[1]]-ax)*(f.Lat[t[2]]-ay) - (f.Lon[t[2]]-ax)*(f.Lat[t[1]]-ay)
}

// edgePoint is where the field crosses level along edge e (from its lower
// vertex), the same point for both triangles sharing the edge.
func (p *triPrep) edgePoint(e int32, level float64) orb.Point {
	a, b := p.ea[e], p.eb[e]
	f := p.f
	t := CrossingFraction(f.Value[a], f.Value[b], level)
	return orb.Point{f.Lon[a] + t*(f.Lon[b]-f.Lon[a]), f.Lat[a] + t*(f.Lat[b]-f.Lat[a])}
}

// TriIsolines returns, for each level, the isoline of f at that level as one
// MultiLineString in lon/lat, with the conventions of Isolines: values above
// the level on the left of each line, closed lines repeating their first
// point, values equal to a level counted as above it, an empty
// MultiLineString for a level never crossed.
func TriIsolines(f *TriField, levels []float64) ([]orb.MultiLineString, error) {
	p, err := f.prepare()
	if err != nil {
		return nil, err
	}
	for k, l := range levels {
		if math.IsNaN(l) || math.IsInf(l, 0) {
			return nil, fmt.Errorf("grid.TriIsolines: level %d is %v; levels must be finite numbers", k, l)
		}
	}
	ne := len(p.ea)
	segStart := make([]int32, ne)
	segEnd := make([]int32, ne)
	type seg struct{ from, to int32 }
	var segs []seg
	var used []bool
	out := make([]orb.MultiLineString, len(levels))
	for li, level := range levels {
		for e := range segStart {
			segStart[e], segEnd[e] = -1, -1
		}
		segs = segs[:0]
		for t, tr := range p.tri {
			var up [3]bool
			for k := 0; k < 3; k++ {
				up[k] = f.Value[tr[k]] >= level
			}
			exit, entry := -1, -1
			for k := 0; k < 3; k++ {
				a, b := up[k], up[(k+1)%3]
				if a && !b {
					exit = k
				} else if !a && b {
					entry = k
				}
			}
			if exit < 0 {
				continue
			}
			a, b := p.tedge[t][exit], p.tedge[t][entry]
			segStart[a] = int32(len(segs))
			segEnd[b] = int32(len(segs))
			segs = append(segs, seg{a, b})
		}
		used = append(used[:0], make([]bool, len(segs))...)
		mls := orb.MultiLineString{}
		trace := func(s int) {
			line := orb.LineString{p.edgePoint(segs[s].from, level)}
			for cur := s; cur >= 0 && !used[cur]; {
				used[cur] = true
				line = appendDistinct(line, p.edgePoint(segs[cur].to, level))
				cur = int(segStart[segs[cur].to])
			}
			if len(line) >= 2 {
				mls = append(mls, line)
			}
		}
		// Open lines first (they start where the mesh ends), then loops.
		for s := range segs {
			if !used[s] && segEnd[segs[s].from] < 0 {
				trace(s)
			}
		}
		for s := range segs {
			if !used[s] {
				trace(s)
			}
		}
		out[li] = mls
	}
	return out, nil
}

// TriBands returns, for each band [edges[b], edges[b+1]), the region of f
// whose values lie in the band as one MultiPolygon in lon/lat, with the
// conventions of Bands: right-hand rule (exterior rings counter-clockwise,
// holes clockwise), closed rings that do not cross or touch themselves, an
// empty MultiPolygon for a band never reached; the first edge may be -Inf
// and the last +Inf.
func TriBands(f *TriField, edges []float64) ([]orb.MultiPolygon, error) {
	p, err := f.prepare()
	if err != nil {
		return nil, err
	}
	if len(edges) < 2 {
		return nil, fmt.Errorf("grid.TriBands: need at least 2 band edges, got %d", len(edges))
	}
	for k := range edges {
		if math.IsNaN(edges[k]) {
			return nil, fmt.Errorf("grid.TriBands: band edge %d is NaN", k)
		}
		if k > 0 && !(edges[k] > edges[k-1]) {
			return nil, fmt.Errorf("grid.TriBands: band edges must increase strictly, but edges[%d]=%v <= edges[%d]=%v", k, edges[k], k-1, edges[k-1])
		}
	}
	out := make([]orb.MultiPolygon, len(edges)-1)
	for b := range out {
		mp, err := p.band(edges[b], edges[b+1])
		if err != nil {
			return nil, err
		}
		out[b] = mp
	}
	return out, nil
}

// Band vertex ids: a mesh vertex has id = its index; the crossing on edge e
// at the band's lower level has id N + 2e, at its upper level N + 2e + 1.

type triPt struct {
	id    int64
	on    [2]int8 // triangle edges the point lies on (-1: none)
	point orb.Point
}

func (p *triPrep) band(lo, hi float64) (orb.MultiPolygon, error) {
	f := p.f
	N := int64(len(f.Value))
	var segs []bandSeg
	cls := func(v float64) int {
		if v < lo {
			return 0
		}
		if v >= hi {
			return 2
		}
		return 1
	}
	var pts [9]triPt
	for t, tr := range p.tri {
		var v [3]float64
		var cl [3]int
		for k := 0; k < 3; k++ {
			v[k] = f.Value[tr[k]]
			cl[k] = cls(v[k])
		}
		if cl[0] == cl[1] && cl[1] == cl[2] && cl[0] != 1 {
			continue
		}
		// The band's polygon in this triangle: its corners in the band and
		// the crossings of lo and hi, walking the boundary counter-clockwise
		// (the region is convex and every vertex of it is on the boundary).
		np := 0
		for k := 0; k < 3; k++ {
			if cl[k] == 1 {
				pts[np] = triPt{id: int64(tr[k]), on: [2]int8{int8(k), int8((k + 2) % 3)}, point: orb.Point{f.Lon[tr[k]], f.Lat[tr[k]]}}
				np++
			}
			va, vb := v[k], v[(k+1)%3]
			e := p.tedge[t][k]
			var xs [2]triPt
			nx := 0
			for li, level := range [2]float64{lo, hi} {
				if (va >= level) != (vb >= level) {
					xs[nx] = triPt{id: N + 2*int64(e) + int64(li), on: [2]int8{int8(k), -1}, point: p.edgePoint(e, level)}
					nx++
				}
			}
			if nx == 2 && vb < va {
				xs[0], xs[1] = xs[1], xs[0] // meet the upper level first going down
			}
			for _, x := range xs[:nx] {
				pts[np] = x
				np++
			}
		}
		if np < 3 {
			continue
		}
		for s := 0; s < np; s++ {
			a, b := pts[s], pts[(s+1)%np]
			shared := int8(-1)
			for _, ea := range a.on {
				for _, eb := range b.on {
					if ea >= 0 && ea == eb {
						shared = ea
					}
				}
			}
			if shared >= 0 && p.ecnt[p.tedge[t][shared]] == 2 {
				continue // along an edge inside the valid mesh: the neighbour continues the band
			}
			segs = append(segs, bandSeg{a.id, b.id, int32(t)})
		}
	}
	return p.linkRings(segs, lo, hi)
}

func (p *triPrep) vertex(id int64, lo, hi float64) orb.Point {
	N := int64(len(p.f.Value))
	if id < N {
		return orb.Point{p.f.Lon[id], p.f.Lat[id]}
	}
	r := id - N
	level := lo
	if r%2 == 1 {
		level = hi
	}
	return p.edgePoint(int32(r/2), level)
}

// linkRings joins directed boundary segments (band on their left) into
// rings. Where several segments leave one vertex (regions meeting at a
// point), the ring takes the first one clockwise from the way it came in,
// so that it follows its own region and never touches itself; it then sorts
// the rings into exteriors (counter-clockwise) and holes.
func (p *triPrep) linkRings(segs []bandSeg, lo, hi float64) (orb.MultiPolygon, error) {
	order := make([]int, len(segs))
	for k := range order {
		order[k] = k
	}
	sort.SliceStable(order, func(a, b int) bool { return segs[order[a]].from < segs[order[b]].from })
	firstOut := func(id int64) int {
		return sort.Search(len(order), func(k int) bool { return segs[order[k]].from >= id })
	}
	used := make([]bool, len(segs))
	var rings []orb.Ring
	for _, s := range order {
		if used[s] {
			continue
		}
		start := segs[s].from
		ring := orb.Ring{p.vertex(start, lo, hi)}
		cur := s
		for {
			used[cur] = true
			to := segs[cur].to
			pt := p.vertex(to, lo, hi)
			ring = orb.Ring(appendDistinct(orb.LineString(ring), pt))
			if to == start {
				break
			}
			back := p.vertex(segs[cur].from, lo, hi)
			ab := math.Atan2(back[1]-pt[1], back[0]-pt[0])
			next, best := -1, math.Inf(1)
			for k := firstOut(to); k < len(order) && segs[order[k]].from == to; k++ {
				cand := order[k]
				if used[cand] {
					continue
				}
				w := p.vertex(segs[cand].to, lo, hi)
				cw := math.Mod(ab-math.Atan2(w[1]-pt[1], w[0]-pt[0])+4*math.Pi, 2*math.Pi)
				if cw == 0 {
					cw = 2 * math.Pi
				}
				if cw < best {
					next, best = cand, cw
				}
			}
			if next < 0 {
				return nil, fmt.Errorf("grid: internal error: band [%v, %v) has an open ring at vertex %d", lo, hi, to)
			}
			cur = next
		}
		if len(ring) > 1 && ring[0] != ring[len(ring)-1] {
			ring = append(ring, ring[0])
		}
		if len(ring) >= 4 {
			rings = append(rings, ring)
		}
	}
	type ext struct {
		ring                   orb.Ring
		area                   float64
		xy                     [][2]float64
		minX, minY, maxX, maxY float64
		holes                  []orb.Ring
	}
	var exts []*ext
	var holes []orb.Ring
	for _, r := range rings {
		a := ringArea(r)
		switch {
		case a > 0:
			e := &ext{ring: r, area: a, minX: math.Inf(1), minY: math.Inf(1), maxX: math.Inf(-1), maxY: math.Inf(-1)}
			for _, q := range r {
				e.xy = append(e.xy, [2]float64{q[0], q[1]})
				e.minX, e.maxX = math.Min(e.minX, q[0]), math.Max(e.maxX, q[0])
				e.minY, e.maxY = math.Min(e.minY, q[1]), math.Max(e.maxY, q[1])
			}
			exts = append(exts, e)
		case a < 0:
			holes = append(holes, r)
		}
	}
	for _, h := range holes {
		px, py := (h[0][0]+h[1][0])/2, (h[0][1]+h[1][1])/2
		best := -1
		for k, e := range exts {
			if px < e.minX || px > e.maxX || py < e.minY || py > e.maxY {
				continue
			}
			if pointInRing(e.xy, px, py) && (best < 0 || e.area < exts[best].area) {
				best = k
			}
		}
		if best < 0 {
			return nil, fmt.Errorf("grid: internal error: a hole of band [%v, %v) lies in no exterior ring", lo, hi)
		}
		exts[best].holes = append(exts[best].holes, h)
	}
	mp := orb.MultiPolygon{}
	for _, e := range exts {
		mp = append(mp, append(orb.Polygon{e.ring}, e.holes...))
	}
	return mp, nil
}
