package grid

// Contouring of a scalar field on a structured grid by marching squares.
//
// The field is sampled at the nodes of an ny x nx structured grid; each cell is
// the quadrilateral of four neighbouring nodes. Along a cell edge the field is
// taken to vary linearly, so an isoline crosses an edge at the linearly
// interpolated position, and inside a cell an isoline is the straight segment
// joining two crossings. Cells with a masked (or non-finite) corner are left out.
// All topology is worked out in index space (i, j), where cells are unit squares,
// and mapped to lon/lat at the end by interpolating the node coordinates along
// the edge, so regular and curvilinear grids are handled alike.
//
// Isolines and filled bands use the same crossings and the same saddle rule,
// so the boundary of a band is made of exactly the isoline segments of its two
// edge levels (plus the edge of the valid domain).

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"
)

// Field is a scalar field on a structured (regular or curvilinear) grid of
// NY x NX nodes, stored row-major (node k = j*NX + i). Lon and Lat are the node
// coordinates in degrees (len NY*NX; for a regular grid the caller expands its
// 1-D axes), longitudes in one continuous frame (GeoField shifts them into
// the region's frame, LonFrame); contours are computed and returned in that
// frame (CutLines and CutPolygons cut them at 180 degrees for GeoJSON). A
// node is masked, and every cell touching it left out, when its Value is NaN
// or ±Inf or Mask[k] is true. Mask may be nil. A cell with an edge longer
// than 180 degrees of longitude spans the seam of the frame (a grid that
// wraps round the globe or a pole): it is left out too (SeamCells counts
// them).
type Field struct {
	NX, NY int
	Lon    []float64
	Lat    []float64
	Value  []float64
	Mask   []bool
}

// Isolines returns, for each level in levels (in the same order), the isoline
// of f at that level as one MultiLineString in lon/lat. Each line is oriented
// with values above the level on its left; a closed line repeats its first
// point at the end. A level the field never crosses gives an empty
// MultiLineString. Values equal to a level count as above it.
func Isolines(f *Field, levels []float64) ([]orb.MultiLineString, error) {
	cv, err := f.prepare()
	if err != nil {
		return nil, err
	}
	for k, l := range levels {
		if math.IsNaN(l) || math.IsInf(l, 0) {
			return nil, fmt.Errorf("grid.Isolines: level %d is %v; levels must be finite numbers", k, l)
		}
	}
	nx, ny := f.NX, f.NY
	nEdge := 2 * nx * ny
	segStart := make([]int32, nEdge) // segment that starts at the crossing on edge e
	segEnd := make([]int32, nEdge)   // segment that ends at the crossing on edge e
	out := make([]orb.MultiLineString, len(levels))
	type seg struct{ from, to int32 }
	var segs []seg
	var used []bool
	for li, level := range levels {
		for e := range segStart {
			segStart[e], segEnd[e] = -1, -1
		}
		segs = segs[:0]
		for j := 0; j < ny-1; j++ {
			for i := 0; i < nx-1; i++ {
				c := j*nx + i
				if !cv[c] {
					continue
				}
				var pairs [2][2]int
				n := f.cellChords(i, j, level, &pairs)
				for p := 0; p < n; p++ {
					a := int32(cellEdgeID(nx, i, j, pairs[p][0]))
					b := int32(cellEdgeID(nx, i, j, pairs[p][1]))
					segStart[a] = int32(len(segs))
					segEnd[b] = int32(len(segs))
					segs = append(segs, seg{a, b})
				}
			}
		}
		used = append(used[:0], make([]bool, len(segs))...)
		var mls orb.MultiLineString
		trace := func(s int) {
			line := orb.LineString{f.edgePoint(int(segs[s].from), level)}
			for cur := s; cur >= 0 && !used[cur]; {
				used[cur] = true
				line = appendDistinct(line, f.edgePoint(int(segs[cur].to), level))
				cur = int(segStart[segs[cur].to])
			}
			if len(line) >= 2 {
				mls = append(mls, line)
			}
		}
		// Open lines first (they start where the valid domain ends), then loops.
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
		if mls == nil {
			mls = orb.MultiLineString{}
		}
		out[li] = mls
	}
	return out, nil
}

// Bands returns, for each band [edges[b], edges[b+1]) (so len(edges)-1 bands),
// the region of f whose values lie in the band, as one MultiPolygon in lon/lat.
// Polygons follow the right-hand rule of RFC 7946 (exterior rings
// counter-clockwise, holes clockwise), rings are closed and do not cross
// themselves. edges must be strictly increasing; the first may be -Inf and the
// last +Inf for open-ended bands. A band the field never reaches gives an
// empty MultiPolygon.
func Bands(f *Field, edges []float64) ([]orb.MultiPolygon, error) {
	cv, err := f.prepare()
	if err != nil {
		return nil, err
	}
	if len(edges) < 2 {
		return nil, fmt.Errorf("grid.Bands: need at least 2 band edges, got %d", len(edges))
	}
	for k := range edges {
		if math.IsNaN(edges[k]) {
			return nil, fmt.Errorf("grid.Bands: band edge %d is NaN", k)
		}
		if k > 0 && !(edges[k] > edges[k-1]) {
			return nil, fmt.Errorf("grid.Bands: band edges must increase strictly, but edges[%d]=%v <= edges[%d]=%v", k, edges[k], k-1, edges[k-1])
		}
	}
	out := make([]orb.MultiPolygon, len(edges)-1)
	for b := range out {
		mp, err := f.band(cv, edges[b], edges[b+1])
		if err != nil {
			return nil, err
		}
		out[b] = mp
	}
	return out, nil
}

// NiceLevels returns round contour levels covering [min, max]: the multiples of
// a step of 1, 2, 2.5 or 5 times a power of ten that lie in [min, max], using
// the smallest such step that gives at most n levels. It returns nil when n < 1,
// when min or max is not finite, or when max <= min.
// Source: common practice for axis ticks and contour intervals (the 1-2-5
// sequence); the choice of the step is ours.
func NiceLevels(min, max float64, n int) []float64 {
	if n < 1 || math.IsNaN(min) || math.IsNaN(max) || math.IsInf(min, 0) || math.IsInf(max, 0) || !(max > min) {
		return nil
	}
	raw := (max - min) / float64(n)
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{0.1, 0.2, 0.25, 0.5, 1, 2, 2.5, 5, 10, 20} {
		step := m * p
		lo := math.Ceil(min/step - 1e-9)
		hi := math.Floor(max/step + 1e-9)
		if hi-lo+1 > float64(n) {
			continue
		}
		var out []float64
		for k := lo; k <= hi; k++ {
			v := k * step
			// Round away binary noise (0.30000000000000004 -> 0.3).
			v, _ = roundSig(v, step)
			out = append(out, v)
		}
		return out
	}
	return nil
}

// roundSig rounds v to the number of decimals that step needs.
func roundSig(v, step float64) (float64, int) {
	dec := 0
	for s := step; dec < 15 && math.Abs(s-math.Round(s)) > 1e-9*math.Max(1, math.Abs(s)); s *= 10 {
		dec++
	}
	scale := math.Pow(10, float64(dec))
	r := math.Round(v*scale) / scale
	if r == 0 {
		r = 0 // no negative zero
	}
	return r, dec
}

// CrossingFraction returns where, along a cell edge from a node with value va to
// a node with value vb, the isoline at level crosses: t = (level - va)/(vb - va),
// the linear interpolation of marching squares (common practice; see Lorensen &
// Cline 1987, "Marching cubes", SIGGRAPH, for the 3-D original). t is kept within
// [1e-6, 1-1e-6] of the edge so that a value exactly equal to a level (frequent
// with packed data) never puts a crossing on a node, where rings would touch.
func CrossingFraction(va, vb, level float64) float64 {
	const tiny = 1e-6
	t := (level - va) / (vb - va)
	if !(t >= tiny) { // also catches NaN
		return tiny
	}
	if t > 1-tiny {
		return 1 - tiny
	}
	return t
}

// SaddleConnected reports whether, in a saddle cell (two opposite corners at or
// above level, the other two below), the two high corners are joined: the rule
// compares the cell-centre value of the bilinear interpolant, which is the mean
// of the four corner values, with the level (common practice; the asymptotic
// decider of Nielson & Hamann 1991 uses the saddle value instead). Isolines and
// bands use this one rule, so they agree.
func SaddleConnected(v0, v1, v2, v3, level float64) bool {
	return (v0+v1+v2+v3)/4 >= level
}

// prepare checks f and returns, per cell (j*NX+i, for i < NX-1, j < NY-1),
// whether all four corners are valid.
func (f *Field) prepare() ([]bool, error) {
	if f == nil {
		return nil, errors.New("grid: nil Field")
	}
	if f.NX < 2 || f.NY < 2 {
		return nil, fmt.Errorf("grid: field of %d x %d nodes cannot be contoured; need at least 2 x 2 (point sets get no contours)", f.NY, f.NX)
	}
	n := f.NX * f.NY
	if len(f.Lon) != n || len(f.Lat) != n || len(f.Value) != n {
		return nil, fmt.Errorf("grid: field of %d x %d nodes needs %d lon, lat and values; got %d, %d, %d", f.NY, f.NX, n, len(f.Lon), len(f.Lat), len(f.Value))
	}
	if f.Mask != nil && len(f.Mask) != n {
		return nil, fmt.Errorf("grid: mask has %d entries for %d nodes", len(f.Mask), n)
	}
	node := make([]bool, n)
	for k := range node {
		v := f.Value[k]
		node[k] = !math.IsNaN(v) && !math.IsInf(v, 0) && (f.Mask == nil || !f.Mask[k])
		if node[k] && (math.IsNaN(f.Lon[k]) || math.IsNaN(f.Lat[k]) || math.IsInf(f.Lon[k], 0) || math.IsInf(f.Lat[k], 0)) {
			return nil, fmt.Errorf("grid: node %d (i=%d, j=%d) has a value but no finite lon/lat; mask it or fix the coordinates", k, k%f.NX, k/f.NX)
		}
	}
	cv := make([]bool, n)
	nx := f.NX
	for j := 0; j < f.NY-1; j++ {
		for i := 0; i < nx-1; i++ {
			k := j*nx + i
			if !(node[k] && node[k+1] && node[k+nx] && node[k+nx+1]) {
				continue
			}
			cv[k] = !f.acrossSeam(k)
		}
	}
	return cv, nil
}

// acrossSeam reports whether the cell with lower-left node k has an edge
// longer than 180 degrees of longitude (it spans the seam of the frame).
func (f *Field) acrossSeam(k int) bool {
	nx := f.NX
	for _, e := range [4][2]int{{k, k + 1}, {k + 1, k + nx + 1}, {k + nx + 1, k + nx}, {k + nx, k}} {
		if math.Abs(f.Lon[e[0]]-f.Lon[e[1]]) > 180 {
			return true
		}
	}
	return false
}

// SeamCells counts the cells of f with four valid corners that span more
// than 180 degrees of longitude, which Isolines and Bands leave out.
func (f *Field) SeamCells() int {
	n := 0
	if f == nil || f.NX < 2 || f.NY < 2 || len(f.Lon) != f.NX*f.NY || len(f.Lat) != len(f.Lon) || len(f.Value) != len(f.Lon) {
		return 0
	}
	valid := func(k int) bool {
		v := f.Value[k]
		return !math.IsNaN(v) && !math.IsInf(v, 0) && (f.Mask == nil || !f.Mask[k]) && !math.IsNaN(f.Lon[k])
	}
	for j := 0; j < f.NY-1; j++ {
		for i := 0; i < f.NX-1; i++ {
			k := j*f.NX + i
			if valid(k) && valid(k+1) && valid(k+f.NX) && valid(k+f.NX+1) && f.acrossSeam(k) {
				n++
			}
		}
	}
	return n
}

// GeoField is the Field of values on a structured lon/lat grid of ny x nx
// nodes (row-major) with its longitudes shifted into the region's
// continuous frame (LonFrame of lon: 0..360 for a region across 180
// degrees), and that frame. Its contours come in the frame: one piece
// across 180 degrees, for maps and for the products kept in the frame; cut
// them with CutLines and CutPolygons for GeoJSON.
func GeoField(nx, ny int, lon, lat, value []float64, mask []bool) (*Field, Frame) {
	fr := LonFrame(lon)
	return &Field{NX: nx, NY: ny, Lon: fr.ShiftAll(lon), Lat: lat, Value: value, Mask: mask}, fr
}

// Cell corners in counter-clockwise order in index space (x = i, y = j):
// c0 = (i, j), c1 = (i+1, j), c2 = (i+1, j+1), c3 = (i, j+1).
// Cell edge k runs from corner k to corner (k+1)%4.
var cornerOff = [4][2]int{{0, 0}, {1, 0}, {1, 1}, {0, 1}}

func (f *Field) corner(i, j, k int) int {
	return (j+cornerOff[k][1])*f.NX + i + cornerOff[k][0]
}

// cellEdgeID is the grid-wide id of edge k of cell (i, j): 2*node for the edge
// from node to node+1 (horizontal), 2*node+1 for node to node+NX (vertical),
// where node is the lower-index end.
func cellEdgeID(nx, i, j, k int) int {
	switch k {
	case 0:
		return 2 * (j*nx + i)
	case 1:
		return 2*(j*nx+i+1) + 1
	case 2:
		return 2 * ((j+1)*nx + i)
	default:
		return 2*(j*nx+i) + 1
	}
}

// edgeNodes returns the two nodes of a grid edge, lower index first.
func (f *Field) edgeNodes(e int) (int, int) {
	a := e / 2
	if e%2 == 0 {
		return a, a + 1
	}
	return a, a + f.NX
}

// edgeT is the crossing fraction along grid edge e from its lower-index node.
func (f *Field) edgeT(e int, level float64) float64 {
	a, b := f.edgeNodes(e)
	return CrossingFraction(f.Value[a], f.Value[b], level)
}

func (f *Field) edgePoint(e int, level float64) orb.Point {
	a, b := f.edgeNodes(e)
	t := f.edgeT(e, level)
	return orb.Point{f.Lon[a] + t*(f.Lon[b]-f.Lon[a]), f.Lat[a] + t*(f.Lat[b]-f.Lat[a])}
}

// cellChords writes the isoline segments of cell (i, j) at level as pairs of
// cell edges (exit edge, entry edge): walking the cell boundary
// counter-clockwise, the exit edge is where values go from >= level to below,
// the entry edge where they come back. The segment exit->entry has the values
// above the level on its left. It returns the number of segments (0, 1 or 2).
func (f *Field) cellChords(i, j int, level float64, pairs *[2][2]int) int {
	var v [4]float64
	var up [4]bool
	for k := 0; k < 4; k++ {
		v[k] = f.Value[f.corner(i, j, k)]
		up[k] = v[k] >= level
	}
	var exits, entries [2]int
	ne, nn := 0, 0
	for k := 0; k < 4; k++ {
		a, b := up[k], up[(k+1)%4]
		if a && !b {
			exits[ne] = k
			ne++
		} else if !a && b {
			entries[nn] = k
			nn++
		}
	}
	switch ne {
	case 0:
		return 0
	case 1:
		pairs[0] = [2]int{exits[0], entries[0]}
		return 1
	}
	// Saddle: exit on edge k joins the entry on edge k+1 (high corners
	// connected) or on edge k-1 (each high corner cut off on its own).
	shift := 3
	if SaddleConnected(v[0], v[1], v[2], v[3], level) {
		shift = 1
	}
	for p := 0; p < 2; p++ {
		pairs[p] = [2]int{exits[p], (exits[p] + shift) % 4}
	}
	return 2
}

// Vertex ids for band tracing: a node has id = node index; a crossing on grid
// edge e at the band's lower level has id N + 2e, at its upper level N + 2e + 1.

type bandSeg struct {
	from, to int64
	cell     int32
}

// bpt is a point on the boundary of one cell during band tracing.
type bpt struct {
	id    int64
	kind  int8 // 0 corner, 1 crossing at lo, 2 crossing at hi
	edge  int8 // cell edge the point is on (a corner: the edge it starts)
	start bool // a band interval along the boundary starts here
	end   bool // a band interval along the boundary ends here
	exit  bool // crossing: values go from >= level to < level (counter-clockwise)
}

func (f *Field) band(cv []bool, lo, hi float64) (orb.MultiPolygon, error) {
	nx, ny := f.NX, f.NY
	N := int64(nx * ny)
	var segs []bandSeg
	var pts [12]bpt
	cls := func(v float64) int {
		if v < lo {
			return 0
		}
		if v >= hi {
			return 2
		}
		return 1
	}
	for j := 0; j < ny-1; j++ {
		for i := 0; i < nx-1; i++ {
			c := j*nx + i
			if !cv[c] {
				continue
			}
			var v [4]float64
			var cl [4]int
			n0, n1, n2 := 0, 0, 0
			for k := 0; k < 4; k++ {
				v[k] = f.Value[f.corner(i, j, k)]
				cl[k] = cls(v[k])
				switch cl[k] {
				case 0:
					n0++
				case 1:
					n1++
				default:
					n2++
				}
			}
			if n0 == 4 || n2 == 4 {
				continue
			}
			external := func(k int) bool {
				ni, nj := i, j
				switch k {
				case 0:
					nj--
				case 1:
					ni++
				case 2:
					nj++
				default:
					ni--
				}
				return ni < 0 || nj < 0 || ni >= nx-1 || nj >= ny-1 || !cv[nj*nx+ni]
			}
			if n1 == 4 {
				for k := 0; k < 4; k++ {
					if external(k) {
						segs = append(segs, bandSeg{int64(f.corner(i, j, k)), int64(f.corner(i, j, (k+1)%4)), int32(c)})
					}
				}
				continue
			}
			// Boundary points, counter-clockwise.
			np := 0
			for k := 0; k < 4; k++ {
				pts[np] = bpt{id: int64(f.corner(i, j, k)), kind: 0, edge: int8(k)}
				np++
				va, vb := v[k], v[(k+1)%4]
				e := int64(cellEdgeID(nx, i, j, k))
				loX := (va >= lo) != (vb >= lo)
				hiX := (va >= hi) != (vb >= hi)
				loP := bpt{id: N + 2*e, kind: 1, edge: int8(k), exit: va >= lo}
				loP.start, loP.end = !loP.exit, loP.exit
				hiP := bpt{id: N + 2*e + 1, kind: 2, edge: int8(k), exit: va >= hi}
				hiP.start, hiP.end = hiP.exit, !hiP.exit
				if va < vb {
					if loX {
						pts[np] = loP
						np++
					}
					if hiX {
						pts[np] = hiP
						np++
					}
				} else {
					if hiX {
						pts[np] = hiP
						np++
					}
					if loX {
						pts[np] = loP
						np++
					}
				}
			}
			// Chord partners at each level: exit position -> entry position.
			var loPair, hiPair [12]int
			f.pairLevel(pts[:np], 1, v, lo, &loPair)
			f.pairLevel(pts[:np], 2, v, hi, &hiPair)
			var visited [12]bool
			for s := 0; s < np; s++ {
				if !pts[s].start || visited[s] {
					continue
				}
				p := s
				for guard := 0; guard < 64; guard++ {
					visited[p] = true
					// Walk the boundary to the end of this interval.
					q := p
					for !pts[q].end {
						nq := (q + 1) % np
						edge := int(pts[nq].edge)
						if pts[nq].kind == 0 {
							edge = (edge + 3) % 4
						}
						if external(edge) {
							segs = append(segs, bandSeg{pts[q].id, pts[nq].id, int32(c)})
						}
						q = nq
					}
					// Jump along a chord to the start of the next interval.
					var nxt int
					if pts[q].kind == 1 {
						nxt = loPair[q]
					} else {
						nxt = -1
						for x := 0; x < np; x++ {
							if pts[x].kind == 2 && pts[x].exit && hiPair[x] == q {
								nxt = x
							}
						}
					}
					if nxt < 0 {
						return nil, fmt.Errorf("grid: internal error tracing band [%v, %v) in cell i=%d, j=%d", lo, hi, i, j)
					}
					segs = append(segs, bandSeg{pts[q].id, pts[nxt].id, int32(c)})
					p = nxt
					if p == s {
						break
					}
				}
			}
		}
	}
	return f.linkBand(segs, lo, hi)
}

// pairLevel fills pair[x] = position of the entry joined by a chord to the
// exit at position x, for crossings of the given kind (1 lo, 2 hi).
func (f *Field) pairLevel(pts []bpt, kind int8, v [4]float64, level float64, pair *[12]int) {
	var exits, entries []int
	var ex, en [2]int
	exits, entries = ex[:0], en[:0]
	for x := range pts {
		if pts[x].kind != kind {
			continue
		}
		if pts[x].exit {
			exits = append(exits, x)
		} else {
			entries = append(entries, x)
		}
	}
	if len(exits) == 1 && len(entries) == 1 {
		pair[exits[0]] = entries[0]
		return
	}
	if len(exits) != 2 {
		return
	}
	shift := 3
	if SaddleConnected(v[0], v[1], v[2], v[3], level) {
		shift = 1
	}
	for _, x := range exits {
		want := (int(pts[x].edge) + shift) % 4
		for _, y := range entries {
			if int(pts[y].edge) == want {
				pair[x] = y
			}
		}
	}
}

// indexXY is the position of a band vertex id in index space.
func (f *Field) indexXY(id int64, lo, hi float64) (float64, float64) {
	N := int64(f.NX * f.NY)
	if id < N {
		return float64(id % int64(f.NX)), float64(id / int64(f.NX))
	}
	r := id - N
	e := int(r / 2)
	level := lo
	if r%2 == 1 {
		level = hi
	}
	a, b := f.edgeNodes(e)
	t := f.edgeT(e, level)
	ax, ay := float64(a%f.NX), float64(a/f.NX)
	bx, by := float64(b%f.NX), float64(b/f.NX)
	return ax + t*(bx-ax), ay + t*(by-ay)
}

func (f *Field) lonLat(id int64, lo, hi float64) orb.Point {
	N := int64(f.NX * f.NY)
	if id < N {
		return orb.Point{f.Lon[id], f.Lat[id]}
	}
	r := id - N
	level := lo
	if r%2 == 1 {
		level = hi
	}
	return f.edgePoint(int(r/2), level)
}

type xyRing struct {
	ids                    []int64
	xy                     [][2]float64
	area                   float64 // signed, index space
	minX, minY, maxX, maxY float64
}

// linkBand joins the directed boundary segments of a band into rings, sorts
// them into exteriors and holes and maps them to lon/lat.
func (f *Field) linkBand(segs []bandSeg, lo, hi float64) (orb.MultiPolygon, error) {
	order := make([]int, len(segs))
	for k := range order {
		order[k] = k
	}
	sort.SliceStable(order, func(a, b int) bool { return segs[order[a]].from < segs[order[b]].from })
	firstOut := func(id int64) int {
		return sort.Search(len(order), func(k int) bool { return segs[order[k]].from >= id })
	}
	used := make([]bool, len(segs))
	var rings []*xyRing
	for s := range segs {
		if used[s] {
			continue
		}
		start := segs[s].from
		r := &xyRing{ids: []int64{start}}
		cur := s
		for {
			used[cur] = true
			to := segs[cur].to
			r.ids = append(r.ids, to)
			if to == start {
				break
			}
			next := -1
			for k := firstOut(to); k < len(order) && segs[order[k]].from == to; k++ {
				cand := order[k]
				if used[cand] {
					continue
				}
				if next < 0 || (segs[cand].cell == segs[cur].cell && segs[next].cell != segs[cur].cell) {
					next = cand
				}
			}
			if next < 0 {
				return nil, fmt.Errorf("grid: internal error: band [%v, %v) has an open ring at vertex %d", lo, hi, to)
			}
			cur = next
		}
		rings = append(rings, r)
	}
	var exteriors, holes []*xyRing
	for _, r := range rings {
		r.xy = make([][2]float64, len(r.ids))
		r.minX, r.minY, r.maxX, r.maxY = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for k, id := range r.ids {
			x, y := f.indexXY(id, lo, hi)
			r.xy[k] = [2]float64{x, y}
			r.minX, r.maxX = math.Min(r.minX, x), math.Max(r.maxX, x)
			r.minY, r.maxY = math.Min(r.minY, y), math.Max(r.maxY, y)
		}
		for k := 0; k+1 < len(r.xy); k++ {
			r.area += r.xy[k][0]*r.xy[k+1][1] - r.xy[k+1][0]*r.xy[k][1]
		}
		r.area /= 2
		if r.area > 0 {
			exteriors = append(exteriors, r)
		} else if r.area < 0 {
			holes = append(holes, r)
		}
	}
	polyHoles := make([][]*xyRing, len(exteriors))
	for _, h := range holes {
		px := (h.xy[0][0] + h.xy[1][0]) / 2
		py := (h.xy[0][1] + h.xy[1][1]) / 2
		best := -1
		for e, r := range exteriors {
			if px < r.minX || px > r.maxX || py < r.minY || py > r.maxY {
				continue
			}
			if pointInRing(r.xy, px, py) && (best < 0 || r.area < exteriors[best].area) {
				best = e
			}
		}
		if best < 0 {
			return nil, fmt.Errorf("grid: internal error: a hole of band [%v, %v) lies in no exterior ring", lo, hi)
		}
		polyHoles[best] = append(polyHoles[best], h)
	}
	mp := orb.MultiPolygon{}
	for e, r := range exteriors {
		ext := f.toRing(r, lo, hi)
		if len(ext) < 4 {
			continue
		}
		poly := orb.Polygon{ext}
		for _, h := range polyHoles[e] {
			if hr := f.toRing(h, lo, hi); len(hr) >= 4 {
				poly = append(poly, hr)
			}
		}
		// The grid may map index space to lon/lat with a reflection
		// (e.g. latitude descending); restore the right-hand rule.
		if ringArea(poly[0]) < 0 {
			for _, rr := range poly {
				reverseRing(rr)
			}
		}
		mp = append(mp, poly)
	}
	return mp, nil
}

func (f *Field) toRing(r *xyRing, lo, hi float64) orb.Ring {
	ring := make(orb.Ring, 0, len(r.ids))
	for _, id := range r.ids {
		ring = orb.Ring(appendDistinct(orb.LineString(ring), f.lonLat(id, lo, hi)))
	}
	if len(ring) > 1 && ring[0] != ring[len(ring)-1] {
		ring = append(ring, ring[0])
	}
	return ring
}

func appendDistinct(ls orb.LineString, p orb.Point) orb.LineString {
	if len(ls) > 0 && ls[len(ls)-1] == p {
		return ls
	}
	return append(ls, p)
}

// pointInRing is the even-odd crossing test (common practice).
func pointInRing(xy [][2]float64, px, py float64) bool {
	in := false
	for k := 0; k+1 < len(xy); k++ {
		x1, y1 := xy[k][0], xy[k][1]
		x2, y2 := xy[k+1][0], xy[k+1][1]
		if (y1 > py) != (y2 > py) {
			x := x1 + (py-y1)*(x2-x1)/(y2-y1)
			if px < x {
				in = !in
			}
		}
	}
	return in
}

// ringArea is the signed shoelace area, positive for counter-clockwise rings
// (common practice).
func ringArea(r orb.Ring) float64 {
	s := 0.0
	for k := 0; k+1 < len(r); k++ {
		s += r[k][0]*r[k+1][1] - r[k+1][0]*r[k][1]
	}
	return s / 2
}

func reverseRing(r orb.Ring) {
	for a, b := 0, len(r)-1; a < b; a, b = a+1, b-1 {
		r[a], r[b] = r[b], r[a]
	}
}
