package grid

import (
	"fmt"
	"math"
	"sort"
)

// Kind is the layout of a grid's cells.
type Kind int

const (
	// Regular is a lon/lat grid given by two 1-D axes.
	Regular Kind = iota
	// Curvilinear is a structured grid with 2-D lon/lat coordinates.
	Curvilinear
	// Points is an unstructured set of stations or nodes.
	Points
	// MeshKind is a 2-D unstructured mesh (UGRID 1.0) whose cells are its
	// nodes or its faces (Grid.Mesh).
	MeshKind
)

func (k Kind) String() string {
	switch k {
	case Regular:
		return "regular"
	case Curvilinear:
		return "curvilinear"
	case Points:
		return "points"
	case MeshKind:
		return "mesh"
	}
	return "unknown"
}

// Grid is the geometry of a hindcast's cells in swellgrid's canonical order,
// which gives every cell a stable id (its index): for a regular grid, rows of
// ascending latitude, each of ascending longitude (after normalisation to
// [-180, 180)); for a curvilinear grid, the file's (y, x) order; for a point
// set, the file's station order; for a mesh, the Hilbert-curve order of its
// nodes or faces (NewMesh). The canonical order does not depend on how a
// file stores its axes, so ids agree between files and runs.
type Grid struct {
	Kind   Kind
	NX, NY int       // structured shape (Points: NX = number of points, NY = 1)
	Lon    []float64 // per cell, degrees east in [-180, 180)
	Lat    []float64 // per cell, degrees north

	// For Regular grids: the file index along each axis of canonical column
	// ix (XFromFile) and row iy (YFromFile); for a mesh, XFile is the file
	// index (node or face) of each cell; for other kinds these are identity.
	XFile, YFile []int

	// Mesh is the topology of a MeshKind grid (nil for other kinds).
	Mesh *Mesh
}

// NCells is the number of cells.
func (g *Grid) NCells() int { return len(g.Lon) }

// NormLon maps a longitude in degrees to [-180, 180).
func NormLon(lon float64) float64 {
	l := math.Mod(lon+180, 360)
	if l < 0 {
		l += 360
	}
	return l - 180
}

// NewRegular builds a regular grid from its 1-D axes as stored (either order,
// ascending or descending; longitudes in any 360-degree convention).
func NewRegular(lon, lat []float64) (*Grid, error) {
	if len(lon) == 0 || len(lat) == 0 {
		return nil, fmt.Errorf("grid: regular grid with an empty axis (%d lon x %d lat)", len(lon), len(lat))
	}
	for i, v := range lat {
		if math.IsNaN(v) || v < -90 || v > 90 {
			return nil, fmt.Errorf("grid: latitude[%d] = %v is not a latitude", i, v)
		}
	}
	for i, v := range lon {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("grid: longitude[%d] = %v is not finite", i, v)
		}
	}
	xs := sortedAxis(lon, true)
	ys := sortedAxis(lat, false)
	for i := 1; i < len(xs); i++ {
		if NormLon(lon[xs[i]]) == NormLon(lon[xs[i-1]]) {
			return nil, fmt.Errorf("grid: longitude %v appears twice", lon[xs[i]])
		}
	}
	for i := 1; i < len(ys); i++ {
		if lat[ys[i]] == lat[ys[i-1]] {
			return nil, fmt.Errorf("grid: latitude %v appears twice", lat[ys[i]])
		}
	}
	if !monotonic(lat) {
		return nil, fmt.Errorf("grid: latitude axis is not monotonic")
	}
	g := &Grid{Kind: Regular, NX: len(lon), NY: len(lat), XFile: xs, YFile: ys}
	g.Lon = make([]float64, g.NX*g.NY)
	g.Lat = make([]float64, g.NX*g.NY)
	for iy, fy := range ys {
		for ix, fx := range xs {
			g.Lon[iy*g.NX+ix] = NormLon(lon[fx])
			g.Lat[iy*g.NX+ix] = lat[fy]
		}
	}
	return g, nil
}

func monotonic(a []float64) bool {
	up, down := true, true
	for i := 1; i < len(a); i++ {
		if a[i] <= a[i-1] {
			up = false
		}
		if a[i] >= a[i-1] {
			down = false
		}
	}
	return up || down
}

func sortedAxis(a []float64, isLon bool) []int {
	idx := make([]int, len(a))
	for i := range idx {
		idx[i] = i
	}
	key := func(i int) float64 {
		if isLon {
			return NormLon(a[i])
		}
		return a[i]
	}
	sort.SliceStable(idx, func(i, j int) bool { return key(idx[i]) < key(idx[j]) })
	return idx
}

func identity(n int) []int {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	return p
}

// NewCurvilinear builds a curvilinear grid of ny x nx nodes from 2-D lon/lat
// stored row-major (y, x). NaN coordinates mark nodes outside the domain;
// they must be masked by the caller.
func NewCurvilinear(nx, ny int, lon, lat []float64) (*Grid, error) {
	if nx*ny == 0 || len(lon) != nx*ny || len(lat) != nx*ny {
		return nil, fmt.Errorf("grid: curvilinear grid %d x %d with %d lon and %d lat values", ny, nx, len(lon), len(lat))
	}
	g := &Grid{Kind: Curvilinear, NX: nx, NY: ny, XFile: identity(nx), YFile: identity(ny)}
	g.Lon = make([]float64, len(lon))
	g.Lat = append([]float64(nil), lat...)
	for i, v := range lon {
		g.Lon[i] = NormLon(v)
		if v := lat[i]; !math.IsNaN(v) && (v < -90 || v > 90) {
			return nil, fmt.Errorf("grid: latitude[%d] = %v is not a latitude", i, v)
		}
	}
	return g, nil
}

// NewPoints builds a point set from per-point lon/lat.
func NewPoints(lon, lat []float64) (*Grid, error) {
	if len(lon) == 0 || len(lon) != len(lat) {
		return nil, fmt.Errorf("grid: point set with %d lon and %d lat values", len(lon), len(lat))
	}
	g := &Grid{Kind: Points, NX: len(lon), NY: 1, XFile: identity(len(lon)), YFile: []int{0}}
	g.Lon = make([]float64, len(lon))
	g.Lat = append([]float64(nil), lat...)
	for i, v := range lon {
		if math.IsNaN(v) || math.IsNaN(lat[i]) || lat[i] < -90 || lat[i] > 90 {
			return nil, fmt.Errorf("grid: point %d has no valid position (%v, %v)", i, v, lat[i])
		}
		g.Lon[i] = NormLon(v)
	}
	return g, nil
}

// Same reports whether two grids have the same kind, shape and cell positions
// (to within 1e-6 degree), and if not, says how they differ.
func (g *Grid) Same(o *Grid) (bool, string) {
	if g.Kind != o.Kind {
		return false, fmt.Sprintf("grid kind %s vs %s", g.Kind, o.Kind)
	}
	if g.NX != o.NX || g.NY != o.NY {
		return false, fmt.Sprintf("shape %dx%d vs %dx%d", g.NY, g.NX, o.NY, o.NX)
	}
	for i := range g.Lon {
		if !near(g.Lon[i], o.Lon[i]) || !near(g.Lat[i], o.Lat[i]) {
			return false, fmt.Sprintf("cell %d at (%g, %g) vs (%g, %g)", i, g.Lon[i], g.Lat[i], o.Lon[i], o.Lat[i])
		}
	}
	if g.Kind == MeshKind {
		return sameMesh(g.Mesh, o.Mesh)
	}
	return true, ""
}

func near(a, b float64) bool {
	if math.IsNaN(a) && math.IsNaN(b) {
		return true
	}
	return math.Abs(a-b) <= 1e-6
}

// Bounds returns the lon/lat bounding box of the cells with finite positions.
func (g *Grid) Bounds() (minLon, minLat, maxLon, maxLat float64) {
	minLon, minLat = math.Inf(1), math.Inf(1)
	maxLon, maxLat = math.Inf(-1), math.Inf(-1)
	for i := range g.Lon {
		if math.IsNaN(g.Lon[i]) || math.IsNaN(g.Lat[i]) {
			continue
		}
		minLon, maxLon = math.Min(minLon, g.Lon[i]), math.Max(maxLon, g.Lon[i])
		minLat, maxLat = math.Min(minLat, g.Lat[i]), math.Max(maxLat, g.Lat[i])
	}
	return
}

// Structured reports whether the grid has a (y, x) node structure that can be
// contoured by marching squares (meshes are contoured on their triangles).
func (g *Grid) Structured() bool { return g.Kind == Regular || g.Kind == Curvilinear }

// Unstructured reports whether the cells are a list (a point set or a mesh)
// read along one dimension of the files.
func (g *Grid) Unstructured() bool { return g.Kind == Points || g.Kind == MeshKind }
