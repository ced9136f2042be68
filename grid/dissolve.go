package grid

// Dissolve: the outline of a set of cells of a structured grid as polygons.

import (
	"math"
	"sort"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// Dissolve returns the union of the cells marked in (cell-id order, NX*NY)
// as a MultiPolygon in lon/lat, traced exactly along the cell edges c (no
// approximation: its area by MultiPolygonAreaM2 is the sum of the cells'
// areas up to rounding). Cells with a NaN corner are left out.
//
// Method (index space, where cell (i, j) is the unit square [i, i+1] x
// [j, j+1]): every edge between a marked cell and an unmarked one (or the
// grid's border) is directed with the marked cell on its left; edges are
// chained into closed paths, turning left where two leave a vertex (two
// marked cells meeting at a corner only); each path is split into simple
// loops at any vertex it visits twice. Anticlockwise loops are shells,
// clockwise ones holes, each hole going to the smallest shell around a point
// inside it (the centre of the unmarked cell beside its first edge). Points
// where shells or holes touch are valid under the OGC simple-features rules
// (a shell may touch another or a hole at single points). For a regular grid
// the vertices inside straight runs are dropped (cell edges are straight
// lines of lon/lat there); for a curvilinear grid every corner is kept.
// Rings follow RFC 7946's right-hand rule in lon/lat: shells anticlockwise,
// holes clockwise, first point repeated last.
func Dissolve(c *Corners, in []bool, regular bool) orb.MultiPolygon {
	nx, ny := c.NX, c.NY
	mark := func(i, j int) bool {
		if i < 0 || j < 0 || i >= nx || j >= ny || !in[j*nx+i] {
			return false
		}
		for _, p := range []orb.Point{c.At(i, j), c.At(i+1, j), c.At(i+1, j+1), c.At(i, j+1)} {
			if math.IsNaN(p[0]) || math.IsNaN(p[1]) {
				return false
			}
		}
		return true
	}
	type edge struct {
		from, to vtx
		dir      int // 0 E, 1 N, 2 W, 3 S
		used     bool
	}
	var edges []edge
	out := map[vtx][]int{}
	add := func(a, b vtx, d int) {
		out[a] = append(out[a], len(edges))
		edges = append(edges, edge{from: a, to: b, dir: d})
	}
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			if !mark(i, j) {
				continue
			}
			if !mark(i, j-1) {
				add(vtx{i, j}, vtx{i + 1, j}, 0)
			}
			if !mark(i+1, j) {
				add(vtx{i + 1, j}, vtx{i + 1, j + 1}, 1)
			}
			if !mark(i, j+1) {
				add(vtx{i + 1, j + 1}, vtx{i, j + 1}, 2)
			}
			if !mark(i-1, j) {
				add(vtx{i, j + 1}, vtx{i, j}, 3)
			}
		}
	}
	// chain edges into closed paths, then split the paths into simple loops
	var loops [][]vtx
	for e0 := range edges {
		if edges[e0].used {
			continue
		}
		var path []vtx
		e := e0
		for {
			edges[e].used = true
			path = append(path, edges[e].from)
			next := -1
			for _, turn := range []int{1, 0, 3} { // left, straight, right
				want := (edges[e].dir + turn) % 4
				for _, k := range out[edges[e].to] {
					if !edges[k].used && edges[k].dir == want {
						next = k
						break
					}
				}
				if next >= 0 {
					break
				}
			}
			if next < 0 {
				break // back at the start (its edge is used)
			}
			e = next
		}
		loops = append(loops, splitLoops(path)...)
	}
	// shells and holes in index space
	type ring struct {
		pts  orb.Ring
		area float64
		hole bool
		in   orb.Point // a point strictly inside (holes)
	}
	var shells, holes []*ring
	for _, l := range loops {
		if regular {
			l = dropCollinear(l)
		}
		r := &ring{}
		for _, v := range l {
			r.pts = append(r.pts, orb.Point{float64(v.i), float64(v.j)})
		}
		r.pts = append(r.pts, r.pts[0])
		r.area = ringSigned(r.pts)
		if r.area < 0 {
			r.hole = true
			// the unmarked cell on the right of the first edge
			a, b := l[0], l[1%len(l)]
			dx, dy := sign(b.i-a.i), sign(b.j-a.j)
			// right of direction (dx, dy) is (dy, -dx); cell centre beside the edge start
			r.in = orb.Point{float64(a.i) + 0.5*float64(dx) + 0.5*float64(dy), float64(a.j) + 0.5*float64(dy) - 0.5*float64(dx)}
			holes = append(holes, r)
		} else {
			shells = append(shells, r)
		}
	}
	sort.SliceStable(shells, func(a, b int) bool { return math.Abs(shells[a].area) < math.Abs(shells[b].area) })
	polys := make([]orb.Polygon, len(shells))
	for k, s := range shells {
		polys[k] = orb.Polygon{s.pts}
	}
	for _, h := range holes {
		for k, s := range shells { // smallest first
			if planar.RingContains(s.pts, h.in) {
				polys[k] = append(polys[k], h.pts)
				break
			}
		}
	}
	// to lon/lat, with RFC 7946 orientation
	var mp orb.MultiPolygon
	for _, p := range polys {
		var q orb.Polygon
		for k, r := range p {
			lr := make(orb.Ring, len(r))
			for n, pt := range r {
				lr[n] = c.At(int(pt[0]), int(pt[1]))
			}
			if s := ringSigned(lr); (k == 0) != (s > 0) {
				for a, b := 0, len(lr)-1; a < b; a, b = a+1, b-1 {
					lr[a], lr[b] = lr[b], lr[a]
				}
			}
			q = append(q, lr)
		}
		mp = append(mp, q)
	}
	// deterministic order: by the first vertex of the shell (lat, then lon)
	sort.SliceStable(mp, func(a, b int) bool {
		pa, pb := mp[a][0][0], mp[b][0][0]
		if pa[1] != pb[1] {
			return pa[1] < pb[1]
		}
		return pa[0] < pb[0]
	})
	return mp
}

// vtx is a corner of a structured grid in index space.
type vtx struct{ i, j int }

// ringSigned is the planar signed area of a closed ring (shoelace),
// anticlockwise positive.
func ringSigned(r orb.Ring) float64 {
	s := 0.0
	for i := 0; i+1 < len(r); i++ {
		s += r[i][0]*r[i+1][1] - r[i+1][0]*r[i][1]
	}
	return s / 2
}

func sign(x int) int {
	switch {
	case x > 0:
		return 1
	case x < 0:
		return -1
	}
	return 0
}

// splitLoops splits a closed vertex path (last vertex joined to the first)
// into simple loops at every vertex it visits more than once.
func splitLoops[V comparable](path []V) [][]V {
	var loops [][]V
	var stack []V
	pos := map[V]int{}
	for _, v := range path {
		if k, ok := pos[v]; ok {
			loop := append([]V(nil), stack[k:]...)
			loops = append(loops, loop)
			for _, w := range stack[k+1:] {
				delete(pos, w)
			}
			stack = stack[:k+1]
			continue
		}
		pos[v] = len(stack)
		stack = append(stack, v)
	}
	if len(stack) >= 3 {
		loops = append(loops, stack)
	}
	return loops
}

// dropCollinear removes the vertices of a closed loop of grid vertices that
// lie inside a straight run (same i or same j as both neighbours).
func dropCollinear(l []vtx) []vtx {
	n := len(l)
	if n < 4 {
		return l
	}
	var out []vtx
	for k := 0; k < n; k++ {
		p, v, q := l[(k+n-1)%n], l[k], l[(k+1)%n]
		if (p.i == v.i && v.i == q.i) || (p.j == v.j && v.j == q.j) {
			continue
		}
		out = append(out, v)
	}
	return out
}
