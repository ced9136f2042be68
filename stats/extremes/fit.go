package extremes

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"swellgrid/stats/internal/localopt"
)

// z975 is the 0.975 quantile of the standard normal distribution (two-sided 95%).
const z975 = 1.959963984540054

// GEVFit is a maximum-likelihood GEV fit to block maxima.
type GEVFit struct {
	GEV
	Start     GEV           // probability-weighted-moment (L-moment) estimate the optimiser started from
	Cov       [3][3]float64 // covariance of (Loc, Scale, Shape): inverse observed information; NaN if singular
	StdErr    [3]float64    // square roots of the diagonal of Cov
	LogLik    float64       // maximised log-likelihood
	Converged bool          // the optimiser stopped on a convergence criterion at a finite optimum
	InfoOK    bool          // the observed information matrix is positive definite
	N         int           // number of maxima used (finite values)
	OptErr    error         // the optimiser's error when the search failed with one (Converged is then false)
}

// GPDFit is a maximum-likelihood GPD fit to storm peaks above a threshold.
type GPDFit struct {
	GPD
	Start        GPD           // probability-weighted-moment estimate the optimiser started from
	PeaksPerYear float64       // lambda: mean number of peaks above the threshold per year
	Cov          [2][2]float64 // covariance of (Scale, Shape); NaN if singular
	StdErr       [2]float64
	LogLik       float64
	Converged    bool
	InfoOK       bool
	N            int   // number of peaks above the threshold
	OptErr       error // the optimiser's error when the search failed with one (Converged is then false)
}

// minShapeML is the lower bound on Shape for the likelihood searches: for
// Shape <= -1 the GEV and GPD likelihoods are unbounded (Smith 1985, as
// summarised in Coles 2001, section 3.3.2), so such points are infeasible.
const minShapeML = -1

// gevNegLogLik returns -l(Loc, log Scale, Shape) for the maxima z and writes
// its gradient into grad (if non-nil); see gevNegLogLikHess for the formulas.
func gevNegLogLik(x, grad, z []float64) float64 {
	return gevNegLogLikHess(x, grad, nil, z)
}

// gevNegLogLikHess returns -l(Loc, log Scale, Shape) for the maxima z, its
// gradient into grad (if non-nil) and its Hessian into hess (3 x 3,
// row-major; if non-nil as well), where per observation, with
// y = (z-Loc)/Scale, w = 1 + Shape y, L = log(w)/Shape, t = exp(-L),
// c = t - 1 - Shape, and the derivatives of L
// D = (dL/dLoc, dL/dlogScale, dL/dShape) = (-1/(w Scale), -y/w, L'):
//
//	l     = -log Scale - (1 + Shape) L - t                    (Coles 2001, eq. 3.7)
//	dl/dLoc      = -(t - 1 - Shape) / (w Scale)
//	dl/dlogScale = -1 - y (t - 1 - Shape) / w
//	dl/dShape    = -L + (t - 1 - Shape) dL/dShape
//	d2l/dp dq    = -t D_p D_q + c dD_p/dq - [q = Shape] D_p - [p = Shape] D_q
//
// with dD/dq symmetric: dD_Loc/d(Loc, logScale, Shape) = (-Shape/(Scale^2 w^2),
// 1/(Scale w^2), y/(Scale w^2)), dD_logScale/d(logScale, Shape) =
// (y/w^2, y^2/w^2), dD_Shape/dShape = d2L/dShape2 (boxLogCurv).
// The derivatives are derived here by the chain rule (dy/dLoc = -1/Scale,
// dy/dlogScale = -y, dt = -t dL); boxLog supplies L and L' with their smooth
// Shape -> 0 (Gumbel) limits. Outside the support it returns +Inf.
func gevNegLogLikHess(x, grad, hess, z []float64) float64 {
	mu, phi, xi := x[0], x[1], x[2]
	if xi <= minShapeML || math.Abs(phi) > 700 {
		return math.Inf(1)
	}
	sigma := math.Exp(phi)
	if grad == nil {
		// The value alone, by the same operations (no derivatives).
		var l float64
		for _, zi := range z {
			L, ok := boxL(xi, (zi-mu)/sigma)
			if !ok {
				return math.Inf(1)
			}
			l += -phi - (1+xi)*L - math.Exp(-L)
		}
		return -l
	}
	var l, gmu, gphi, gxi float64
	var h [6]float64 // mm, mp, mx, pp, px, xx
	for _, zi := range z {
		y := (zi - mu) / sigma
		L, dL, ok := boxLog(xi, y)
		if !ok {
			return math.Inf(1)
		}
		t := math.Exp(-L)
		w := 1 + xi*y
		l += -phi - (1+xi)*L - t
		c := (t - 1 - xi) / w
		gmu -= c / sigma
		gphi += -1 - y*c
		gxi += -L + (t-1-xi)*dL
		if hess != nil {
			cc := t - 1 - xi
			dm, dp, dx := -1/(w*sigma), -y/w, dL
			iw2 := 1 / (w * w)
			h[0] += -t*dm*dm + cc*(-xi*iw2/(sigma*sigma))
			h[1] += -t*dm*dp + cc*iw2/sigma
			h[2] += -t*dm*dx + cc*y*iw2/sigma - dm
			h[3] += -t*dp*dp + cc*y*iw2
			h[4] += -t*dp*dx + cc*y*y*iw2 - dp
			h[5] += -t*dx*dx + cc*boxLogCurv(xi, y, w, dL) - 2*dx
		}
	}
	grad[0], grad[1], grad[2] = -gmu, -gphi, -gxi
	if hess != nil {
		hess[0], hess[1], hess[2] = -h[0], -h[1], -h[2]
		hess[3], hess[4], hess[5] = -h[1], -h[3], -h[4]
		hess[6], hess[7], hess[8] = -h[2], -h[4], -h[5]
	}
	return -l
}

// gpdNegLogLik returns -l(log Scale, Shape) for the excesses y and writes
// its gradient into grad (if non-nil); see gpdNegLogLikHess for the formulas.
func gpdNegLogLik(x, grad, y []float64) float64 {
	return gpdNegLogLikHess(x, grad, nil, y)
}

// gpdNegLogLikHess returns -l(log Scale, Shape) for the excesses y, its
// gradient (if grad is non-nil) and its Hessian (if hess is non-nil as
// well), where per excess, with v = y/Scale, w = 1 + Shape v,
// L = log(w)/Shape, L1 = dL/dShape and L2 = d2L/dShape2:
//
//	l = -log Scale - (1 + Shape) L                              (Coles 2001, eq. 4.10)
//	dl/dlogScale = -1 + (1 + Shape) v / w
//	dl/dShape    = -L - (1 + Shape) L1
//	d2l/dlogScale2       = -(1 + Shape) v / w^2
//	d2l/dlogScale dShape = v / w - (1 + Shape) v^2 / w^2
//	d2l/dShape2          = -2 L1 - (1 + Shape) L2
//
// The derivatives are derived here by the chain rule (dv/dlogScale = -v);
// boxLog supplies L and L1, boxLogCurv L2. Outside the support it returns +Inf.
func gpdNegLogLikHess(x, grad []float64, hess *[2][2]float64, y []float64) float64 {
	phi, xi := x[0], x[1]
	if xi <= minShapeML || math.Abs(phi) > 700 {
		return math.Inf(1)
	}
	sigma := math.Exp(phi)
	if grad == nil {
		// The value alone, by the same operations (no derivatives).
		var l float64
		for _, yi := range y {
			L, ok := boxL(xi, yi/sigma)
			if !ok {
				return math.Inf(1)
			}
			l += -phi - (1+xi)*L
		}
		return -l
	}
	var l, gphi, gxi float64
	var hpp, hpx, hxx float64
	for _, yi := range y {
		v := yi / sigma
		L, dL, ok := boxLog(xi, v)
		if !ok {
			return math.Inf(1)
		}
		w := 1 + xi*v
		l += -phi - (1+xi)*L
		gphi += -1 + (1+xi)*v/w
		gxi += -L - (1+xi)*dL
		if hess != nil {
			vw := v / w
			d2L := boxLogCurv(xi, v, w, dL)
			hpp += -(1 + xi) * vw / w
			hpx += vw - (1+xi)*vw*vw
			hxx += -2*dL - (1+xi)*d2L
		}
	}
	grad[0], grad[1] = -gphi, -gxi
	if hess != nil {
		hess[0][0], hess[0][1], hess[1][0], hess[1][1] = -hpp, -hpx, -hpx, -hxx
	}
	return -l
}

// gevPWMStart returns the probability-weighted-moment estimate of the GEV,
// from the sample L-moments l1 = b0, l2 = 2b1 - b0, l3 = 6b2 - 6b1 + b0 with the
// unbiased b_r of the sorted sample, t3 = l3/l2 and Hosking's approximation
//
//	c = 2/(3 + t3) - log 2/log 3,  k = 7.8590 c + 2.9554 c^2,
//	Scale = l2 k / ((1 - 2^-k) Gamma(1 + k)),  Loc = l1 - Scale (1 - Gamma(1 + k))/k,
//	Shape = -k   (Hosking's k has the opposite sign to Coles' Shape)
//
// with the Gumbel limit Scale = l2/log 2, Loc = l1 - 0.5772 Scale for |k| < 1e-6.
// Source: Hosking, Wallis and Wood (1985), Technometrics 27(3), 251-261, and
// Hosking (1990), J. R. Statist. Soc. B 52, 105-124. k is clamped to [-0.9, 0.9].
func gevPWMStart(sorted []float64) GEV {
	b0, b1, b2 := pwm3(sorted)
	l1, l2, l3 := b0, 2*b1-b0, 6*b2-6*b1+b0
	if !(l2 > 0) {
		return GEV{Loc: l1, Scale: math.Max(math.Abs(l1)*1e-3, 1e-9), Shape: 0}
	}
	t3 := l3 / l2
	c := 2/(3+t3) - math.Ln2/math.Log(3)
	k := 7.8590*c + 2.9554*c*c
	k = math.Max(-0.9, math.Min(0.9, k))
	if math.Abs(k) < 1e-6 {
		s := l2 / math.Ln2
		return GEV{Loc: l1 - 0.5772156649015329*s, Scale: s, Shape: 0}
	}
	g := math.Gamma(1 + k)
	s := l2 * k / ((1 - math.Pow(2, -k)) * g)
	return GEV{Loc: l1 - s*(1-g)/k, Scale: s, Shape: -k}
}

// pwm3 returns the unbiased sample probability-weighted moments
// b_r = n^-1 sum_j [(j-1)...(j-r)]/[(n-1)...(n-r)] x_(j), r = 0, 1, 2, of an
// ascending sample (Landwehr, Matalas and Wallis 1979; Hosking 1990, eq. 2.4).
func pwm3(x []float64) (b0, b1, b2 float64) {
	n := float64(len(x))
	for j, v := range x {
		fj := float64(j) // j-1 in 1-based notation
		b0 += v
		if n > 1 {
			b1 += v * fj / (n - 1)
		}
		if n > 2 {
			b2 += v * fj * (fj - 1) / ((n - 1) * (n - 2))
		}
	}
	return b0 / n, b1 / n, b2 / n
}

// gpdPWMStart returns the probability-weighted-moment estimate of the GPD for
// excesses over a known threshold: k = l1/l2 - 2, Scale = (1 + k) l1, Shape = -k,
// with l1 = b0, l2 = 2 b1 - b0. Source: Hosking and Wallis (1987),
// Technometrics 29(3), 339-349. k is clamped to [-0.9, 0.9].
func gpdPWMStart(sortedExcess []float64) GPD {
	b0, b1, _ := pwm3(sortedExcess)
	l1, l2 := b0, 2*b1-b0
	if !(l2 > 0) || !(l1 > 0) {
		return GPD{Scale: math.Max(l1, 1e-9), Shape: 0}
	}
	k := l1/l2 - 2
	k = math.Max(-0.9, math.Min(0.9, k))
	return GPD{Scale: (1 + k) * l1, Shape: -k}
}

// minimise runs BFGS from x0 on f and, if that does not end on a
// convergence criterion, Nelder-Mead from x0 followed by BFGS again, both
// with gonum's methods driven in the calling goroutine (localopt: the same
// optima as optimize.Minimize, without a channel hand-over per evaluation).
// It returns the optimum, whether it converged, and the optimiser's error
// when the search failed with one (then converged is false): a caller turns
// that into FlagNoConvergence, never into a published value.
func minimise(f objective, x0 []float64, gradTol float64) ([]float64, float64, bool, error) {
	settings := localopt.Settings{
		GradientThreshold: gradTol,
		MajorIterations:   200,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 25},
	}
	ok := func(r localopt.Result, err error) bool {
		if math.IsInf(r.F, 0) || math.IsNaN(r.F) {
			return false
		}
		return err == nil && (r.Status == optimize.GradientThreshold || r.Status == optimize.FunctionConvergence)
	}
	p := localopt.Problem{FuncGrad: f, Func: func(x []float64) float64 { return f(x, nil) }}
	r, err := localopt.BFGS(p, x0, settings)
	if ok(r, err) {
		return r.X, r.F, true, nil
	}
	nm, nmErr := localopt.NelderMead(p.Func, x0, localopt.Settings{MajorIterations: 2000,
		Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 50}})
	if nmErr != nil || math.IsInf(nm.F, 0) || math.IsNaN(nm.F) {
		if nmErr == nil {
			nmErr = err
		}
		if nmErr == nil {
			nmErr = fmt.Errorf("no finite optimum (BFGS stopped with status %v)", r.Status)
		}
		nmErr = fmt.Errorf("extremes: Nelder-Mead fallback: %w", nmErr)
		if !math.IsInf(r.F, 0) && !math.IsNaN(r.F) {
			return r.X, r.F, false, nmErr
		}
		return x0, f(x0, nil), false, nmErr
	}
	r2, err2 := localopt.BFGS(p, nm.X, settings)
	if ok(r2, err2) {
		return r2.X, r2.F, true, nil
	}
	// Nelder-Mead's own convergence still counts if the gradient there is small.
	g := make([]float64, len(x0))
	fv := f(nm.X, g)
	small := true
	for _, v := range g {
		if !(math.Abs(v) < 1e3*gradTol) {
			small = false
		}
	}
	return nm.X, fv, small, nil
}

// observedInfo returns the Hessian of the negative log-likelihood at x by
// central differences of the analytic gradient (step 1e-5 relative), symmetrised.
// Numerical differentiation: common practice (e.g. Nocedal and Wright 2006, 8.1).
func observedInfo(grad func(x, g []float64), x []float64) *mat.SymDense {
	n := len(x)
	h := mat.NewSymDense(n, nil)
	gp, gm := make([]float64, n), make([]float64, n)
	xp := make([]float64, n)
	rows := make([][]float64, n)
	for i := 0; i < n; i++ {
		step := 1e-5 * math.Max(math.Abs(x[i]), 1e-2)
		copy(xp, x)
		xp[i] = x[i] + step
		grad(xp, gp)
		xp[i] = x[i] - step
		grad(xp, gm)
		rows[i] = make([]float64, n)
		for j := 0; j < n; j++ {
			rows[i][j] = (gp[j] - gm[j]) / (2 * step)
		}
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			h.SetSym(i, j, 0.5*(rows[i][j]+rows[j][i]))
		}
	}
	return h
}

// invertInfo inverts a symmetric information matrix by Cholesky; ok = false if
// it is not positive definite.
func invertInfo(h *mat.SymDense) (*mat.SymDense, bool) {
	var ch mat.Cholesky
	if !ch.Factorize(h) {
		return nil, false
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, false
	}
	return &inv, true
}

// ErrTooFew is returned when a sample is too small to fit three (GEV) or two
// (GPD) parameters.
var ErrTooFew = errors.New("extremes: too few values to fit")

// FitGEV fits a GEV to block maxima x (NaN values are skipped) by maximum
// likelihood: gonum's BFGS with the analytic gradient of gevNegLogLik, in
// (Loc, log Scale, Shape), started from the probability-weighted-moment estimate.
// The covariance is the inverse observed information in (Loc, Scale, Shape).
// It needs at least 3 finite values; a fit that did not converge is still returned
// with Converged = false. Equal values are not searched (see ErrNoSpread).
func FitGEV(x []float64) (GEVFit, error) {
	z := finiteSorted(x)
	if len(z) < 3 {
		return GEVFit{N: len(z)}, fmt.Errorf("%w: GEV needs at least 3 block maxima, got %d", ErrTooFew, len(z))
	}
	if z[0] == z[len(z)-1] {
		return noSpreadGEV(z), nil
	}
	start := gevPWMStart(z)
	x0 := []float64{start.Loc, math.Log(start.Scale), start.Shape}
	f := func(p, g []float64) float64 { return gevNegLogLik(p, g, z) }
	if math.IsInf(f(x0, nil), 1) {
		// The moment estimate can put an observation outside the support; start from Gumbel.
		x0[2] = 0
	}
	xo, nll, conv, oerr := minimise(f, x0, 1e-7*float64(len(z)))
	fit := GEVFit{GEV: GEV{Loc: xo[0], Scale: math.Exp(xo[1]), Shape: xo[2]}, Start: start,
		LogLik: -nll, Converged: conv && oerr == nil && !math.IsInf(nll, 0), N: len(z), OptErr: oerr}
	// Gradient in (Loc, Scale, Shape) for the information matrix.
	gradNat := func(p, g []float64) {
		q := []float64{p[0], math.Log(p[1]), p[2]}
		gevNegLogLik(q, g, z)
		g[1] /= p[1]
	}
	fit.Cov, fit.StdErr, fit.InfoOK = covariance3(gradNat, []float64{fit.Loc, fit.Scale, fit.Shape})
	return fit, nil
}

func covariance3(grad func(p, g []float64), p []float64) (cov [3][3]float64, se [3]float64, ok bool) {
	inv, ok := invertInfo(observedInfo(grad, p))
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			cov[i][j] = math.NaN()
			if ok {
				cov[i][j] = inv.At(i, j)
			}
		}
		se[i] = math.Sqrt(cov[i][i])
	}
	return cov, se, ok
}

// FitGPD fits a GPD by maximum likelihood to the values of peaks that exceed
// threshold (values <= threshold and NaN are ignored; pass excesses with
// threshold 0 to fit excesses directly). peaksPerYear is the rate lambda of
// exceedances per year, used for return levels; its variance is taken as
// lambda^2/N (Poisson count). It needs at least 2 exceedances; equal
// excesses are not searched (see ErrNoSpread).
func FitGPD(excessesOrPeaks []float64, threshold float64, peaksPerYear float64) (GPDFit, error) {
	var y []float64
	for _, v := range excessesOrPeaks {
		if v > threshold {
			y = append(y, v-threshold)
		}
	}
	sort.Float64s(y)
	if len(y) < 2 {
		return GPDFit{N: len(y), PeaksPerYear: peaksPerYear}, fmt.Errorf("%w: GPD needs at least 2 exceedances of %g, got %d", ErrTooFew, threshold, len(y))
	}
	if y[0] == y[len(y)-1] {
		return noSpreadGPD(y, threshold, peaksPerYear), nil
	}
	start := gpdPWMStart(y)
	start.Threshold = threshold
	x0 := []float64{math.Log(start.Scale), start.Shape}
	f := func(p, g []float64) float64 { return gpdNegLogLik(p, g, y) }
	if math.IsInf(f(x0, nil), 1) {
		x0[1] = 0
	}
	fh := func(p, g []float64, h *[2][2]float64) float64 { return gpdNegLogLikHess(p, g, h, y) }
	tol := 1e-7 * float64(len(y))
	var xo []float64
	var nll float64
	var conv bool
	var oerr error
	var h [2][2]float64
	var g [2]float64
	if x1, v1, g1, h1, ok := localopt.Newton2(fh, x0, tol); ok {
		xo, nll, conv, g, h = x1, v1, true, g1, h1
	} else {
		xo, nll, conv, oerr = minimise(f, x0, tol)
		fh(xo, g[:], &h) // the gradient and Hessian there, for the information
	}
	fit := GPDFit{GPD: GPD{Threshold: threshold, Scale: math.Exp(xo[0]), Shape: xo[1]}, Start: start,
		PeaksPerYear: peaksPerYear, LogLik: -nll, Converged: conv && oerr == nil && !math.IsInf(nll, 0), N: len(y), OptErr: oerr}
	inv, ok := invertInfo(gpdInfoNatural(h, g, fit.Scale))
	fit.InfoOK = ok
	for i := 0; i < 2; i++ {
		for j := 0; j < 2; j++ {
			fit.Cov[i][j] = math.NaN()
			if ok {
				fit.Cov[i][j] = inv.At(i, j)
			}
		}
		fit.StdErr[i] = math.Sqrt(fit.Cov[i][i])
	}
	return fit, nil
}

// gpdInfoNatural returns the observed information in (Scale, Shape) from
// the Hessian h and gradient g of the negative log-likelihood in
// (log Scale, Shape) at Scale = sigma, by the chain rule with
// dlogScale/dScale = 1/sigma:
//
//	I_ss = (h_00 - g_0)/sigma^2,  I_sx = h_01/sigma,  I_xx = h_11
//
// (the g_0 term is the second derivative of log Scale; it vanishes at the
// optimum up to the search tolerance).
func gpdInfoNatural(h [2][2]float64, g [2]float64, sigma float64) *mat.SymDense {
	return mat.NewSymDense(2, []float64{
		(h[0][0] - g[0]) / (sigma * sigma), h[0][1] / sigma,
		h[0][1] / sigma, h[1][1],
	})
}

// ErrNoSpread is the optimiser error of a fit to values that are all equal:
// the likelihood then has no maximum (it grows without bound as Scale -> 0),
// so no search is made.
var ErrNoSpread = errors.New("extremes: all values are equal, the likelihood has no maximum")

// noSpreadGEV is the GEV fit of n equal maxima: not converged (ErrNoSpread),
// parameters, log-likelihood and covariance NaN, information not regular.
func noSpreadGEV(z []float64) GEVFit {
	n := math.NaN()
	f := GEVFit{GEV: GEV{Loc: n, Scale: n, Shape: n}, Start: GEV{Loc: z[0], Scale: n, Shape: n}, LogLik: n, N: len(z), OptErr: ErrNoSpread}
	for i := range f.Cov {
		for j := range f.Cov[i] {
			f.Cov[i][j] = n
		}
		f.StdErr[i] = n
	}
	return f
}

// noSpreadGPD is the GPD fit of equal excesses (see noSpreadGEV).
func noSpreadGPD(y []float64, threshold, peaksPerYear float64) GPDFit {
	n := math.NaN()
	f := GPDFit{GPD: GPD{Threshold: threshold, Scale: n, Shape: n}, Start: GPD{Threshold: threshold, Scale: n, Shape: n},
		PeaksPerYear: peaksPerYear, LogLik: n, N: len(y), OptErr: ErrNoSpread}
	for i := range f.Cov {
		for j := range f.Cov[i] {
			f.Cov[i][j] = n
		}
		f.StdErr[i] = n
	}
	return f
}

func finiteSorted(x []float64) []float64 {
	z := make([]float64, 0, len(x))
	for _, v := range x {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			z = append(z, v)
		}
	}
	sort.Float64s(z)
	return z
}

// ReturnLevel returns the T-year return level of the fitted GEV and its 95%
// confidence interval by the delta method, level +- 1.96 sqrt(grad' Cov grad)
// (Coles 2001, eq. 3.11 and section 2.6.4). NaN for T <= 1 or without a
// covariance (the level itself is still given when defined).
func (f GEVFit) ReturnLevel(T float64) (level, lo, hi float64) {
	z, g := f.GEV.ReturnLevel(T)
	var v float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			v += g[i] * f.Cov[i][j] * g[j]
		}
	}
	sd := math.Sqrt(v)
	return z, z - z975*sd, z + z975*sd
}

// ReturnLevel returns the T-year return level of the fitted GPD with its 95%
// delta-method interval, Var = grad' V grad with V = diag(Var lambda, Cov(Scale, Shape))
// and Var lambda = lambda^2/N (Coles 2001, section 4.3.3, with the Poisson
// count variance in place of the binomial zeta(1-zeta)/n).
func (f GPDFit) ReturnLevel(T float64) (level, lo, hi float64) {
	x, g := f.GPD.ReturnLevel(T, f.PeaksPerYear)
	varLam := 0.0
	if f.N > 0 {
		varLam = f.PeaksPerYear * f.PeaksPerYear / float64(f.N)
	}
	v := g[0] * g[0] * varLam
	for i := 0; i < 2; i++ {
		for j := 0; j < 2; j++ {
			v += g[i+1] * f.Cov[i][j] * g[j+1]
		}
	}
	sd := math.Sqrt(v)
	return x, x - z975*sd, x + z975*sd
}
