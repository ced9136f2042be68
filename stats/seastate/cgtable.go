package seastate

import "math"

// A table of the dimensionless group velocity, for the bulk power of many
// steps. With x = k h and y = omega^2 h / g (so x tanh x = y, see
// GroupVelocity),
//
//	cg = n omega h / x = sqrt(g h) * G(y),   G(y) = n(x, y) sqrt(y) / x,
//
// so cg / sqrt(g h) depends on y alone: one table over y serves every depth,
// constant or varying in time, and every frequency. G is smooth (analytic)
// on [0, deepKh): G(0) = 1 (shallow water, cg = sqrt(g h)), G ~ 1/(2 sqrt y)
// towards deep water. The table splits [0, deepKh) into cgTabN equal
// intervals and holds on each the cubic polynomial through the exact G
// (solveKh, machine precision, itself checked against scipy's brentq) at the
// four Chebyshev points of the interval (Chebyshev-node interpolation, e.g.
// Trefethen, Approximation Theory and Approximation Practice, 2013, ch. 2-4).
// The interpolation error, measured against the exact solve at 16 points in
// every interval and at scipy references between the nodes
// (TestCgTableErrorBound, TestCgTableScipy), is below CgTableMaxRelErr over
// the whole range. For y >= deepKh the exact deep-water value is used
// (closed form, no solve).
const (
	cgTabN = 1024
	// CgTableMaxRelErr is the stated bound on the relative error of
	// GroupVelocityFast and BulkDepth.Power against GroupVelocity and
	// BulkPowerFinite.
	CgTableMaxRelErr = 1e-9
)

var (
	cgTabStep    = deepKh / cgTabN
	cgTabInvStep = cgTabN / deepKh
	cgTab        = buildCgTable()
)

// groupRatioExact is G(y) = cg / sqrt(g h) from the exact root (0 < y < deepKh).
func groupRatioExact(y float64) float64 {
	x := solveKh(y)
	return groupFactor(x, y) * math.Sqrt(y) / x
}

// buildCgTable returns, per interval i of width cgTabStep, the coefficients
// c0..c3 of G(y) ~ c0 + c1 t + c2 t^2 + c3 t^3, t = y/cgTabStep - i in [0, 1),
// interpolating G at the Chebyshev points t_j = (1 - cos((2j+1) pi / 8)) / 2.
func buildCgTable() []([4]float64) {
	var tj [4]float64
	for j := range tj {
		tj[j] = (1 - math.Cos(float64(2*j+1)*math.Pi/8)) / 2
	}
	tab := make([][4]float64, cgTabN)
	for i := range tab {
		var a [4][5]float64 // Vandermonde system [1 t t^2 t^3 | G]
		for j := 0; j < 4; j++ {
			t := tj[j]
			a[j] = [5]float64{1, t, t * t, t * t * t, groupRatioExact((float64(i) + t) * cgTabStep)}
		}
		tab[i] = solve4(a)
	}
	return tab
}

// solve4 solves a 4x4 linear system given as an augmented matrix, by
// Gaussian elimination with partial pivoting.
func solve4(a [4][5]float64) [4]float64 {
	for c := 0; c < 4; c++ {
		p := c
		for r := c + 1; r < 4; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		a[c], a[p] = a[p], a[c]
		for r := c + 1; r < 4; r++ {
			f := a[r][c] / a[c][c]
			for k := c; k < 5; k++ {
				a[r][k] -= f * a[c][k]
			}
		}
	}
	var x [4]float64
	for r := 3; r >= 0; r-- {
		s := a[r][4]
		for k := r + 1; k < 4; k++ {
			s -= a[r][k] * x[k]
		}
		x[r] = s / a[r][r]
	}
	return x
}

// groupRatio returns G(y) from the table for 0 <= y < deepKh.
func groupRatio(y float64) float64 {
	u := y * cgTabInvStep
	i := int(u)
	if i >= cgTabN { // rounding just below deepKh
		i = cgTabN - 1
	}
	t := u - float64(i)
	c := &cgTab[i]
	return c[0] + t*(c[1]+t*(c[2]+t*c[3]))
}

// GroupVelocityFast returns GroupVelocity(f, h, g) from the table of G(y)
// (see above) with a relative error below CgTableMaxRelErr; the same
// special cases (deep water, f = 0, bad f) as GroupVelocity.
func GroupVelocityFast(f, h, g float64) float64 {
	if !(f >= 0) || math.IsInf(f, 0) {
		return math.NaN()
	}
	w := 2 * math.Pi * f
	if isDeep(h) {
		return g / (2 * w)
	}
	y := w * w * h / g
	if y >= deepKh {
		return g / (2 * w)
	}
	return math.Sqrt(g*h) * groupRatio(y)
}

// BulkDepth holds what the bulk power of one depth needs, computed once per
// cell (or per step when the depth varies): sqrt(g h) and 4 pi^2 h / g, so
// that y = omega^2 h / g = (4 pi^2 h / g) / Te^2.
type BulkDepth struct {
	deep   bool
	dry    bool // a step whose depth is missing or <= 0 (NewBulkDepthAt)
	sqrtGH float64
	yCoef  float64
}

// NewBulkDepthAt returns the constants of the depth h (m) of one step when
// the depth varies in time: h missing (NaN) or <= 0 is a dry step, without
// power (BulkStep); +Inf is deep water.
func NewBulkDepthAt(h, g float64) BulkDepth {
	if !(h > 0) {
		return BulkDepth{deep: true, dry: true}
	}
	return NewBulkDepth(h, g)
}

// NewBulkDepth returns the constants of depth h (m); h NaN, +Inf or <= 0
// means deep water, as in BulkPowerFinite.
func NewBulkDepth(h, g float64) BulkDepth {
	if isDeep(h) {
		return BulkDepth{deep: true}
	}
	return BulkDepth{sqrtGH: math.Sqrt(g * h), yCoef: 4 * math.Pi * math.Pi * h / g}
}

// Power returns BulkPowerFinite(hm0, te, h, c) (W/m) for the depth of d, with
// the group velocity from the table: J = rho g Hm0^2 cg(1/Te, h) / 16 with a
// relative error below CgTableMaxRelErr (exact in deep water, where it is
// BulkPowerDeep). A non-positive or non-finite te gives NaN.
func (d BulkDepth) Power(hm0, te float64, c Consts) float64 {
	if !(te > 0) || math.IsInf(te, 0) {
		return math.NaN()
	}
	if d.deep {
		return c.Rho * c.G * c.G * hm0 * hm0 * te / (64 * math.Pi)
	}
	y := d.yCoef / (te * te)
	var cg float64
	if y < deepKh {
		cg = d.sqrtGH * groupRatio(y)
	} else {
		cg = c.G * te / (4 * math.Pi) // g / (2 omega), exact deep water
	}
	return c.Rho * c.G * hm0 * hm0 * cg / 16
}
