package grid

import (
	"math"
	"sort"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/planar"
)

// DissolveRings returns the union of the cells marked in, each given by its
// closed anticlockwise outline (rings[i]; nil: left out), as a MultiPolygon
// in lon/lat: the cells of a mesh (MeshOutlines), whose neighbours share
// their edges exactly (the same two points, bit for bit).
//
// Method (the edge form of Dissolve): every edge of a marked cell is
// directed with the cell on its left; an edge whose reverse belongs to
// another marked cell lies inside the union and is dropped, the others are
// its boundary. They are chained into loops, turning most to the left where
// two leave one point (marked cells meeting at a corner only), so that
// shells touching at a point stay separate loops, valid under the OGC
// simple-features rules. Anticlockwise loops are shells, clockwise ones
// holes, each hole going to the smallest shell that contains its first
// point. Rings follow RFC 7946's right-hand rule, first point repeated last.
// The result is deterministic: edges are taken in cell order.
func DissolveRings(rings []orb.Ring, in []bool) orb.MultiPolygon {
	type key struct{ a, b orb.Point }
	type edge struct {
		a, b orb.Point
		used bool
	}
	var edges []edge
	index := map[key]int{}
	for i, r := range rings {
		if i >= len(in) || !in[i] || len(r) < 4 {
			continue
		}
		for k := 0; k+1 < len(r); k++ {
			a, b := r[k], r[k+1]
			if a == b {
				continue
			}
			if j, ok := index[key{b, a}]; ok && !edges[j].used {
				edges[j].used = true // shared with a marked neighbour: inside
				delete(index, key{b, a})
				continue
			}
			index[key{a, b}] = len(edges)
			edges = append(edges, edge{a: a, b: b})
		}
	}
	out := map[orb.Point][]int{}
	for i, e := range edges {
		if !e.used {
			out[e.a] = append(out[e.a], i)
		}
	}
	var loops []orb.Ring
	for e0 := range edges {
		if edges[e0].used {
			continue
		}
		var path []orb.Point
		e := e0
		for {
			edges[e].used = true
			path = append(path, edges[e].a)
			in := math.Atan2(edges[e].b[1]-edges[e].a[1], edges[e].b[0]-edges[e].a[0])
			next, best := -1, math.Inf(1)
			for _, k := range out[edges[e].b] {
				if edges[k].used {
					continue
				}
				// the turn from the incoming direction, in (-pi, pi]: the
				// most leftward (largest) first
				d := math.Atan2(edges[k].b[1]-edges[k].a[1], edges[k].b[0]-edges[k].a[0]) - in
				for d <= -math.Pi {
					d += 2 * math.Pi
				}
				for d > math.Pi {
					d -= 2 * math.Pi
				}
				if -d < best {
					next, best = k, -d
				}
			}
			if next < 0 {
				break
			}
			e = next
		}
		path = append(path, path[0])
		loops = append(loops, orb.Ring(path))
	}
	var shells []orb.Polygon
	var holes []orb.Ring
	for _, l := range loops {
		if len(l) < 4 {
			continue
		}
		if l.Orientation() == orb.CCW {
			shells = append(shells, orb.Polygon{l})
		} else {
			holes = append(holes, l)
		}
	}
	area := make([]float64, len(shells))
	for i, s := range shells {
		area[i] = math.Abs(planar.Area(s[0]))
	}
	for _, h := range holes {
		best := -1
		for i, s := range shells {
			if planar.RingContains(s[0], h[0]) && (best < 0 || area[i] < area[best]) {
				best = i
			}
		}
		if best >= 0 {
			shells[best] = append(shells[best], h)
		}
	}
	// shells in order of their lowest-leftmost point, for stable output
	sort.SliceStable(shells, func(i, j int) bool {
		a, b := lowest(shells[i][0]), lowest(shells[j][0])
		if a[1] != b[1] {
			return a[1] < b[1]
		}
		return a[0] < b[0]
	})
	return orb.MultiPolygon(shells)
}

func lowest(r orb.Ring) orb.Point {
	p := r[0]
	for _, q := range r {
		if q[1] < p[1] || q[1] == p[1] && q[0] < p[0] {
			p = q
		}
	}
	return p
}
