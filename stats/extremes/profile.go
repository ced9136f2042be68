package extremes

import (
	"math"

	"swellgrid/stats/internal/localopt"
)

// chi2Crit95 is the 0.95 quantile of the chi-squared distribution with one
// degree of freedom (1.959963984540054^2), the deviance drop bounding a 95%
// profile-likelihood interval (Coles 2001, section 2.6.5, eq. 2.17 with k = 1).
const chi2Crit95 = z975 * z975

// profileFit is the inner maximisation of a profile likelihood at one fixed
// return level: it returns the smallest negative log-likelihood over the other
// parameters, where it was reached (start of the next search), and the slope
// d nll_p / d level there. By the envelope theorem the slope of the profile
// is the partial derivative of nll with respect to the level at the inner
// optimum, the other parameters held fixed (e.g. Nocedal and Wright 2006 on
// sensitivity of optimal values; common practice).
type profileFit func(level float64, start []float64) (nll, slope float64, at []float64, ok bool)

// ProfileGEV returns the 95% profile-likelihood interval of the T-year return
// level of a GEV fit. The likelihood is re-parameterised by the return level,
//
//	Loc = z_T - Scale ((-log(1 - 1/T))^(-Shape) - 1)/Shape     (Coles 2001, eq. 3.10),
//
// maximised over (Scale, Shape) at each fixed z_T, and the interval is
// {z_T : 2 [l_max - l_p(z_T)] <= chi2_1(0.95)} (Coles 2001, sections 2.6.6
// and 3.3.3). The lower end is never below zero (Hm0 is not negative): if the
// deviance stays below the critical value down to 0, lo = 0. hi is +Inf when
// the deviance does not reach the critical value within 50 delta-method
// standard errors (or 20 scales) above the level, or below limit when limit
// is positive (Analyse passes 3 times the record's largest Hm0): the data do
// not bound it within plausible values.
// NaN without a converged fit or for T <= 1.
func (f GEVFit) ProfileGEV(T float64, z []float64, limit float64) (lo, hi float64) {
	nan := math.NaN()
	zt, _ := f.GEV.ReturnLevel(T)
	if !f.Converged || math.IsNaN(zt) {
		return nan, nan
	}
	zs := finiteSorted(z)
	s := -math.Log(-math.Log1p(-1 / T))
	nllMax := -f.LogLik
	var curv [2][2]float64 // Hessian of the last inner fit, the first of the next (localopt.QuasiNewton2)
	inner := func(level float64, start []float64) (float64, float64, []float64, bool) {
		// Parameters (log Scale, Shape); Loc follows from the level.
		x0 := []float64{start[0], start[1]}
		// dnll/dLoc at fixed (log Scale, Shape) is dnll/dlevel; kept from
		// the last finite evaluation with a gradient (the optimum, as a rule).
		var lastAt [2]float64
		lastSlope, haveLast := math.NaN(), false
		nll := func(p, g []float64) float64 {
			a, da := expShapeTerm(p[1], s)
			sig := math.Exp(p[0])
			q := []float64{level - sig*a, p[0], p[1]}
			var gg [3]float64
			var v float64
			if g != nil {
				v = gevNegLogLik(q, gg[:], zs)
				// dLoc/dlogScale = -sig a, dLoc/dShape = -sig da.
				g[0] = gg[1] - gg[0]*sig*a
				g[1] = gg[2] - gg[0]*sig*da
				if haveLast = !math.IsInf(v, 1); haveLast {
					lastAt, lastSlope = [2]float64{p[0], p[1]}, gg[0]
				}
			} else {
				v = gevNegLogLik(q, nil, zs)
			}
			return v
		}
		// A larger scale always reaches the support (1 + Shape y > 0 for all data).
		v0 := nll(x0, nil)
		for k := 0; k < 60 && math.IsInf(v0, 1); k++ {
			x0[0] += 0.25
			v0 = nll(x0, nil)
		}
		if math.IsInf(v0, 1) {
			return math.Inf(1), math.NaN(), start, false
		}
		tol := 1e-7 * float64(len(zs))
		var xo []float64
		var v float64
		var conv bool
		var err error
		if x1, v1, h1, ok := localopt.QuasiNewton2(nll, x0, v0, tol, curv); ok {
			xo, v, conv, curv = x1, v1, true, h1
		} else {
			xo, v, conv, err = minimise(nll, x0, tol)
		}
		if !haveLast || lastAt != [2]float64{xo[0], xo[1]} {
			var g [2]float64
			nll(xo, g[:])
		}
		return v, lastSlope, xo, conv && err == nil
	}
	step := f.StdErr[0]
	if sd := deltaSD(f, T); sd > 0 && !math.IsNaN(sd) {
		step = sd
	}
	if !(step > 0) {
		step = 0.1 * f.Scale
	}
	start := []float64{math.Log(f.Scale), f.Shape}
	// The ends directly from the Lagrange conditions where they hold, else
	// by searching the profile. The likelihood is taken in (z_T, log Scale,
	// Shape), Loc = z_T - Scale a(Shape) (the formula above), where the
	// level is the first coordinate.
	fh := func(p, g, h []float64) float64 {
		a, da := expShapeTerm(p[2], s)
		sig := math.Exp(p[1])
		q := []float64{p[0] - sig*a, p[1], p[2]}
		if g == nil {
			return gevNegLogLik(q, nil, zs)
		}
		var gq [3]float64
		var hq [9]float64
		v := gevNegLogLikHess(q, gq[:], hq[:], zs)
		reparamLevel(gq, hq, sig*a, sig*da, sig*expShapeCurv(p[2], s), g, h)
		return v
	}
	lev := func(p, g, h []float64) float64 {
		g[0], g[1], g[2] = 1, 0, 0
		clear(h)
		return p[0]
	}
	that := []float64{zt, math.Log(f.Scale), f.Shape}
	g0, h0 := make([]float64, 3), make([]float64, 9)
	fh(that, g0, h0)
	top := searchLimit(zt+math.Max(50*step, 20*f.Scale), limit, zt)
	if z, ok := lagrangeEnd(fh, lev, that, h0, nllMax, -1); ok && z > 0 && z < zt {
		lo = z
	} else {
		lo = profileEnd(inner, zt, -step, 0, nllMax, start)
	}
	if z, ok := lagrangeEnd(fh, lev, that, h0, nllMax, 1); ok && z > zt && z < top {
		hi = z
	} else {
		hi = profileEnd(inner, zt, step, top, nllMax, start)
	}
	return lo, hi
}

// ProfileGPD returns the 95% profile-likelihood interval of the T-year return
// level of a GPD fit with the exceedance rate lambda held fixed (Coles 2001,
// section 4.3.3): the scale is re-parameterised by the level,
//
//	Scale = (x_T - u) Shape / ((lambda T)^Shape - 1)           (Coles 2001, eq. 4.12),
//
// the likelihood maximised over Shape at each fixed x_T, and the interval is
// where the deviance stays within chi2_1(0.95). Because Scale > 0, the lower
// end always lies above the threshold u. hi is +Inf when the data do not bound
// it (see ProfileGEV, also for limit). NaN without a converged fit or for lambda T < 1.
func (f GPDFit) ProfileGPD(T float64, peaks []float64, limit float64) (lo, hi float64) {
	nan := math.NaN()
	xt, _ := f.GPD.ReturnLevel(T, f.PeaksPerYear)
	if !f.Converged || math.IsNaN(xt) || !(f.PeaksPerYear*T > 1) {
		return nan, nan
	}
	var y []float64
	for _, v := range peaks {
		if v > f.Threshold {
			y = append(y, v-f.Threshold)
		}
	}
	s := math.Log(f.PeaksPerYear * T)
	u := f.Threshold
	curv := math.NaN() // curvature of the last inner fit, the first step of the next
	inner := func(level float64, start []float64) (float64, float64, []float64, bool) {
		if !(level > u) {
			return math.Inf(1), math.NaN(), start, false
		}
		x0 := []float64{start[0]}
		// dnll/dlevel = dnll/dlog Scale / (x_T - u) at fixed Shape, kept
		// from the last finite evaluation with a gradient (see ProfileGEV).
		lastAt, lastSlope, haveLast := math.NaN(), math.NaN(), false
		nll := func(p, g []float64) float64 {
			a, da := expShapeTerm(p[0], s)
			phi := math.Log(level-u) - math.Log(a)
			q := []float64{phi, p[0]}
			if g == nil {
				return gpdNegLogLik(q, nil, y)
			}
			var gg [2]float64
			v := gpdNegLogLik(q, gg[:], y)
			g[0] = gg[1] - gg[0]*da/a
			if haveLast = !math.IsInf(v, 1); haveLast {
				lastAt, lastSlope = p[0], gg[0]/(level-u)
			}
			return v
		}
		// Too negative a shape puts data outside the bounded support; move it up.
		v0 := nll(x0, nil)
		for k := 0; k < 40 && math.IsInf(v0, 1); k++ {
			x0[0] += 0.05
			v0 = nll(x0, nil)
		}
		if math.IsInf(v0, 1) {
			return math.Inf(1), math.NaN(), start, false
		}
		tol := 1e-7 * float64(len(y))
		xo, v, conv, err := []float64{0}, 0.0, false, error(nil)
		if x1, v1, h1, ok := minimise1D(nll, x0[0], v0, tol, curv); ok {
			xo[0], v, conv, curv = x1, v1, true, h1
		} else {
			xo, v, conv, err = minimise(nll, x0, tol)
		}
		if !haveLast || lastAt != xo[0] {
			var g [1]float64
			nll(xo, g[:])
		}
		return v, lastSlope, xo, conv && err == nil
	}
	step := math.NaN()
	if _, l, h := f.ReturnLevel(T); h > l {
		step = (h - l) / (2 * z975)
	}
	if !(step > 0) {
		step = 0.1 * f.Scale
	}
	// The ends directly from the Lagrange conditions where they hold, else
	// by searching the profile.
	fh := func(p, g, h []float64) float64 {
		if g == nil {
			return gpdNegLogLik(p, nil, y)
		}
		var hh [2][2]float64
		v := gpdNegLogLikHess(p, g, &hh, y)
		h[0], h[1], h[2], h[3] = hh[0][0], hh[0][1], hh[1][0], hh[1][1]
		return v
	}
	lev := func(p, g, h []float64) float64 {
		a, da := expShapeTerm(p[1], s)
		e := math.Exp(p[0])
		g[0], g[1] = e*a, e*da
		h[0], h[1], h[2], h[3] = e*a, e*da, e*da, e*expShapeCurv(p[1], s)
		return u + e*a
	}
	that := []float64{math.Log(f.Scale), f.Shape}
	g0, h0 := make([]float64, 2), make([]float64, 4)
	fh(that, g0, h0)
	top := searchLimit(xt+math.Max(50*step, 20*f.Scale), limit, xt)
	if z, ok := lagrangeEnd(fh, lev, that, h0, -f.LogLik, -1); ok && z > u && z < xt {
		lo = z
	} else {
		lo = profileEnd(inner, xt, -step, u, -f.LogLik, []float64{f.Shape})
	}
	if z, ok := lagrangeEnd(fh, lev, that, h0, -f.LogLik, 1); ok && z > xt && z < top {
		hi = z
	} else {
		hi = profileEnd(inner, xt, step, top, -f.LogLik, []float64{f.Shape})
	}
	return lo, hi
}

// searchLimit is the highest level the upper-end search visits: the default
// reach, lowered to limit when limit is positive and above the level.
func searchLimit(reach, limit, level float64) float64 {
	if limit > level && limit < reach {
		return limit
	}
	return reach
}

// deltaSD is the delta-method standard error of the GEV T-year level.
func deltaSD(f GEVFit, T float64) float64 {
	z, lo, _ := f.ReturnLevel(T)
	return (z - lo) / z975
}

// profileEnd finds where the profile deviance D(x) = 2 (nll_p(x) - nllMax)
// reaches chi2Crit95 on one side of the level (the sign of step gives the
// side; step is about one standard error of the level). It solves
// g(x) = D(x) - chi2Crit95 = 0 by Newton's method with the slope of the
// profile, g'(x) = 2 dnll_p/dx (see profileFit), started from the
// delta-method end level + z975 step (where a quadratic profile would cross;
// the step from there goes to the crossing of the cubic through the level
// that matches the deviance and slope found there, see cubicCrossing) and
// safeguarded by a bracket: once a point with g >= 0 is known, a Newton
// step that leaves the bracket [last point with g < 0, first with g >= 0] is
// replaced by a regula-falsi step (Illinois: the retained end's value halved
// when it is kept twice; bisection when an end is not finite), and before
// that a step that does not move outward, or a slope that does not rise,
// is replaced by a step growing the distance from the level by 1.6. It stops
// when a step or the bracket is below 1e-7 of the level (far below the
// interval's own uncertainty) or |g| < 1e-9. bound is the last admissible
// level on that side (0 or the threshold below, the search limit above):
// if the deviance stays below the critical value up to it, the lower end is
// bound and the upper end +Inf. Each inner fit starts from the optimum of
// the last point evaluated inside the bracket, so the search follows one
// branch of the profile.
func profileEnd(inner profileFit, level, step, bound, nllMax float64, start []float64) float64 {
	sgn := 1.0
	if step < 0 {
		sgn = -1
	}
	lowEnd := bound + 1e-9*math.Max(1, math.Abs(level)) // at 0 (GEV) or the threshold (GPD) the deviance is evaluated just inside
	atBound := func(x float64) (float64, bool) {
		if (sgn < 0 && x <= bound) || (sgn > 0 && x >= bound) {
			if sgn < 0 {
				return lowEnd, true
			}
			return bound, true
		}
		return x, false
	}
	tol := 1e-7 * math.Max(1, math.Abs(level))
	a, ga, aAt := level, -chi2Crit95, start // inside: the deviance is 0 at the level itself
	b, gb := math.NaN(), math.NaN()         // outside, once known
	haveB := false
	side := 0
	x, _ := atBound(level + z975*step)
	for i := 0; i < 100; i++ {
		v, slope, at, _ := inner(x, aAt)
		g := 2*(v-nllMax) - chi2Crit95
		if math.IsNaN(g) {
			g = math.Inf(1) // no finite fit there: treated as outside
		}
		dg := 2 * slope
		if math.Abs(g) < 1e-9 {
			return x
		}
		if g < 0 {
			a, ga, aAt = x, g, at
			if side == -1 && haveB {
				gb /= 2
			}
			side = -1
			if _, hit := atBound(x); hit {
				// The deviance stays below the critical value up to the bound.
				if sgn > 0 {
					return math.Inf(1)
				}
				return bound
			}
		} else {
			b, gb, haveB = x, g, true
			if side == 1 {
				ga /= 2
			}
			side = 1
		}
		if haveB && math.Abs(b-a) <= tol {
			return 0.5 * (a + b)
		}
		// Newton's step from x; from the first point, the root of the
		// cubic through the level (zero deviance and slope there) that
		// matches this point's deviance and slope, when that model rises.
		next := math.NaN()
		if !math.IsInf(g, 0) && sgn*dg > 0 {
			next = x - g/dg
			if i == 0 {
				if t, ok := cubicCrossing(x-level, g+chi2Crit95, dg); ok {
					next = level + t
				}
			}
		}
		if haveB {
			lo, hi := math.Min(a, b), math.Max(a, b)
			if !(next > lo && next < hi) {
				// Illinois within the bracket, bisection when an end is not finite.
				next = 0.5 * (a + b)
				if !math.IsInf(gb, 0) && gb != ga {
					next = b - gb*(b-a)/(gb-ga)
					w := hi - lo
					next = math.Max(lo+0.01*w, math.Min(hi-0.01*w, next))
				}
			}
		} else if !(sgn*(next-x) > 0) {
			next = level + 1.6*(x-level)
		}
		next, _ = atBound(next)
		if math.Abs(next-x) <= tol && !math.IsInf(g, 0) {
			return next
		}
		x = next
	}
	if haveB {
		return 0.5 * (a + b)
	}
	if sgn > 0 {
		return math.Inf(1)
	}
	return bound
}

// cubicCrossing returns t with a t^2 + b t^3 = chi2Crit95 for the cubic
// D(t) = a t^2 + b t^3 through D(h) = d, D'(h) = dd (a = (3d - dd h)/h^2,
// b = (dd h - 2d)/h^3), on the side of h and within 4|h|, by Newton's method
// on the cubic from h; ok = false when the cubic does not rise there.
func cubicCrossing(h, d, dd float64) (float64, bool) {
	a := (3*d - dd*h) / (h * h)
	b := (dd*h - 2*d) / (h * h * h)
	t := h
	for k := 0; k < 30; k++ {
		f := a*t*t + b*t*t*t - chi2Crit95
		df := 2*a*t + 3*b*t*t
		if !(df*h > 0) {
			return 0, false
		}
		dt := f / df
		t -= dt
		if !(t*h > 0) || math.Abs(t) > 4*math.Abs(h) {
			return 0, false
		}
		if math.Abs(dt) <= 1e-12*math.Abs(t) {
			return t, true
		}
	}
	return 0, false
}

// minimise1D minimises f of one variable from x0 (where f is f0) to
// |f'| < gradTol by safeguarded Newton steps with the secant curvature of
// the last two points (Nocedal and Wright 2006, section 6.1 and 3.1: the
// one-dimensional secant, i.e. BFGS, update with backtracking to the
// Armijo condition, c1 = 1e-4); the first step uses curv, the curvature
// found by the previous inner fit of a profile (NaN: a step of 0.01). It
// returns the minimiser, f there and the last curvature; ok = false when it
// does not converge within 50 steps, or meets a non-finite value it cannot
// back away from (the caller then runs minimise).
func minimise1D(f objective, x0, f0, gradTol, curv float64) (x, fx, h float64, ok bool) {
	var g [1]float64
	x, h = x0, curv
	p := []float64{x0}
	fx = f(p, g[:])
	if fx != f0 || math.IsInf(fx, 0) || math.IsNaN(fx) {
		return x0, f0, curv, false
	}
	gx := g[0]
	for k := 0; k < 50; k++ {
		if math.Abs(gx) < gradTol {
			return x, fx, h, true
		}
		step := -math.Copysign(0.01, gx)
		if h > 0 {
			step = -gx / h
		}
		var xn, fn, gn float64
		accepted := false
		for b := 0; b < 40; b++ {
			xn = x + step
			p[0] = xn
			g[0] = math.NaN()
			fn = f(p, g[:])
			gn = g[0]
			if !math.IsInf(fn, 0) && !math.IsNaN(fn) && !math.IsNaN(gn) && fn <= fx+1e-4*gx*step {
				accepted = true
				break
			}
			step /= 2
		}
		if !accepted {
			return x0, f0, curv, false
		}
		if dx := xn - x; dx != 0 && (gn-gx)/dx > 0 {
			h = (gn - gx) / dx
		}
		x, fx, gx = xn, fn, gn
	}
	return x0, f0, curv, false
}

// reparamLevel maps the gradient gq and Hessian hq (3 x 3, row-major) of a
// function of (Loc, log Scale, Shape) to the coordinates (z, log Scale,
// Shape) with Loc = z - Scale a(Shape), given b1 = Scale a, b2 = Scale da/dShape
// and b3 = Scale d2a/dShape2 (so that dLoc/d(z, log Scale, Shape) =
// (1, -b1, -b2)), by the chain rule:
//
//	g = J' gq,  H = J' hq J + gq_Loc d2Loc,  J = [[1, -b1, -b2], [0, 1, 0], [0, 0, 1]]',
//	d2Loc/dlogScale2 = -b1, d2Loc/dlogScale dShape = -b2, d2Loc/dShape2 = -b3.
//
// Source: elementary calculus.
func reparamLevel(gq [3]float64, hq [9]float64, b1, b2, b3 float64, g, h []float64) {
	d := [3]float64{1, -b1, -b2} // dLoc/dp
	g[0] = gq[0]
	g[1] = gq[1] + d[1]*gq[0]
	g[2] = gq[2] + d[2]*gq[0]
	// J[i][k] = dq_k/dp_i: row i of p; q = (Loc, logScale, Shape).
	var jm [3][3]float64
	for i := 0; i < 3; i++ {
		jm[i][0] = d[i]
	}
	jm[1][1], jm[2][2] = 1, 1
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			var v float64
			for k := 0; k < 3; k++ {
				for l := 0; l < 3; l++ {
					v += jm[i][k] * hq[k*3+l] * jm[j][l]
				}
			}
			h[i*3+j] = v
		}
	}
	h[4] -= gq[0] * b1
	h[5] -= gq[0] * b2
	h[7] -= gq[0] * b2
	h[8] -= gq[0] * b3
}

// lagrangeEnd returns one end of the 95% profile-likelihood interval of a
// level z(theta) of a likelihood of n = len(that) parameters (2 or 3)
// directly, as the extremum of z over the likelihood region
// {theta : 2 [nll(theta) - nllMax] <= chi2Crit95}: the profile interval is
// the image of that region under z (Coles 2001, section 2.6.6: z is in the
// interval iff some theta with z(theta) = z lies in the region). The end on
// the side sgn (+1 upper, -1 lower) solves the Lagrange conditions of
// max (sgn z) on the region's boundary,
//
//	grad z(theta) = mu grad nll(theta),  nll(theta) = nllMax + chi2Crit95/2,
//
// by Newton's method on (theta, mu) (Nocedal and Wright 2006, section 18.1,
// Newton's method on the first-order conditions), started from the end of
// the quadratic model: theta = that + sgn sqrt(chi2Crit95) H^-1 grad z /
// sqrt(grad z' H^-1 grad z), H the Hessian h0 of nll at the optimum that.
// A step moves no coordinate further than the start lay from the optimum
// (at least 5 % of 1 + |that|) and is halved where nll is not finite; the
// search gives up after 25 steps, or when mu still has the wrong sign after
// 5 (it is headed for the other end).
// nll writes its gradient and Hessian (row-major, n x n) when g is non-nil;
// level returns z with its gradient and Hessian. The answer is accepted
// (ok) only when the conditions hold to 1e-10, mu has the sign of sgn and
// the Lagrangian's Hessian on the boundary's tangent space is that of a
// maximum of sgn z (second-order conditions, ibid. section 12.5); otherwise
// (and where nll is not finite along the way) the caller searches the
// profile itself (profileEnd). Where the profile rises monotonically on
// that side from the level, the two give the same end.
func lagrangeEnd(nll func(x, g, h []float64) float64, level func(x, g, h []float64) float64,
	that, h0 []float64, nllMax, sgn float64) (float64, bool) {
	n := len(that)
	target := nllMax + chi2Crit95/2
	gz, hz := make([]float64, n), make([]float64, n*n)
	level(that, gz, hz)
	d, ok := solveN(append([]float64(nil), h0...), append([]float64(nil), gz...), n)
	if !ok {
		return math.NaN(), false
	}
	var q float64
	for i := range d {
		q += gz[i] * d[i]
	}
	if !(q > 0) {
		return math.NaN(), false
	}
	r := math.Sqrt(chi2Crit95 / q)
	x := make([]float64, n)
	for i := range x {
		x[i] = that[i] + sgn*r*d[i]
	}
	mu := sgn / r // grad z = mu H (x - that) on the quadratic model
	x0 := append([]float64(nil), x...)
	g, h := make([]float64, n), make([]float64, n*n)
	nv := nll(x, g, h)
	for k := 0; k < 30 && (math.IsInf(nv, 0) || math.IsNaN(nv)); k++ {
		for i := range x {
			x[i] = 0.5 * (x[i] + that[i])
		}
		nv = nll(x, g, h)
	}
	xn, gn, hn := make([]float64, n), make([]float64, n), make([]float64, n*n)
	m := n + 1
	rhs, jm := make([]float64, m), make([]float64, m*m)
	for it := 0; it < 40; it++ {
		if math.IsInf(nv, 0) || math.IsNaN(nv) {
			return math.NaN(), false
		}
		if it >= 5 && !(sgn*mu > 0) {
			return math.NaN(), false // headed for the other end
		}
		z := level(x, gz, hz)
		var res, scale float64
		for i := 0; i < n; i++ {
			rhs[i] = -(gz[i] - mu*g[i])
			res = math.Max(res, math.Abs(rhs[i]))
			scale = math.Max(scale, math.Abs(gz[i]))
		}
		rhs[n] = -(nv - target)
		if res <= 1e-10*scale && math.Abs(rhs[n]) <= 1e-10*math.Max(1, math.Abs(target)) {
			if !(sgn*mu > 0) || !tangentMax(hz, h, g, mu, sgn, n) {
				return math.NaN(), false
			}
			return z, true
		}
		// J [dx dmu]' = rhs, J = [[Hz - mu H, -g], [g', 0]].
		for i := 0; i < n; i++ {
			for j := 0; j < n; j++ {
				jm[i*m+j] = hz[i*n+j] - mu*h[i*n+j]
			}
			jm[i*m+n] = -g[i]
			jm[n*m+i] = g[i]
		}
		jm[n*m+n] = 0
		st, ok := solveN(jm, rhs, m)
		if !ok {
			return math.NaN(), false
		}
		// No coordinate moves further in one step than the start lay from
		// the optimum (a step bound; the first-order model is poor far out).
		t := 1.0
		for i := 0; i < n; i++ {
			if lim := math.Max(math.Abs(x0[i]-that[i]), 0.05*(1+math.Abs(that[i]))); math.Abs(st[i])*t > lim {
				t = lim / math.Abs(st[i])
			}
		}
		var nn float64
		for bt := 0; bt < 30; bt++ {
			for i := range xn {
				xn[i] = x[i] + t*st[i]
			}
			nn = nll(xn, gn, hn)
			if !math.IsInf(nn, 0) && !math.IsNaN(nn) {
				break
			}
			t /= 2
		}
		x, xn = xn, x
		g, gn = gn, g
		h, hn = hn, h
		mu += t * st[n]
		nv = nn
	}
	return math.NaN(), false
}

// tangentMax reports whether the Lagrangian Hessian Hz - mu H (n x n,
// row-major) is negative definite times sgn on the tangent space of the
// constraint (the vectors orthogonal to g): its projection on an
// orthonormal basis of that space (Gram-Schmidt) is checked by Cholesky.
func tangentMax(hz, h, g []float64, mu, sgn float64, n int) bool {
	var gg float64
	for _, v := range g {
		gg += v * v
	}
	if !(gg > 0) {
		return false
	}
	var basis [][]float64
	for k := 0; k < n && len(basis) < n-1; k++ {
		v := make([]float64, n)
		v[k] = 1
		c := g[k] / gg
		for i := range v {
			v[i] -= c * g[i]
		}
		for _, b := range basis {
			var p float64
			for i := range v {
				p += v[i] * b[i]
			}
			for i := range v {
				v[i] -= p * b[i]
			}
		}
		var nv float64
		for _, e := range v {
			nv += e * e
		}
		if nv < 0.1 {
			continue
		}
		nv = math.Sqrt(nv)
		for i := range v {
			v[i] /= nv
		}
		basis = append(basis, v)
	}
	k := len(basis)
	if k != n-1 {
		return false
	}
	// P = -sgn B' (Hz - mu H) B must be positive definite.
	p := make([]float64, k*k)
	for a := 0; a < k; a++ {
		for b := 0; b < k; b++ {
			var s float64
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					s += basis[a][i] * (hz[i*n+j] - mu*h[i*n+j]) * basis[b][j]
				}
			}
			p[a*k+b] = -sgn * s
		}
	}
	for j := 0; j < k; j++ {
		d := p[j*k+j]
		for l := 0; l < j; l++ {
			d -= p[j*k+l] * p[j*k+l]
		}
		if !(d > 0) {
			return false
		}
		d = math.Sqrt(d)
		p[j*k+j] = d
		for i := j + 1; i < k; i++ {
			s := p[i*k+j]
			for l := 0; l < j; l++ {
				s -= p[i*k+l] * p[j*k+l]
			}
			p[i*k+j] = s / d
		}
	}
	return true
}

// solveN solves a x = b for an n x n matrix a (row-major; both are
// overwritten) by Gaussian elimination with partial pivoting; ok = false
// when a is singular to working precision.
func solveN(a, b []float64, n int) ([]float64, bool) {
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r*n+c]) > math.Abs(a[p*n+c]) {
				p = r
			}
		}
		if !(math.Abs(a[p*n+c]) > 0) {
			return nil, false
		}
		if p != c {
			for k := 0; k < n; k++ {
				a[c*n+k], a[p*n+k] = a[p*n+k], a[c*n+k]
			}
			b[c], b[p] = b[p], b[c]
		}
		for r := c + 1; r < n; r++ {
			f := a[r*n+c] / a[c*n+c]
			for k := c; k < n; k++ {
				a[r*n+k] -= f * a[c*n+k]
			}
			b[r] -= f * b[c]
		}
	}
	x := make([]float64, n)
	for c := n - 1; c >= 0; c-- {
		v := b[c]
		for k := c + 1; k < n; k++ {
			v -= a[c*n+k] * x[k]
		}
		x[c] = v / a[c*n+c]
		if math.IsNaN(x[c]) || math.IsInf(x[c], 0) {
			return nil, false
		}
	}
	return x, true
}
