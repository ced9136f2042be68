package extremes

import "math"

// GEV is the generalised extreme value distribution of block maxima,
//
//	G(z) = exp{ -[1 + Shape (z-Loc)/Scale]^(-1/Shape) },  1 + Shape (z-Loc)/Scale > 0,
//
// and G(z) = exp{-exp[-(z-Loc)/Scale]} (Gumbel) in the limit Shape -> 0.
// Source: Coles (2001), eq. (3.2). Shape > 0 is a heavy upper tail.
type GEV struct{ Loc, Scale, Shape float64 }

// GPD is the generalised Pareto distribution of excesses y = x - Threshold > 0,
//
//	H(y) = 1 - [1 + Shape y/Scale]^(-1/Shape),  1 + Shape y/Scale > 0,
//
// and H(y) = 1 - exp(-y/Scale) (exponential) in the limit Shape -> 0.
// Source: Coles (2001), eq. (4.2).
type GPD struct{ Threshold, Scale, Shape float64 }

// smallShape is the |Shape * y| below which series expansions replace the
// closed forms, so that the Shape -> 0 limit is continuous to rounding.
const smallShape = 1e-4

// boxLog returns L = log(1 + xi*y)/xi and its derivative dL/dxi at fixed y,
// with the limits L -> y and dL/dxi -> -y^2/2 as xi -> 0. For |xi*y| < 1e-4
// the Taylor series L = y(1 - u/2 + u^2/3 - u^3/4), dL/dxi = y^2(-1/2 + 2u/3 -
// 3u^2/4 + 4u^3/5), u = xi*y, are used (truncation error below 1e-16 relative).
// It returns ok = false outside the support (1 + xi*y <= 0).
// Source: elementary calculus on the Coles (2001) forms (3.2) and (4.2).
func boxLog(xi, y float64) (L, dL float64, ok bool) {
	u := xi * y
	if !(u > -1) {
		return math.NaN(), math.NaN(), false
	}
	if math.Abs(u) < smallShape {
		L = y * (1 + u*(-0.5+u*(1.0/3-u*0.25)))
		dL = y * y * (-0.5 + u*(2.0/3+u*(-0.75+u*0.8)))
		return L, dL, true
	}
	L = math.Log1p(u) / xi
	dL = (y/(1+u) - L) / xi
	return L, dL, true
}

// boxLogCurv returns d2L/dxi2 at fixed y for L = log(1 + xi y)/xi, given
// w = 1 + xi y and dL = dL/dxi from boxLog:
//
//	d2L/dxi2 = -((y/w)^2 + 2 dL/dxi)/xi,
//
// and for |xi y| < smallShape, where that cancels, its Taylor series
// y^3 (2/3 - 3/2 u + 12/5 u^2 - 10/3 u^3), u = xi y (from
// L = sum_k (-1)^k xi^k y^(k+1)/(k+1)). Source: elementary calculus.
func boxLogCurv(xi, y, w, dL float64) float64 {
	if u := xi * y; math.Abs(u) < smallShape {
		return y * y * y * (2.0/3 + u*(-1.5+u*(2.4-u*10.0/3)))
	}
	yw := y / w
	return -(yw*yw + 2*dL) / xi
}

// boxL is the L of boxLog alone (the same operations, without dL/dxi), for
// the likelihoods evaluated without a gradient.
func boxL(xi, y float64) (L float64, ok bool) {
	u := xi * y
	if !(u > -1) {
		return math.NaN(), false
	}
	if math.Abs(u) < smallShape {
		return y * (1 + u*(-0.5+u*(1.0/3-u*0.25))), true
	}
	return math.Log1p(u) / xi, true
}

// CDF returns G(z) (Coles 2001, eq. 3.2).
func (g GEV) CDF(z float64) float64 {
	L, _, ok := boxLog(g.Shape, (z-g.Loc)/g.Scale)
	if !ok {
		if g.Shape > 0 {
			return 0
		}
		return 1
	}
	return math.Exp(-math.Exp(-L))
}

// LogPDF returns log g(z) = -log Scale - (1 + Shape) L - exp(-L), with
// L = log(1 + Shape y)/Shape, y = (z-Loc)/Scale (Coles 2001, eq. 3.7, one term);
// -Inf outside the support.
func (g GEV) LogPDF(z float64) float64 {
	L, _, ok := boxLog(g.Shape, (z-g.Loc)/g.Scale)
	if !ok {
		return math.Inf(-1)
	}
	return -math.Log(g.Scale) - (1+g.Shape)*L - math.Exp(-L)
}

// Quantile returns z with G(z) = p: z = Loc - Scale/Shape [1 - (-log p)^(-Shape)],
// Loc - Scale log(-log p) for Shape = 0 (Coles 2001, eq. 3.4).
func (g GEV) Quantile(p float64) float64 {
	s := math.Log(-math.Log(p)) // log y_p
	a, _ := expShapeTerm(g.Shape, -s)
	return g.Loc + g.Scale*a
}

// expShapeTerm returns A = (exp(xi*s) - 1)/xi and dA/dxi, with the limits
// A -> s, dA/dxi -> s^2/2 as xi -> 0 (series A = s (1 + u/2 + u^2/6 + u^3/24),
// dA/dxi = s^2 (1/2 + u/3 + u^2/8 + u^3/30), u = xi s, for |u| < 1e-4).
// Source: elementary calculus; used by the return-level formulas of Coles (2001),
// eqs. (3.10) and (4.12).
func expShapeTerm(xi, s float64) (a, da float64) {
	u := xi * s
	if math.Abs(u) < smallShape {
		a = s * (1 + u*(0.5+u*(1.0/6+u/24)))
		da = s * s * (0.5 + u*(1.0/3+u*(0.125+u/30)))
		return a, da
	}
	e := math.Expm1(u)
	a = e / xi
	da = (s*(e+1)*xi - e) / (xi * xi)
	return a, da
}

// expShapeCurv returns d2a/dxi2 of a = (exp(xi s) - 1)/xi (expShapeTerm):
//
//	d2a/dxi2 = (exp(u) (u^2 - 2u + 2) - 2)/xi^3,  u = xi s,
//
// and, for |u| < 0.05, where that difference cancels, its Taylor series
// s^3 (1/3 + u/4 + u^2/10 + u^3/36 + u^4/168 + u^5/960) (from
// a = sum_k s^(k+1) xi^k/(k+1)!; truncation below 3e-12 relative).
// Source: elementary calculus.
func expShapeCurv(xi, s float64) float64 {
	u := xi * s
	if math.Abs(u) < 0.05 {
		return s * s * s * (1.0/3 + u*(0.25+u*(0.1+u*(1.0/36+u*(1.0/168+u/960)))))
	}
	return (math.Exp(u)*(u*u-2*u+2) - 2) / (xi * xi * xi)
}

// ReturnLevel returns the level exceeded by an annual maximum with probability
// p = 1/T and its gradient with respect to (Loc, Scale, Shape):
//
//	z_T = Loc - Scale/Shape [1 - y^(-Shape)],  y = -log(1 - 1/T)
//	grad = [1, -(1 - y^(-Shape))/Shape, Scale (1 - y^(-Shape))/Shape^2 - Scale y^(-Shape) log(y)/Shape]
//
// Source: Coles (2001), eqs. (3.10) and (3.11); the Shape -> 0 limit is
// z_T = Loc - Scale log y. T must exceed 1 year (an annual maximum exceeds
// every level below its lower end point with probability 1); NaN otherwise.
func (g GEV) ReturnLevel(T float64) (z float64, grad [3]float64) {
	if !(T > 1) {
		nan := math.NaN()
		return nan, [3]float64{nan, nan, nan}
	}
	s := -math.Log(-math.Log1p(-1 / T)) // -log y_p
	a, da := expShapeTerm(g.Shape, s)
	// z = Loc + Scale * (exp(Shape*s) - 1)/Shape with s = -log y_p, i.e. eq. (3.10).
	return g.Loc + g.Scale*a, [3]float64{1, a, g.Scale * da}
}

// LogPDF returns log h(x) = -log Scale - (1 + 1/Shape) log(1 + Shape (x-Threshold)/Scale)
// for x > Threshold (Coles 2001, eq. 4.10, one term); -Inf outside the support.
func (g GPD) LogPDF(x float64) float64 {
	y := x - g.Threshold
	if y < 0 {
		return math.Inf(-1)
	}
	L, _, ok := boxLog(g.Shape, y/g.Scale)
	if !ok {
		return math.Inf(-1)
	}
	return -math.Log(g.Scale) - (1+g.Shape)*L
}

// Survival returns Pr{X > x | X > Threshold} = [1 + Shape (x-Threshold)/Scale]^(-1/Shape)
// (Coles 2001, eq. 4.2).
func (g GPD) Survival(x float64) float64 {
	y := x - g.Threshold
	if y <= 0 {
		return 1
	}
	L, _, ok := boxLog(g.Shape, y/g.Scale)
	if !ok {
		return 0
	}
	return math.Exp(-L)
}

// Quantile returns x with Pr{X <= x | X > Threshold} = p:
// x = Threshold + Scale/Shape [(1-p)^(-Shape) - 1] (inverse of Coles 2001, eq. 4.2).
func (g GPD) Quantile(p float64) float64 {
	a, _ := expShapeTerm(g.Shape, -math.Log1p(-p))
	return g.Threshold + g.Scale*a
}

// ReturnLevel returns the level exceeded on average once in T years when storm
// peaks exceed the threshold at rate lambda per year, and its gradient with
// respect to (lambda, Scale, Shape):
//
//	x_T = Threshold + Scale/Shape [(lambda T)^Shape - 1]   (Threshold + Scale log(lambda T) for Shape = 0)
//	grad = [Scale (lambda T)^Shape / lambda, ((lambda T)^Shape - 1)/Shape, Scale d/dShape{((lambda T)^Shape - 1)/Shape}]
//
// Source: Coles (2001), eqs. (4.12)-(4.15), with m zeta_u = lambda T. Levels with
// lambda T < 1 lie below the threshold and are outside the model (NaN).
func (g GPD) ReturnLevel(T, lambda float64) (x float64, grad [3]float64) {
	m := lambda * T
	if !(m >= 1) || !(lambda > 0) {
		nan := math.NaN()
		return nan, [3]float64{nan, nan, nan}
	}
	s := math.Log(m)
	a, da := expShapeTerm(g.Shape, s)
	return g.Threshold + g.Scale*a, [3]float64{g.Scale * math.Exp(g.Shape*s) / lambda, a, g.Scale * da}
}
