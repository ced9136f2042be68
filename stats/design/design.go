// Package design derives design sea states for one grid cell: a joint model
// of Hm0 and Te fitted to all sea states of the record, and IFORM
// environmental contours of it for given return periods.
//
// The joint model follows the conditional modelling approach of DNV-RP-C205
// (section 3.6.3): Hm0 has a 3-parameter Weibull marginal; ln Te given Hm0 = h
// is normal with mean mu(h) = a0 + a1 h^a2 and standard deviation
// sigma(h) = b0 + b1 exp(-b2 h). Contours use the inverse first-order
// reliability method (IFORM, Winterstein et al. 1993, Proc. OMAE; DNV-RP-C205
// section 3.7.2) with the Rosenblatt transform.
//
// The sample is never kept: the fits use bounded, exactly mergeable binned
// summaries of the record that the per-cell state already holds, the Hm0
// histogram (for the marginal, by maximum likelihood on the binned counts)
// and the joint Hm0 x Te occurrence table (for the conditional law of ln Te,
// by maximum likelihood on its grouped counts). See FitJoint for
// the error this binning brings.
//
// The package works on plain numbers; it must not know about NetCDF, files,
// grids, tables or the pipeline.
//
// Contours are screening estimates; the one caution text that goes with
// them is stats.Caution.
package design

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/optimize"

	"gonum.org/v1/gonum/stat/distuv"
	"swellgrid/stats/internal/localopt"
)

// Weibull3 is the 3-parameter Weibull distribution
//
//	F(h) = 1 - exp{-[(h - Loc)/Scale]^Shape},  h > Loc,
//
// the usual marginal of Hm0 in the conditional modelling approach
// (DNV-RP-C205, eq. 3.6.3 in its 2010 edition, from memory).
type Weibull3 struct{ Loc, Scale, Shape float64 }

// CDF returns F(h).
func (w Weibull3) CDF(h float64) float64 {
	if h <= w.Loc {
		return 0
	}
	return -math.Expm1(-math.Pow((h-w.Loc)/w.Scale, w.Shape))
}

// Quantile returns h with F(h) = p: Loc + Scale (-log(1-p))^(1/Shape).
func (w Weibull3) Quantile(p float64) float64 {
	return w.Loc + w.Scale*math.Pow(-math.Log1p(-p), 1/w.Shape)
}

// Conditional is the model of ln Te given Hm0 = h: normal with mean
// Mu(h) = A0 + A1 h^A2 and standard deviation Sigma(h) = B0 + B1 exp(-B2 h)
// (DNV-RP-C205, section 3.6.3, eq. 3.6.4-3.6.5 in its 2010 edition, from memory).
type Conditional struct{ A0, A1, A2, B0, B1, B2 float64 }

// Mu returns the mean of ln Te given Hm0 = h.
func (c Conditional) Mu(h float64) float64 { return c.A0 + c.A1*math.Pow(h, c.A2) }

// Sigma returns the standard deviation of ln Te given Hm0 = h.
func (c Conditional) Sigma(h float64) float64 { return c.B0 + c.B1*math.Exp(-c.B2*h) }

// Joint is the joint model of Hm0 and Te.
type Joint struct {
	Hm0  Weibull3
	LnTe Conditional
	// Rows are the Hm0 rows of the occurrence table the conditional model was fitted to.
	Rows []Row
}

// Row is one Hm0 row of the occurrence table reduced to the moments of ln Te.
type Row struct {
	Hm0Mean float64 // mean Hm0 in the row, m (from the Hm0 histogram; the mid-row value if it cannot be had)
	Weight  float64 // time in the row (any unit; relative weights)
	Mean    float64 // mean of ln Te
	Std     float64 // standard deviation of ln Te (grouped-data maximum likelihood)
}

// Hist is a histogram: bin i is [Edges[i], Edges[i+1]) with weight Weights[i];
// len(Edges) = len(Weights) + 1. The last edge may be +Inf (open bin).
type Hist struct {
	Edges   []float64
	Weights []float64
}

// Cell is one bin of the joint Hm0 x Te occurrence table (open bins have an
// infinite upper edge).
type Cell struct {
	Hm0Lo, Hm0Hi, TeLo, TeHi float64
	Weight                   float64
}

// ErrFewData is returned when a cell's record cannot support a joint model.
var ErrFewData = errors.New("design: too few sea states for a joint model")

// MinRows is the least number of occupied Hm0 rows (with at least
// MinRowShare of the time each) for the two 3-parameter functions of the
// conditional model.
const (
	MinRows     = 5
	MinRowShare = 1e-4
)

// FitWeibull3 fits a 3-parameter Weibull to a histogram by maximum likelihood
// on the binned counts: it maximises sum_k w_k log[F(e_{k+1}) - F(e_k)], the
// multinomial likelihood of grouped data (e.g. Kendall and Stuart, The
// Advanced Theory of Statistics, vol. 2, grouped-data ML; common practice).
// Loc is kept below the upper edge of the lowest occupied bin. Binning a
// continuous sample at 0.05 m changes the estimates by far less than their
// sampling error for records of 10^4 or more sea states (TestWeibullAgainstScipy).
// Minimised by minimiseGrad with the analytic gradient of weibullBinnedNLL.
func FitWeibull3(h Hist) (Weibull3, error) {
	first, last, tot := occupiedRange(h)
	if first < 0 || last-first < 3 {
		return Weibull3{}, fmt.Errorf("%w: the Hm0 histogram has %d occupied bins", ErrFewData, max(0, last-first+1))
	}
	var m1, m2 float64
	for i := first; i <= last; i++ {
		if w := h.Weights[i]; w > 0 {
			x := h.Edges[i]
			if !math.IsInf(h.Edges[i+1], 1) {
				x = 0.5 * (h.Edges[i] + h.Edges[i+1])
			}
			m1 += w * x
			m2 += w * x * x
		}
	}
	top := h.Edges[first+1]
	nll := weibullObjective(h, first, last, tot)
	// Start: Loc a little below the lowest sea state, Scale and Shape from the
	// mean and variance of h - Loc (Shape 1.5 and the matching scale as a guess).
	mean := m1 / tot
	loc0 := h.Edges[first] - 0.5*(top-h.Edges[first])
	sd := math.Sqrt(math.Max(m2/tot-mean*mean, 1e-6))
	shape0 := math.Max(0.8, math.Min(3, 1.2*(mean-loc0)/sd))
	scale0 := (mean - loc0) / math.Gamma(1+1/shape0)
	x0 := []float64{math.Log(top - loc0), math.Log(scale0), math.Log(shape0)}
	x, ok := minimiseGrad(nll, x0)
	if !ok {
		return Weibull3{}, fmt.Errorf("design: the Weibull fit of Hm0 did not converge")
	}
	return Weibull3{Loc: top - math.Exp(x[0]), Scale: math.Exp(x[1]), Shape: math.Exp(x[2])}, nil
}

// occupiedRange returns the first and last bins of h with weight (-1, -1
// when none) and the total weight.
func occupiedRange(h Hist) (first, last int, tot float64) {
	first, last = -1, -1
	for i, w := range h.Weights {
		if w > 0 {
			if first < 0 {
				first = i
			}
			last = i
			tot += w
		}
	}
	return first, last, tot
}

// weibullObjective is FitWeibull3's objective (weibullBinnedNLL) on the
// occupied bins first..last of h, total weight tot: each CDF is evaluated
// once per call, and only at the edges of occupied bins.
func weibullObjective(h Hist, first, last int, tot float64) func(p, grad []float64) float64 {
	var occ []int
	for i := first; i <= last; i++ {
		if h.Weights[i] > 0 {
			occ = append(occ, i)
		}
	}
	edges := h.Edges[first : last+2]
	need := make([]bool, len(edges))
	for _, i := range occ {
		need[i-first], need[i+1-first] = true, true
	}
	top := h.Edges[first+1]
	z := make([]float64, len(edges))  // cumulative hazard ((x - Loc)/Scale)^Shape at each edge
	lz := make([]float64, len(edges)) // ln((x - Loc)/Scale) where x > Loc
	cz := make([]float64, len(edges)) // d nll / d z at each edge
	return func(p, grad []float64) float64 {
		return weibullBinnedNLL(p, grad, top, edges, need, occ, first, h.Weights, tot, z, lz, cz)
	}
}

// weibullBinnedNLL is the objective of FitWeibull3 in the parameters
// p = (log(top - Loc), log Scale, log Shape): the negative grouped-data
// log-likelihood per unit weight,
//
//	nll = -(1/W) sum_i w_i log[S(e_i) - S(e_i+1)],  S(x) = exp(-z(x)),
//	z(x) = ((x - Loc)/Scale)^Shape (0 for x <= Loc, +Inf for x = +Inf),
//	log[S(a) - S(b)] = -z_a + log(1 - exp(z_a - z_b)),
//
// over the occupied bins i (edges e_i, e_i+1; W the total weight), and, when
// grad is non-nil, its gradient by the chain rule (derived here):
//
//	d log Pr / d z_a = -1/(1 - exp(z_a - z_b)),  d log Pr / d z_b = exp(z_a - z_b)/(1 - exp(z_a - z_b)),
//	dz/dp0 = Shape z (top - Loc)/(x - Loc),  dz/dp1 = -Shape z,  dz/dp2 = Shape z ln((x - Loc)/Scale).
//
// edges are the histogram edges from the first occupied bin (index first) to
// the last; need marks those of occupied bins; z, lz and cz are scratch of
// len(edges). +Inf where a bin has no probability.
func weibullBinnedNLL(p, grad []float64, top float64, edges []float64, need []bool, occ []int, first int, weights []float64, tot float64, z, lz, cz []float64) float64 {
	loc, scale, shape := top-math.Exp(p[0]), math.Exp(p[1]), math.Exp(p[2])
	for k, e := range edges {
		cz[k] = 0
		switch {
		case !need[k]:
		case math.IsInf(e, 1):
			z[k] = math.Inf(1)
		case e <= loc:
			z[k], lz[k] = 0, math.Inf(-1)
		default:
			lz[k] = math.Log((e - loc) / scale)
			z[k] = math.Exp(shape * lz[k])
		}
	}
	var l float64
	for _, i := range occ {
		ka, kb := i-first, i+1-first
		a, b := z[ka], z[kb]
		w := weights[i]
		// log Pr = log(S(a) - S(b)) = -za + log(1 - exp(za - zb)), finite far in the tail.
		lp := -a
		if !math.IsInf(b, 1) {
			om := -math.Expm1(a - b) // 1 - exp(a - b)
			lp += math.Log(om)
			cz[ka] -= w / om
			cz[kb] += w * (1 - om) / om
		} else {
			cz[ka] -= w
		}
		if math.IsNaN(lp) || math.IsInf(lp, 0) {
			return math.Inf(1)
		}
		l -= w * lp
	}
	if grad != nil {
		var g0, g1, g2 float64
		for k, e := range edges {
			if !need[k] || z[k] == 0 || math.IsInf(z[k], 1) {
				continue
			}
			c := -cz[k] / tot * shape * z[k] // d nll / d z times Shape z
			g0 += c * (top - loc) / (e - loc)
			g1 -= c
			g2 += c * lz[k]
		}
		grad[0], grad[1], grad[2] = g0, g1, g2
	}
	return l / tot
}

// minimiseGrad minimises f, which returns f(x) and writes its analytic
// gradient into grad when grad is non-nil, by gonum's BFGS (driven by
// localopt in the calling goroutine) from x0 to a gradient below 1e-9. A
// search that stops short of that (the line search finds no decrease within
// rounding: the objectives here are of order 1, so a gradient of 1e-9 moves
// them by about 1e-18) counts if the gradient where it stopped is below
// 1e-6; otherwise it falls back to minimiseNM (Nelder-Mead, then BFGS) from
// x0. ok if a finite optimum was found.
func minimiseGrad(f func(x, grad []float64) float64, x0 []float64) ([]float64, bool) {
	fv := func(x []float64) float64 { return f(x, nil) }
	p := localopt.Problem{Func: fv, FuncGrad: f}
	r, err := localopt.BFGS(p, x0, localopt.Settings{MajorIterations: 200, GradientThreshold: 1e-9})
	if !math.IsInf(r.F, 0) && !math.IsNaN(r.F) {
		if err == nil && r.Status == optimize.GradientThreshold {
			return r.X, true
		}
		g := make([]float64, len(x0))
		if v := f(r.X, g); v == r.F && floats.Norm(g, math.Inf(1)) < 1e-6 {
			return r.X, true
		}
	}
	return minimiseNM(fv, x0)
}

// minimiseNM minimises f by Nelder-Mead and polishes with BFGS on
// finite-difference gradients (gonum's methods, driven in the calling
// goroutine by localopt with the optima of optimize.Minimize); ok if a finite
// optimum was found.
func minimiseNM(f func([]float64) float64, x0 []float64) ([]float64, bool) {
	r, err := localopt.NelderMead(f, x0, localopt.Settings{MajorIterations: 4000,
		Converger: &optimize.FunctionConverge{Absolute: 1e-11, Relative: 1e-11, Iterations: 40}})
	if err != nil || math.IsInf(r.F, 0) || math.IsNaN(r.F) {
		// Nelder-Mead fails only where f is not finite at the start.
		return nil, false
	}
	best := r.X
	grad := func(g, x []float64) {
		for i := range x {
			hstep := 1e-6 * math.Max(1, math.Abs(x[i]))
			xp := append([]float64(nil), x...)
			xp[i] += hstep
			fp := f(xp)
			xp[i] -= 2 * hstep
			g[i] = (fp - f(xp)) / (2 * hstep)
		}
	}
	if r2, err := localopt.BFGS(localopt.Problem{Func: f, Grad: grad}, best, localopt.Settings{MajorIterations: 200, GradientThreshold: 1e-9}); err == nil && r2.F <= r.F {
		best = r2.X
	}
	return best, true
}

// ConditionalRows reduces the occurrence table to the mean and standard
// deviation of ln Te per Hm0 row. Te bins are wide on the log scale (1 s at
// Te = 5 s is 0.18 in ln Te, nearly twice a typical spread), so mid-point
// moments are biased even with Sheppard's correction; each row's normal law of
// ln Te is instead fitted by maximum likelihood to the grouped counts,
// maximising sum_j w_j log[Phi((ln t_j+1 - m)/s) - Phi((ln t_j - m)/s)]
// (grouped-data ML, as for FitWeibull3), started from the Sheppard-corrected
// mid-point moments (Kendall and Stuart vol. 1, section 3.18). Rows with the
// open Hm0 edge, or with less than MinRowShare of the time, are left out; the
// open Te column and the bin from Te = 0 enter as censored bins. The row's
// mean Hm0 comes from the finer Hm0 histogram (mid-points of its bins inside
// the row), or the row's middle if the histogram does not cover it.
func ConditionalRows(cells []Cell, h Hist) []Row {
	type acc struct {
		lo, hi, w, s1, s2, sh float64
		bins                  []bin
	}
	var rows []*acc
	idx := map[float64]*acc{}
	var total float64
	for _, c := range cells {
		total += c.Weight
	}
	for _, c := range cells {
		if c.Weight <= 0 || math.IsInf(c.Hm0Hi, 1) {
			continue
		}
		a := idx[c.Hm0Lo]
		if a == nil {
			a = &acc{lo: c.Hm0Lo, hi: c.Hm0Hi}
			idx[c.Hm0Lo] = a
			rows = append(rows, a)
		}
		llo, lhi := math.Log(c.TeLo), math.Log(c.TeHi) // -Inf / +Inf for the end bins
		a.bins = append(a.bins, bin{llo, lhi, c.Weight})
		a.w += c.Weight
		if math.IsInf(llo, 0) || math.IsInf(lhi, 0) {
			continue // censored: not in the starting moments
		}
		lt := 0.5 * (llo + lhi)
		a.s1 += c.Weight * lt
		a.s2 += c.Weight * lt * lt
		a.sh += c.Weight * (lhi - llo) * (lhi - llo) / 12
	}
	var out []Row
	for _, a := range rows {
		if a.w < MinRowShare*total || a.s1 == 0 {
			continue
		}
		wf := a.w
		for _, b := range a.bins {
			if math.IsInf(b.lo, 0) || math.IsInf(b.hi, 0) {
				wf -= b.w
			}
		}
		m := a.s1 / wf
		v := math.Max(a.s2/wf-m*m-a.sh/wf, 1e-6)
		gd := newGrouped(a.bins)
		nll := func(p, grad []float64) float64 { return normalBinnedNLL(p, grad, gd, a.w) }
		min := func(f func(x, grad []float64) float64, x0 []float64) ([]float64, bool) {
			// Quasi-Newton from the finite-difference Hessian (few
			// evaluations for two parameters), else minimiseGrad.
			if x, _, _, ok := localopt.QuasiNewton2(f, x0, f(x0, nil), 1e-9, [2][2]float64{}); ok {
				return x, true
			}
			return minimiseGrad(f, x0)
		}
		if len(a.bins) < 3 {
			// With its time in one or two Te bins the grouped likelihood
			// has no interior maximum (it still grows as s -> 0): the
			// estimate is where the search stops, so such rows keep the
			// Nelder-Mead search they have always had.
			min = func(f func(x, grad []float64) float64, x0 []float64) ([]float64, bool) {
				return minimiseNM(func(x []float64) float64 { return f(x, nil) }, x0)
			}
		}
		if x, ok := min(nll, []float64{m, 0.5 * math.Log(v)}); ok {
			m, v = x[0], math.Exp(2*x[1])
		}
		out = append(out, Row{Hm0Mean: rowMeanHm0(h, a.lo, a.hi), Weight: a.w, Mean: m, Std: math.Sqrt(v)})
	}
	return out
}

// bin is one class of grouped data: [lo, hi) (either end may be infinite) with weight w.
type bin struct{ lo, hi, w float64 }

// grouped is one row's classes with their edges listed once: class k is
// [edges[lo[k]], edges[hi[k]]) with weight w[k]. cdf, phi and zphi are
// scratch per edge (adjacent classes share an edge, whose normal CDF and
// density are then computed once per evaluation).
type grouped struct {
	edges, w, cdf, phi, zphi []float64
	lo, hi                   []int
}

func newGrouped(bins []bin) *grouped {
	g := &grouped{}
	idx := map[float64]int{}
	edge := func(t float64) int {
		k, ok := idx[t]
		if !ok {
			k = len(g.edges)
			idx[t] = k
			g.edges = append(g.edges, t)
		}
		return k
	}
	for _, b := range bins {
		g.lo, g.hi, g.w = append(g.lo, edge(b.lo)), append(g.hi, edge(b.hi)), append(g.w, b.w)
	}
	n := len(g.edges)
	g.cdf, g.phi, g.zphi = make([]float64, n), make([]float64, n), make([]float64, n)
	return g
}

// normalBinnedNLL is the objective of ConditionalRows' grouped fit of a
// normal law in p = (m, log s): the negative grouped-data log-likelihood per
// unit weight,
//
//	nll = -(1/W) sum_j w_j log P_j,  P_j = Phi(z_hi) - Phi(z_lo),  z = (t - m)/s,
//
// and, when grad is non-nil, its gradient (derived here; phi the standard
// normal density, phi = z phi = 0 at an infinite end):
//
//	dP/dm = -(phi(z_hi) - phi(z_lo))/s,  dP/dlog s = -(z_hi phi(z_hi) - z_lo phi(z_lo)).
//
// +Inf where a bin has no probability.
func normalBinnedNLL(p, grad []float64, g *grouped, W float64) float64 {
	s := math.Exp(p[1])
	for k, t := range g.edges {
		g.cdf[k] = distuv.UnitNormal.CDF((t - p[0]) / s)
		g.phi[k], g.zphi[k] = 0, 0
		if grad != nil && !math.IsInf(t, 0) {
			z := (t - p[0]) / s
			g.phi[k] = math.Exp(-0.5*z*z) / math.Sqrt(2*math.Pi)
			g.zphi[k] = z * g.phi[k]
		}
	}
	var l, gm, gs float64
	for k, w := range g.w {
		a, b := g.lo[k], g.hi[k]
		pr := g.cdf[b] - g.cdf[a]
		if !(pr > 0) {
			return math.Inf(1)
		}
		l -= w * math.Log(pr)
		if grad != nil {
			gm += w * (g.phi[b] - g.phi[a]) / s / pr
			gs += w * (g.zphi[b] - g.zphi[a]) / pr
		}
	}
	if grad != nil {
		grad[0], grad[1] = gm/W, gs/W
	}
	return l / W
}

func rowMeanHm0(h Hist, lo, hi float64) float64 {
	var w, s float64
	for i, c := range h.Weights {
		a, b := h.Edges[i], h.Edges[i+1]
		if c > 0 && a >= lo-1e-9 && b <= hi+1e-9 {
			w += c
			s += c * 0.5 * (a + b)
		}
	}
	if w > 0 {
		return s / w
	}
	return 0.5 * (lo + hi)
}

// FitConditional fits Mu(h) = A0 + A1 h^A2 to the rows' means and
// Sigma(h) = B0 + B1 exp(-B2 h) to their standard deviations by weighted
// least squares (weights: the rows' time), as DNV-RP-C205 section 3.6.3
// describes; A2, B0 and B2 are kept non-negative so that the functions stay
// monotone and Sigma positive when extrapolated. Checked against
// scipy.optimize.curve_fit (TestConditionalAgainstScipy).
//
// Each function is linear in two of its parameters (A0, A1; B0, B1), so the
// least-squares problem is solved by variable projection (Golub and Pereyra
// 1973, SIAM J. Numer. Anal. 10(2), 413-432): for a given exponent (A2, B2)
// the linear pair has the closed-form weighted regression (meanProfile,
// spreadProfile), and the exponent minimises the remaining sum of squares,
// a function of one variable (profileMin). This is the same estimator as a
// search over all three parameters, found without one: where the least
// squares have their infimum on the edge (A2 -> 0, Mu -> c + d ln h, or
// B2 -> 0, a straight line), a search in three parameters never converges,
// while here the exponent stops at the bound of its range (A2 and B2 in
// [expMin, expMax]), where the fitted curve is that limit within rounding
// over the rows.
func FitConditional(rows []Row) (Conditional, error) {
	if len(rows) < MinRows {
		return Conditional{}, fmt.Errorf("%w: %d occupied Hm0 rows, need %d", ErrFewData, len(rows), MinRows)
	}
	var wt float64
	for _, r := range rows {
		wt += r.Weight
	}
	if !(wt > 0) {
		return Conditional{}, fmt.Errorf("%w: the Hm0 rows carry no time", ErrFewData)
	}
	n := len(rows)
	buf := make([]float64, 4*n)
	lh, hm, v, x := buf[:n], buf[n:2*n], buf[2*n:3*n], buf[3*n:]
	for k, r := range rows {
		lh[k], hm[k], v[k] = math.Log(r.Hm0Mean), r.Hm0Mean, r.Weight/wt
	}
	var c Conditional
	a2 := math.Exp(profileMin(func(t float64) float64 {
		f, _, _ := meanProfile(math.Exp(t), rows, lh, v, x)
		return f
	}, math.Log(expMin), math.Log(expMax)))
	f, a0, a1 := meanProfile(a2, rows, lh, v, x)
	c.A0, c.A1, c.A2 = a0, a1, a2
	b2 := math.Exp(profileMin(func(t float64) float64 {
		f, _, _ := spreadProfile(math.Exp(t), rows, hm, v, x)
		return f
	}, math.Log(expMin), math.Log(expMax)))
	g, b0, b1 := spreadProfile(b2, rows, hm, v, x)
	c.B0, c.B1, c.B2 = b0, b1, b2
	if math.IsNaN(f+g+a0+a1+b0+b1) || math.IsInf(f+g+a0+a1+b0+b1, 0) {
		return Conditional{}, fmt.Errorf("design: the least-squares fit of ln Te given Hm0 has no finite solution")
	}
	return c, nil
}

// The range of the exponents A2 and B2 of FitConditional.
const (
	expMin = 1e-6
	expMax = 20
)

// meanProfile is the weighted least-squares fit of Mu(h) = A0 + A1 h^A2 for a
// given A2: with u_k = h_k^A2 - 1 (computed as expm1(A2 ln h_k) so that a
// small A2 loses no digits) and v_k the rows' weights summing to 1, the
// weighted regression of the rows' means y_k on u_k,
//
//	A1 = sum v_k (u_k - ū)(y_k - ȳ) / sum v_k (u_k - ū)^2,  A0 = ȳ - A1 ū - A1,
//
// and the sum of squares f = sum v_k (y_k - A0 - A1 h_k^A2)^2 (the normal
// equations of a straight line; variable projection, see FitConditional).
// lh holds ln h_k, u is scratch of len(rows).
func meanProfile(a2 float64, rows []Row, lh, v, u []float64) (f, a0, a1 float64) {
	for k := range rows {
		u[k] = math.Expm1(a2 * lh[k])
	}
	c, a1 := lineFit(rows, u, v, func(r Row) float64 { return r.Mean }, false)
	for k, r := range rows {
		d := r.Mean - (c + a1*u[k])
		f += v[k] * d * d
	}
	return f, c - a1, a1
}

// spreadProfile is the weighted least-squares fit of
// Sigma(h) = B0 + B1 exp(-B2 h) for a given B2: the weighted regression of
// the rows' standard deviations s_k on e_k = exp(-B2 h_k),
//
//	B1 = sum v_k (e_k - ē)(s_k - s̄) / sum v_k (e_k - ē)^2,  B0 = s̄ - B1 ē,
//
// or, where that B0 is negative, the fit on the bound B0 = 0,
// B1 = sum v_k e_k s_k / sum v_k e_k^2; and its sum of squares
// f = sum v_k (s_k - B0 - B1 e_k)^2. hm holds h_k, e is scratch.
func spreadProfile(b2 float64, rows []Row, hm, v, e []float64) (f, b0, b1 float64) {
	for k := range rows {
		e[k] = math.Exp(-b2 * hm[k])
	}
	b0, b1 = lineFit(rows, e, v, func(r Row) float64 { return r.Std }, true)
	for k, r := range rows {
		d := r.Std - (b0 + b1*e[k])
		f += v[k] * d * d
	}
	return f, b0, b1
}

// lineFit is the weighted least-squares line y = c + m x through the points
// (x_k, y(rows[k])) with weights v_k summing to 1:
// m = sum v (x - x̄)(y - ȳ) / sum v (x - x̄)^2, c = ȳ - m x̄ (the normal
// equations, centred). With nonNeg a negative c is replaced by the fit
// through the origin, c = 0, m = sum v x y / sum v x^2 (the least squares
// with c >= 0, whose optimum is then on that bound).
func lineFit(rows []Row, x, v []float64, y func(Row) float64, nonNeg bool) (c, m float64) {
	var xm, ym float64
	for k, r := range rows {
		xm += v[k] * x[k]
		ym += v[k] * y(r)
	}
	var sxy, sxx float64
	for k, r := range rows {
		dx := x[k] - xm
		sxy += v[k] * dx * (y(r) - ym)
		sxx += v[k] * dx * dx
	}
	if sxx > 0 {
		m = sxy / sxx
	}
	c = ym - m*xm
	if nonNeg && c < 0 {
		var sxy0, sxx0 float64
		for k, r := range rows {
			sxy0 += v[k] * x[k] * y(r)
			sxx0 += v[k] * x[k] * x[k]
		}
		c, m = 0, 0
		if sxx0 > 0 {
			m = sxy0 / sxx0
		}
	}
	return c, m
}

// profileMin returns the t in [lo, hi] that minimises f: the best of
// profileGrid points evenly spaced over [lo, hi], then golden-section search
// (Kiefer 1953; Press et al., Numerical Recipes, section 10.2) in the
// interval between that point's neighbours, to a width of 1e-9. A minimum on
// an end of [lo, hi] is returned there.
func profileMin(f func(t float64) float64, lo, hi float64) float64 {
	step := (hi - lo) / (profileGrid - 1)
	best, fb := 0, math.Inf(1)
	for i := 0; i < profileGrid; i++ {
		if v := f(lo + float64(i)*step); v < fb {
			best, fb = i, v
		}
	}
	if math.IsInf(fb, 1) {
		return lo + float64(best)*step
	}
	a, b := lo+float64(max(best-1, 0))*step, lo+float64(min(best+1, profileGrid-1))*step
	const r = 0.6180339887498949 // (sqrt(5) - 1) / 2
	x1, x2 := b-r*(b-a), a+r*(b-a)
	f1, f2 := f(x1), f(x2)
	for b-a > 1e-9 {
		if f1 <= f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - r*(b-a)
			f1 = f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + r*(b-a)
			f2 = f(x2)
		}
	}
	t := 0.5 * (a + b)
	// The ends themselves, where the minimum lies on the bound.
	switch {
	case best == 0 && f(lo) <= f(t):
		return lo
	case best == profileGrid-1 && f(hi) <= f(t):
		return hi
	}
	return t
}

// profileGrid is the number of points profileMin tries before its golden-section search.
const profileGrid = 64

// FitJoint fits the joint model to a cell's Hm0 histogram and occurrence
// table. Binning error (TestWeibullAgainstScipy, TestConditionalAgainstScipy,
// on 200 000 sea states of a known model): with Hm0 bins of 0.05 m and an
// occurrence table of 0.5 m x 1 s, the Weibull parameters move by under 1e-4,
// Mu and Sigma by under 0.005, and the 100-year contour's largest Hm0 and its
// Te by 0.01 % and 0.07 % against scipy fits to the unbinned sample (tested
// to 1 %).
func FitJoint(h Hist, cells []Cell) (Joint, error) {
	w, err := FitWeibull3(h)
	if err != nil {
		return Joint{}, err
	}
	rows := ConditionalRows(cells, h)
	c, err := FitConditional(rows)
	if err != nil {
		return Joint{}, err
	}
	return Joint{Hm0: w, LnTe: c, Rows: rows}, nil
}

// Point is one point of an environmental contour.
type Point struct{ Hm0, Te float64 }

// Quantiler is a marginal distribution of Hm0 given by its quantile function.
type Quantiler interface{ Quantile(p float64) float64 }

// Beta returns the radius of the IFORM contour in standard normal space for
// a return period of T years and sea states of seaStateH hours:
// beta = Phi^-1(1 - seaStateH / (T 8766)) (Winterstein et al. 1993; DNV-RP-C205,
// section 3.7.2), 8766 h being the mean Gregorian year.
func Beta(T, seaStateH float64) float64 {
	return distuv.UnitNormal.Quantile(1 - seaStateH/(T*8766))
}

// IFORM returns n points of the IFORM contour of radius beta for a marginal
// of Hm0 and a conditional normal model of ln T given Hm0 (mean mu(h),
// standard deviation sigma(h)): with u1 = beta cos theta, u2 = beta sin theta,
// theta = 2 pi k / n (k = 0..n-1, from the largest Hm0 anticlockwise), the
// inverse Rosenblatt transform gives Hm0 = F^-1(Phi(u1)) and
// T = exp(mu(Hm0) + sigma(Hm0) u2) (Winterstein et al. 1993; DNV-RP-C205,
// section 3.7.2).
func IFORM(marg Quantiler, mu, sigma func(h float64) float64, beta float64, n int) []Point {
	out := make([]Point, n)
	for k := range out {
		th := 2 * math.Pi * float64(k) / float64(n)
		u1, u2 := beta*math.Cos(th), beta*math.Sin(th)
		h := marg.Quantile(distuv.UnitNormal.CDF(u1))
		out[k] = Point{Hm0: h, Te: math.Exp(mu(h) + sigma(h)*u2)}
	}
	return out
}

// Contour returns the n-point IFORM contour of the joint model for T years and
// sea states of seaStateH hours.
func (j Joint) Contour(T, seaStateH float64, n int) []Point {
	return IFORM(j.Hm0, j.LnTe.Mu, j.LnTe.Sigma, Beta(T, seaStateH), n)
}

// Largest returns the contour's largest Hm0 (at u1 = beta) and the Te there
// (the conditional median, u2 = 0).
func (j Joint) Largest(T, seaStateH float64) Point {
	h := j.Hm0.Quantile(distuv.UnitNormal.CDF(Beta(T, seaStateH)))
	return Point{Hm0: h, Te: math.Exp(j.LnTe.Mu(h))}
}
