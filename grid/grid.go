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

// kinds lists every Kind, for ParseKind.
var kinds = [...]Kind{Regular, Curvilinear, Points, MeshKind}

// ParseKind returns the Kind whose String is s ("regular", "curvilinear",
// "points" or "mesh": the grid kinds of a manifest).
func ParseKind(s string) (Kind, error) {
	for _, k := range kinds {
		if k.String() == s {
			return k, nil
		}
	}
	return 0, fmt.Errorf("grid: unknown grid kind %q (want regular, curvilinear, points or mesh)", s)
}

// MarshalText gives the kind's name (String), so that JSON holds the kind as
// the string a manifest has always held; an unknown kind is an error, never
// written.
func (k Kind) MarshalText() ([]byte, error) {
	if _, err := ParseKind(k.String()); err != nil {
		return nil, fmt.Errorf("grid: cannot write grid kind %d: not a kind", int(k))
	}
	return []byte(k.String()), nil
}

// UnmarshalText reads a kind's name (ParseKind).
func (k *Kind) UnmarshalText(b []byte) error {
	v, err := ParseKind(string(b))
	if err != nil {
		return err
	}
	*k = v
	return nil
}

// Grid is the geometry of a hindcast's cells in swellgrid's canonical order,
// which gives every cell a stable id (its index): for a regular grid, rows of
// ascending latitude, each of ascending longitude in the region's continuous
// frame (LonFrame: -180..180, or 0..360 for a grid across 180 degrees, so
// that neighbouring columns stay neighbours); for a curvilinear grid, the file's (y, x) order; for a point
// set, the file's station order; for a mesh, the Hilbert-curve order of its
// nodes or faces (NewMesh). The canonical order does not depend on how a
// file stores its axes, so ids agree between files and runs.
type Grid struct {
	Kind   Kind
	NX, NY int       // structured shape (Points: NX = number of points, NY = 1)
	Lon    []float64 // per cell, degrees east in [-180, 180) (LonFrame gives the frame to compute in)
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
// ascending or descending; longitudes in any 360-degree convention, a jump
// from 180 to -180 inside the axis included). Its columns are in ascending
// longitude in the axis's continuous frame (LonFrame), whatever the storage.
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
	norm := make([]float64, len(lon))
	for i, v := range lon {
		norm[i] = NormLon(v)
	}
	fr := LonFrame(norm)
	xs := sortedAxis(fr.ShiftAll(norm))
	ys := sortedAxis(lat)
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

// sortedAxis returns the indices of a in ascending order of value.
func sortedAxis(a []float64) []int {
	idx := make([]int, len(a))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool { return a[idx[i]] < a[idx[j]] })
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

// Bounds returns the true extent of the cells with finite positions, as an
// RFC 7946 bounding box (BBox): west, south, east, north, longitudes in
// [-180, 180], west > east for a grid across 180 degrees (RFC 7946 section
// 5.2). Without a finite cell, +Inf, +Inf, -Inf, -Inf.
func (g *Grid) Bounds() (west, south, east, north float64) {
	b, _ := BBox(g.Lon, g.Lat)
	return b[0], b[1], b[2], b[3]
}

// Frame is the continuous longitude frame of the grid's cells (LonFrame).
func (g *Grid) Frame() Frame { return LonFrame(g.Lon) }

// Structured reports whether the grid has a (y, x) node structure that can be
// contoured by marching squares (meshes are contoured on their triangles).
func (g *Grid) Structured() bool { return g.Kind == Regular || g.Kind == Curvilinear }

// Unstructured reports whether the cells are a list (a point set or a mesh)
// read along one dimension of the files.
func (g *Grid) Unstructured() bool { return g.Kind == Points || g.Kind == MeshKind }
