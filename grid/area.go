package grid

// Areas on the WGS 84 ellipsoid of cells and of polygons whose edges are
// straight in lon/lat (RFC 7946, 3.1.1), and the cell edges of a grid.

import (
	"math"

	"github.com/paulmach/orb"
)

// authalicQ is the area function of the ellipsoid: the area between the
// equator and latitude phi over one radian of longitude,
//
//	Q(phi) = a^2/2 q(phi),  q = (1-e^2) [ sin phi / (1 - e^2 sin^2 phi) - 1/(2e) ln((1 - e sin phi)/(1 + e sin phi)) ]
//
// (J. P. Snyder, Map Projections: A Working Manual, USGS Professional Paper
// 1395, 1987, eq. 3-12 and the authalic-latitude area relation of its
// section 3), with e^2 = f (2 - f) of WGS 84.
func authalicQ(phi float64) float64 {
	e2 := WGS84F * (2 - WGS84F)
	e := math.Sqrt(e2)
	s := math.Sin(phi)
	q := (1 - e2) * (s/(1-e2*s*s) - 1/(2*e)*math.Log((1-e*s)/(1+e*s)))
	return WGS84A * WGS84A / 2 * q
}

// Gauss-Legendre nodes and weights on [0, 1] (5 points; Abramowitz and
// Stegun 1964, table 25.4, mapped from [-1, 1]).
var glX, glW = func() ([5]float64, [5]float64) {
	x := [5]float64{-0.9061798459386640, -0.5384693101056831, 0, 0.5384693101056831, 0.9061798459386640}
	w := [5]float64{0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665, 0.2369268850561891}
	for i := range x {
		x[i], w[i] = (x[i]+1)/2, w[i]/2
	}
	return x, w
}()

// RingAreaM2 is the signed area in m^2 on WGS 84 of a ring whose edges are
// straight in lon/lat (positive anticlockwise). By Green's theorem in
// (lambda, phi) with the area element dQ/dphi dlambda dphi,
//
//	A = - sum over edges (lambda2 - lambda1) * integral_0^1 Q(phi1 + t (phi2 - phi1)) dt
//
// (Q: authalicQ), the integral by 5-point Gauss-Legendre quadrature on
// pieces of at most 0.5 degree of latitude. An edge along a parallel or a
// meridian is exact, so a lon/lat cell gets the closed form
// (lambda2 - lambda1)(Q(phi2) - Q(phi1)).
func RingAreaM2(r orb.Ring) float64 {
	const rad = math.Pi / 180
	a := 0.0
	for i := 0; i+1 < len(r); i++ {
		p, q := r[i], r[i+1]
		dl := (q[0] - p[0]) * rad
		if dl == 0 {
			continue
		}
		p1, p2 := p[1]*rad, q[1]*rad
		if p1 == p2 {
			a -= dl * authalicQ(p1)
			continue
		}
		n := int(math.Ceil(math.Abs(q[1]-p[1]) / 0.5))
		mean := 0.0
		for k := 0; k < n; k++ {
			for j := range glX {
				t := (float64(k) + glX[j]) / float64(n)
				mean += glW[j] * authalicQ(p1+t*(p2-p1)) / float64(n)
			}
		}
		a -= dl * mean
	}
	return a
}

// PolygonAreaM2 is the area of a polygon (outer ring minus holes), m^2.
func PolygonAreaM2(p orb.Polygon) float64 {
	if len(p) == 0 {
		return 0
	}
	a := math.Abs(RingAreaM2(p[0]))
	for _, h := range p[1:] {
		a -= math.Abs(RingAreaM2(h))
	}
	return a
}

// MultiPolygonAreaM2 is the sum of the polygons' areas, m^2.
func MultiPolygonAreaM2(mp orb.MultiPolygon) float64 {
	a := 0.0
	for _, p := range mp {
		a += PolygonAreaM2(p)
	}
	return a
}

// Corners are the cell corners of a structured grid: (NY+1) x (NX+1) points,
// row-major, corner (i, j) at index j*(NX+1) + i, cell (i, j) having corners
// (i, j), (i+1, j), (i+1, j+1), (i, j+1).
type Corners struct {
	NX, NY   int // cells
	Lon, Lat []float64
}

// At returns corner (i, j).
func (c *Corners) At(i, j int) orb.Point {
	k := j*(c.NX+1) + i
	return orb.Point{c.Lon[k], c.Lat[k]}
}

// CellCorners returns the cell edges of g: for a regular grid the midpoints
// between neighbouring axis values, the outer edges half a spacing beyond
// the first and last centres (latitudes clipped to +-90); for a curvilinear
// grid the mean of the four surrounding nodes, the nodes first extended by
// one row and column on each side by linear extrapolation (common practice;
// a NaN node makes its corners NaN). Longitudes are those of the grid's
// continuous frame (LonFrame: 0..360 for a grid across 180 degrees), so
// that the cells beside 180 degrees have their true width. Points have no
// cells: ok is false, as it is for an axis of one value (no spacing to take
// an edge from).
func CellCorners(g *Grid) (*Corners, bool) {
	nx, ny := g.NX, g.NY
	if g.Kind == Points || nx < 2 || ny < 2 {
		return nil, false
	}
	lons := g.Frame().ShiftAll(g.Lon)
	c := &Corners{NX: nx, NY: ny, Lon: make([]float64, (nx+1)*(ny+1)), Lat: make([]float64, (nx+1)*(ny+1))}
	if g.Kind == Regular {
		xs, ys := make([]float64, nx), make([]float64, ny)
		for i := range xs {
			xs[i] = lons[i]
		}
		for j := range ys {
			ys[j] = g.Lat[j*nx]
		}
		xe, ye := axisEdges(xs), axisEdges(ys)
		for j := range ye {
			ye[j] = math.Max(-90, math.Min(90, ye[j]))
		}
		for j := 0; j <= ny; j++ {
			for i := 0; i <= nx; i++ {
				c.Lon[j*(nx+1)+i], c.Lat[j*(nx+1)+i] = xe[i], ye[j]
			}
		}
		return c, true
	}
	// curvilinear: extended node arrays of (ny+2) x (nx+2)
	ext := func(v []float64) func(i, j int) float64 {
		at := func(i, j int) float64 { return v[j*nx+i] }
		return func(i, j int) float64 { // i in -1..nx, j in -1..ny
			ci, cj := min(max(i, 0), nx-1), min(max(j, 0), ny-1)
			// linear extrapolation along each axis that is outside
			val := at(ci, cj)
			if i < 0 {
				val += at(0, cj) - at(1, cj)
			} else if i >= nx {
				val += at(nx-1, cj) - at(nx-2, cj)
			}
			if j < 0 {
				val += at(ci, 0) - at(ci, 1)
			} else if j >= ny {
				val += at(ci, ny-1) - at(ci, ny-2)
			}
			return val
		}
	}
	lon, lat := ext(lons), ext(g.Lat)
	for j := 0; j <= ny; j++ {
		for i := 0; i <= nx; i++ {
			k := j*(nx+1) + i
			c.Lon[k] = (lon(i-1, j-1) + lon(i, j-1) + lon(i-1, j) + lon(i, j)) / 4
			c.Lat[k] = math.Max(-90, math.Min(90, (lat(i-1, j-1)+lat(i, j-1)+lat(i-1, j)+lat(i, j))/4))
		}
	}
	return c, true
}

func axisEdges(x []float64) []float64 {
	n := len(x)
	e := make([]float64, n+1)
	for i := 1; i < n; i++ {
		e[i] = (x[i-1] + x[i]) / 2
	}
	e[0] = x[0] - (x[1]-x[0])/2
	e[n] = x[n-1] + (x[n-1]-x[n-2])/2
	return e
}

// CellRing returns cell (i, j)'s outline, anticlockwise in lon/lat for a grid
// of ascending axes, closed.
func (c *Corners) CellRing(i, j int) orb.Ring {
	return orb.Ring{c.At(i, j), c.At(i+1, j), c.At(i+1, j+1), c.At(i, j+1), c.At(i, j)}
}

// CellAreasM2 returns every cell's area on WGS 84 in m^2 (RingAreaM2 of its
// outline from CellCorners), in cell-id order; nil for a grid without cells
// (a point set). A cell with a NaN corner gets NaN.
func CellAreasM2(g *Grid) []float64 {
	c, ok := CellCorners(g)
	if !ok {
		return nil
	}
	out := make([]float64, g.NX*g.NY)
	for j := 0; j < g.NY; j++ {
		for i := 0; i < g.NX; i++ {
			out[j*g.NX+i] = math.Abs(RingAreaM2(c.CellRing(i, j)))
		}
	}
	return out
}
