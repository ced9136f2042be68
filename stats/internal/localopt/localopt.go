// Package localopt runs gonum's local minimisers (BFGS with a bisection line
// search, Nelder-Mead) in the calling goroutine. optimize.Minimize runs the
// method, a distributor and an evaluation worker in goroutines of their own
// and hands every evaluation over channels between them; for the small
// likelihoods of one grid cell that hand-over (and the thread wake-ups it
// causes with several fit workers) costs far more than the evaluations.
//
// Both drivers follow optimize.Minimize of gonum v0.17.0 (optimize/minimize.go,
// optimize/local.go) step for step: the same evaluations in the same order,
// the same convergence checks at every major iteration (the settings first,
// then the method's own), and the same result, the location of the last major
// iteration with its status and error. Their optima are therefore bit for bit
// those of optimize.Minimize with the same settings (TestMatchesMinimize).
// BFGS uses gonum's exported optimize.LinesearchMethod, optimize.BFGS and
// optimize.Bisection; gonum's Nelder-Mead cannot be driven from outside its
// package, so NelderMead re-implements gonum's algorithm with its default
// coefficients (Nelder and Mead 1965, The Computer Journal 7(4), 308-313,
// with the dimension-dependent expansion, contraction and shrink of gonum's
// optimize.NelderMead).
//
// The package knows nothing of statistics: it minimises functions of a
// vector. It must not import any package of this module.
package localopt

import (
	"errors"
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/optimize"
)

// Problem is a function to minimise. Func is required; BFGS also needs Grad
// or FuncGrad. FuncGrad, when given, returns f(x) and writes the gradient
// into grad (it may leave grad untouched where f is not finite); BFGS then
// evaluates both at once and reuses the gradient when the line search asks
// for it at the point just evaluated.
type Problem struct {
	Func     func(x []float64) float64
	Grad     func(grad, x []float64)
	FuncGrad func(x, grad []float64) float64
}

// Settings are the stopping rules, with the meaning of the optimize.Settings
// fields of the same names.
type Settings struct {
	GradientThreshold float64 // stop when the infinity norm of the gradient at a major iteration is below this (0: unused)
	MajorIterations   int     // stop after this many major iterations (0: no limit)
	Converger         optimize.Converger
}

// Result is where the search stopped (the last major iteration) and why.
type Result struct {
	X      []float64
	F      float64
	Status optimize.Status
}

var errUnexpectedOp = errors.New("localopt: the method asked for an unexpected operation")

// driver holds the checks optimize.Minimize makes at each major iteration.
type driver struct {
	s     Settings
	conv  optimize.Converger
	opt   optimize.Location
	iters int
}

func newDriver(dim int, s Settings) *driver {
	d := &driver{s: s, conv: s.Converger, opt: optimize.Location{X: make([]float64, dim), F: math.Inf(1)}}
	if d.conv == nil {
		d.conv = &optimize.FunctionConverge{Absolute: 1e-10, Iterations: 100} // Minimize's default
	}
	d.conv.Init(dim)
	return d
}

// major is optimize.performMajorIteration with checkLocationConvergence and
// checkIterationLimits.
func (d *driver) major(loc *optimize.Location) optimize.Status {
	d.opt.F = loc.F
	copy(d.opt.X, loc.X)
	if loc.Gradient == nil {
		d.opt.Gradient = nil
	} else {
		if d.opt.Gradient == nil {
			d.opt.Gradient = make([]float64, len(loc.Gradient))
		}
		copy(d.opt.Gradient, loc.Gradient)
	}
	d.iters++
	if math.IsInf(d.opt.F, -1) {
		return optimize.FunctionNegativeInfinity
	}
	if d.opt.Gradient != nil && d.s.GradientThreshold > 0 && floats.Norm(d.opt.Gradient, math.Inf(1)) < d.s.GradientThreshold {
		return optimize.GradientThreshold
	}
	if st := d.conv.Converged(&d.opt); st != optimize.NotTerminated {
		return st
	}
	if d.s.MajorIterations > 0 && d.iters >= d.s.MajorIterations {
		return optimize.IterationLimit
	}
	return optimize.NotTerminated
}

func (d *driver) result(st optimize.Status, err error) (Result, error) {
	return Result{X: d.opt.X, F: d.opt.F, Status: st}, err
}

// BFGS minimises p from x0 as optimize.Minimize(p, x0, settings, &optimize.BFGS{}) does.
func BFGS(p Problem, x0 []float64, s Settings) (Result, error) {
	dim := len(x0)
	d := newDriver(dim, s)
	loc := &optimize.Location{X: append([]float64(nil), x0...), Gradient: make([]float64, dim)}
	cacheX, cacheG := make([]float64, dim), make([]float64, dim)
	cached := false
	eval := func(op optimize.Operation) {
		if p.FuncGrad == nil {
			if op&optimize.FuncEvaluation != 0 {
				loc.F = p.Func(loc.X)
			}
			if op&optimize.GradEvaluation != 0 {
				p.Grad(loc.Gradient, loc.X)
			}
			return
		}
		if op&optimize.FuncEvaluation != 0 {
			for i := range cacheG {
				cacheG[i] = math.NaN()
			}
			loc.F = p.FuncGrad(loc.X, cacheG)
			copy(cacheX, loc.X)
			cached = true
			for _, v := range cacheG {
				if math.IsNaN(v) {
					cached = false // no gradient written here
				}
			}
		}
		if op&optimize.GradEvaluation != 0 {
			if cached && floats.Equal(cacheX, loc.X) {
				copy(loc.Gradient, cacheG)
			} else {
				p.FuncGrad(loc.X, loc.Gradient)
			}
		}
	}
	const methodGradTol = 1e-12 // BFGS.GradStopThreshold 0 means 1e-12 (optimize.defaultGradientAbsTol)

	eval(optimize.FuncEvaluation | optimize.GradEvaluation)
	// optimize.localOptimizer.checkStartingLocation.
	if math.IsInf(loc.F, 1) || math.IsNaN(loc.F) {
		return d.result(optimize.Failure, optimize.ErrFunc(loc.F))
	}
	for i, v := range loc.Gradient {
		if math.IsInf(v, 0) || math.IsNaN(v) {
			return d.result(optimize.Failure, optimize.ErrGrad{Grad: v, Index: i})
		}
	}
	if st := d.major(loc); st != optimize.NotTerminated {
		return d.result(st, nil)
	}
	ls := &optimize.LinesearchMethod{NextDirectioner: &optimize.BFGS{}, Linesearcher: &optimize.Bisection{}}
	op, err := ls.Init(loc)
	for {
		if err != nil {
			return d.result(optimize.Failure, err)
		}
		switch op {
		case optimize.MajorIteration:
			if st := d.major(loc); st != optimize.NotTerminated {
				return d.result(st, nil)
			}
			if floats.Norm(loc.Gradient, math.Inf(1)) < methodGradTol {
				return d.result(optimize.GradientThreshold, nil)
			}
		case optimize.FuncEvaluation, optimize.GradEvaluation, optimize.FuncEvaluation | optimize.GradEvaluation:
			eval(op)
		default:
			return d.result(optimize.Failure, errUnexpectedOp)
		}
		op, err = ls.Iterate(loc)
	}
}

// NelderMead minimises f from x0 as optimize.Minimize(optimize.Problem{Func: f},
// x0, settings, &optimize.NelderMead{}) does: initial simplex x0 plus 0.05
// along each axis; reflection 1, expansion 1 + 2/n, contraction 0.75 - 1/(2n),
// shrink 1 - 1/n (2, 0.5 and 0.5 for n = 1); one major iteration per accepted
// simplex.
func NelderMead(f func(x []float64) float64, x0 []float64, s Settings) (Result, error) {
	dim := len(x0)
	d := newDriver(dim, s)
	loc := &optimize.Location{X: append([]float64(nil), x0...)}
	loc.F = f(loc.X)
	if math.IsInf(loc.F, 1) || math.IsNaN(loc.F) {
		return d.result(optimize.Failure, optimize.ErrFunc(loc.F))
	}
	if st := d.major(loc); st != optimize.NotTerminated {
		return d.result(st, nil)
	}
	const simplexSize = 0.05
	fd := float64(dim)
	refl, expa, contr, shr := 1.0, 1+2/fd, 0.75-1/(2*fd), 1-1/fd
	if dim == 1 {
		expa, contr, shr = 2, 0.5, 0.5
	}
	n := &simplex{vertices: make([][]float64, dim+1), values: make([]float64, dim+1), centroid: make([]float64, dim)}
	for i := range n.vertices {
		n.vertices[i] = make([]float64, dim)
	}
	// The initial simplex: x0 last, then x0 + simplexSize e_i.
	copy(n.vertices[dim], loc.X)
	n.values[dim] = loc.F
	for i := 0; i < dim; i++ {
		copy(loc.X, n.vertices[dim])
		loc.X[i] += simplexSize
		loc.F = f(loc.X)
		n.values[i] = loc.F
		copy(n.vertices[i], loc.X)
	}
	sort.Sort(n)
	n.computeCentroid()
	point := func(scale float64) {
		floats.SubTo(loc.X, n.centroid, n.vertices[dim])
		floats.Scale(scale, loc.X)
		floats.Add(loc.X, n.centroid)
		loc.F = f(loc.X)
	}
	reflected := make([]float64, dim)
	for {
		// Major iteration at the best vertex.
		copy(loc.X, n.vertices[0])
		loc.F = n.values[0]
		if st := d.major(loc); st != optimize.NotTerminated {
			return d.result(st, nil)
		}
		point(refl)
		copy(reflected, loc.X)
		fr := loc.F
		shrink := false
		switch {
		case fr >= n.values[0] && fr < n.values[dim-1]:
			n.replaceWorst(loc.X, fr)
		case fr < n.values[0]:
			point(refl * expa)
			if loc.F < fr {
				n.replaceWorst(loc.X, loc.F)
			} else {
				n.replaceWorst(reflected, fr)
			}
		case fr < n.values[dim]:
			point(refl * contr) // outside contraction
			if loc.F <= fr {
				n.replaceWorst(loc.X, loc.F)
			} else {
				shrink = true
			}
		default:
			point(-contr) // inside contraction
			if loc.F < n.values[dim] {
				n.replaceWorst(loc.X, loc.F)
			} else {
				shrink = true
			}
		}
		if shrink {
			for i := 1; i <= dim; i++ {
				floats.SubTo(loc.X, n.vertices[i], n.vertices[0])
				floats.Scale(shr, loc.X)
				floats.Add(loc.X, n.vertices[0])
				loc.F = f(loc.X)
				copy(n.vertices[i], loc.X)
				n.values[i] = loc.F
			}
			sort.Sort(n)
			n.computeCentroid()
		}
	}
}

// simplex holds the vertices sorted by ascending value and the centroid of
// all but the worst (the same layout and sort as gonum's nmVertexSorter).
type simplex struct {
	vertices [][]float64
	values   []float64
	centroid []float64
}

func (n *simplex) Len() int           { return len(n.values) }
func (n *simplex) Less(i, j int) bool { return n.values[i] < n.values[j] }
func (n *simplex) Swap(i, j int) {
	n.values[i], n.values[j] = n.values[j], n.values[i]
	n.vertices[i], n.vertices[j] = n.vertices[j], n.vertices[i]
}

func (n *simplex) computeCentroid() {
	dim := len(n.centroid)
	for i := range n.centroid {
		n.centroid[i] = 0
	}
	for i := 0; i < dim; i++ {
		for j, v := range n.vertices[i] {
			n.centroid[j] += v
		}
	}
	for i := range n.centroid {
		n.centroid[i] /= float64(dim)
	}
}

// replaceWorst puts x in place of the worst vertex, keeps the order and
// updates the centroid.
func (n *simplex) replaceWorst(x []float64, f float64) {
	dim := len(x)
	copy(n.vertices[dim], x)
	n.values[dim] = f
	for i := dim - 1; i >= 0; i-- {
		if n.values[i] < f {
			break
		}
		n.vertices[i], n.vertices[i+1] = n.vertices[i+1], n.vertices[i]
		n.values[i], n.values[i+1] = n.values[i+1], n.values[i]
	}
	floats.AddScaled(n.centroid, -1/float64(dim), n.vertices[dim])
	floats.AddScaled(n.centroid, 1/float64(dim), x)
}

// QuasiNewton2 minimises f of two variables from x0 (where f is f0) to
// |grad f|_inf < gradTol by quasi-Newton steps (Nocedal and Wright 2006,
// section 6.1: the BFGS update of the Hessian itself, with backtracking to
// the Armijo condition, c1 = 1e-4). The first Hessian is h0, the last one
// of the previous inner fit of the profile, or, when h0 is not positive
// definite (a first fit), forward differences of the analytic gradient
// (step 1e-6 relative; Nocedal and Wright 2006, section 8.1). f returns
// f(x) and writes its gradient into grad when grad is non-nil. Unlike BFGS
// above it is not gonum's algorithm: it is for a sequence of small fits
// (the inner fits of a profile likelihood, each started from the optimum
// and the curvature of the last), where it needs fewer evaluations than
// BFGS, which starts each search without curvature, and allocates almost
// nothing. It returns the minimiser, f there and the last Hessian; ok =
// false when it does not converge within 50 steps or meets a value it
// cannot back away from (the caller then falls back to BFGS).
func QuasiNewton2(f func(x, grad []float64) float64, x0 []float64, f0, gradTol float64, h0 [2][2]float64) (x []float64, fx float64, h [2][2]float64, ok bool) {
	var g, gp, gn [2]float64
	x = []float64{x0[0], x0[1]}
	g[0], g[1] = math.NaN(), math.NaN()
	fx = f(x, g[:])
	if fx != f0 || math.IsInf(fx, 0) || math.IsNaN(fx) || math.IsNaN(g[0]+g[1]) {
		return x0, f0, h0, false
	}
	h = h0
	xn := make([]float64, 2)
	if !(h[0][0] > 0 && h[0][0]*h[1][1]-h[0][1]*h[1][0] > 0) {
		xp := make([]float64, 2)
		for i := 0; i < 2; i++ {
			d := 1e-6 * math.Max(1, math.Abs(x[i]))
			xp[0], xp[1] = x[0], x[1]
			xp[i] += d
			gp[0], gp[1] = math.NaN(), math.NaN()
			if v := f(xp, gp[:]); math.IsInf(v, 0) || math.IsNaN(v) || math.IsNaN(gp[0]+gp[1]) {
				return x0, f0, h0, false
			}
			h[0][i], h[1][i] = (gp[0]-g[0])/d, (gp[1]-g[1])/d
		}
		h[0][1] = 0.5 * (h[0][1] + h[1][0])
		h[1][0] = h[0][1]
	}
	for k := 0; k < 50; k++ {
		if math.Max(math.Abs(g[0]), math.Abs(g[1])) < gradTol {
			return x, fx, h, true
		}
		det := h[0][0]*h[1][1] - h[0][1]*h[1][0]
		var p [2]float64
		if h[0][0] > 0 && det > 0 {
			p[0] = -(h[1][1]*g[0] - h[0][1]*g[1]) / det
			p[1] = -(h[0][0]*g[1] - h[1][0]*g[0]) / det
		} else {
			p[0], p[1] = -g[0], -g[1]
			h = [2][2]float64{{1, 0}, {0, 1}}
		}
		slope := p[0]*g[0] + p[1]*g[1]
		if !(slope < 0) {
			return x0, f0, h0, false
		}
		t := 1.0
		accepted := false
		var fn float64
		for b := 0; b < 40; b++ {
			xn[0], xn[1] = x[0]+t*p[0], x[1]+t*p[1]
			gn[0], gn[1] = math.NaN(), math.NaN()
			fn = f(xn, gn[:])
			if !math.IsInf(fn, 0) && !math.IsNaN(fn) && !math.IsNaN(gn[0]+gn[1]) && fn <= fx+1e-4*t*slope {
				accepted = true
				break
			}
			t /= 2
		}
		if !accepted {
			return x0, f0, h0, false
		}
		// BFGS update of the Hessian: H - H s s'H / s'H s + y y' / y's.
		s0, s1 := xn[0]-x[0], xn[1]-x[1]
		y0, y1 := gn[0]-g[0], gn[1]-g[1]
		if ys := y0*s0 + y1*s1; ys > 0 {
			hs0, hs1 := h[0][0]*s0+h[0][1]*s1, h[1][0]*s0+h[1][1]*s1
			if shs := s0*hs0 + s1*hs1; shs > 0 {
				h[0][0] += y0*y0/ys - hs0*hs0/shs
				h[0][1] += y0*y1/ys - hs0*hs1/shs
				h[1][1] += y1*y1/ys - hs1*hs1/shs
				h[1][0] = h[0][1]
			}
		}
		x[0], x[1], fx, g = xn[0], xn[1], fn, gn
	}
	return x0, f0, h0, false
}

// Newton2 minimises f of two variables from x0 to |grad f|_inf < gradTol by
// Newton's method with the analytic Hessian and backtracking to the Armijo
// condition (c1 = 1e-4); where the Hessian is not positive definite, the
// step is taken with the Hessian plus tau I, tau raising its smaller
// eigenvalue to 1e-8 of the larger one (or the identity: steepest descent)
// (Nocedal and Wright 2006, sections 3.1 and 3.4, Newton's method with
// Hessian modification). f returns f(x) and, when grad and hess are
// non-nil, writes the gradient and the Hessian. It is for small smooth fits
// whose Hessian costs little beside the value (one pass over the data gives
// all three), where it needs fewer passes than BFGS. ok = false when it does
// not converge within 30 steps (where the likelihood has no interior
// maximum, as for a few equal-ish excesses) or meets a value it cannot back
// away from (the caller then falls back to BFGS); it returns the last
// point, f, the gradient and the Hessian there in either case.
func Newton2(f func(x, grad []float64, hess *[2][2]float64) float64, x0 []float64, gradTol float64) (x []float64, fx float64, g [2]float64, h [2][2]float64, ok bool) {
	var gn [2]float64
	var hn [2][2]float64
	x = []float64{x0[0], x0[1]}
	g[0], g[1] = math.NaN(), math.NaN()
	fx = f(x, g[:], &h)
	if math.IsInf(fx, 0) || math.IsNaN(fx) || math.IsNaN(g[0]+g[1]) {
		return x, fx, g, h, false
	}
	xn := make([]float64, 2)
	for k := 0; k < 30; k++ {
		if math.Max(math.Abs(g[0]), math.Abs(g[1])) < gradTol {
			return x, fx, g, h, true
		}
		a, b, c := h[0][0], h[0][1], h[1][1]
		if math.IsNaN(a + b + c) {
			return x, fx, g, h, false
		}
		// Smaller and larger eigenvalue of [[a b] [b c]].
		m, r := 0.5*(a+c), math.Hypot(0.5*(a-c), b)
		lmin, lmax := m-r, m+r
		if !(lmin > 1e-8*lmax) {
			tau := 1.0
			if lmax > 0 {
				tau = 1e-8*lmax - lmin
			}
			a, c = a+tau, c+tau
			if !(lmax > 0) {
				a, b, c = 1, 0, 1
			}
		}
		det := a*c - b*b
		p0 := -(c*g[0] - b*g[1]) / det
		p1 := -(a*g[1] - b*g[0]) / det
		slope := p0*g[0] + p1*g[1]
		if !(slope < 0) {
			return x, fx, g, h, false
		}
		t := 1.0
		accepted := false
		var fn float64
		for bt := 0; bt < 50; bt++ {
			xn[0], xn[1] = x[0]+t*p0, x[1]+t*p1
			gn[0], gn[1] = math.NaN(), math.NaN()
			fn = f(xn, gn[:], &hn)
			if !math.IsInf(fn, 0) && !math.IsNaN(fn) && !math.IsNaN(gn[0]+gn[1]) && fn <= fx+1e-4*t*slope {
				accepted = true
				break
			}
			t /= 2
		}
		if !accepted {
			return x, fx, g, h, false
		}
		x[0], x[1], fx, g, h = xn[0], xn[1], fn, gn, hn
	}
	return x, fx, g, h, false
}
