package extremes

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/optimize"
)

// objective is a function to minimise with its analytic gradient: it returns
// f(x) and, when grad is non-nil, writes the gradient into it (it may leave
// grad untouched where f is not finite).
type objective func(x, grad []float64) float64

// localSettings are the stopping rules of one local optimisation, with the
// meaning of gonum's optimize.Settings fields of the same names.
type localSettings struct {
	GradientThreshold float64 // stop when the infinity norm of the gradient at a major iteration is below this
	MajorIterations   int     // stop after this many major iterations (0: no limit)
	Converger         optimize.Converger
}

// bfgsSync minimises f from x0 with gonum's BFGS direction and bisection line
// search (optimize.LinesearchMethod, optimize.BFGS, optimize.Bisection, the
// types optimize.Minimize uses for &optimize.BFGS{}), driven here in the
// calling goroutine. optimize.Minimize runs the method, a distributor and an
// evaluation worker in goroutines of their own and hands every evaluation
// over channels between them; for the small likelihoods of a cell that
// hand-over cost far more than the evaluations. The loop below follows
// optimize.Minimize step for step (gonum v0.17.0, optimize/minimize.go and
// optimize/local.go): the same evaluations in the same order, the same
// convergence checks at every major iteration (settings first, then the
// method's own 1e-12 gradient threshold) and the same result (the last major
// iteration), so that the optimum is bit for bit the one Minimize returns.
// It differs only in evaluating f and its gradient together and reusing the
// gradient when the line search asks for it at the point just evaluated.
func bfgsSync(f objective, x0 []float64, s localSettings) (optimize.Location, optimize.Status, error) {
	dim := len(x0)
	opt := optimize.Location{X: make([]float64, dim), F: math.Inf(1)}
	conv := s.Converger
	if conv == nil {
		conv = &optimize.FunctionConverge{Absolute: 1e-10, Iterations: 100} // Minimize's default
	}
	conv.Init(dim)
	loc := &optimize.Location{X: append([]float64(nil), x0...), Gradient: make([]float64, dim)}
	cacheX, cacheG := make([]float64, dim), make([]float64, dim)
	cached := false
	eval := func(op optimize.Operation) {
		if op&optimize.FuncEvaluation != 0 {
			for i := range cacheG {
				cacheG[i] = math.NaN()
			}
			loc.F = f(loc.X, cacheG)
			copy(cacheX, loc.X)
			cached = true
			for _, v := range cacheG {
				if math.IsNaN(v) {
					cached = false // f did not write a gradient here
				}
			}
		}
		if op&optimize.GradEvaluation != 0 {
			if cached && floats.Equal(cacheX, loc.X) {
				copy(loc.Gradient, cacheG)
			} else {
				f(loc.X, loc.Gradient)
			}
		}
	}
	iters := 0
	major := func() optimize.Status {
		// optimize.performMajorIteration and checkLocationConvergence.
		opt.F = loc.F
		copy(opt.X, loc.X)
		if opt.Gradient == nil {
			opt.Gradient = make([]float64, dim)
		}
		copy(opt.Gradient, loc.Gradient)
		iters++
		if math.IsInf(opt.F, -1) {
			return optimize.FunctionNegativeInfinity
		}
		if s.GradientThreshold > 0 && floats.Norm(opt.Gradient, math.Inf(1)) < s.GradientThreshold {
			return optimize.GradientThreshold
		}
		if st := conv.Converged(&opt); st != optimize.NotTerminated {
			return st
		}
		if s.MajorIterations > 0 && iters >= s.MajorIterations {
			return optimize.IterationLimit
		}
		return optimize.NotTerminated
	}
	const methodGradTol = 1e-12 // BFGS.GradStopThreshold 0 means 1e-12 (optimize.defaultGradientAbsTol)

	eval(optimize.FuncEvaluation | optimize.GradEvaluation)
	// optimize.localOptimizer.checkStartingLocation.
	if math.IsInf(loc.F, 1) || math.IsNaN(loc.F) {
		return opt, optimize.Failure, optimize.ErrFunc(loc.F)
	}
	for i, v := range loc.Gradient {
		if math.IsInf(v, 0) || math.IsNaN(v) {
			return opt, optimize.Failure, optimize.ErrGrad{Grad: v, Index: i}
		}
	}
	if st := major(); st != optimize.NotTerminated {
		return opt, st, nil
	}
	ls := &optimize.LinesearchMethod{NextDirectioner: &optimize.BFGS{}, Linesearcher: &optimize.Bisection{}}
	op, err := ls.Init(loc)
	for {
		if err != nil {
			return opt, optimize.Failure, err
		}
		switch op {
		case optimize.MajorIteration:
			if st := major(); st != optimize.NotTerminated {
				return opt, st, nil
			}
			if floats.Norm(loc.Gradient, math.Inf(1)) < methodGradTol {
				return opt, optimize.GradientThreshold, nil
			}
		case optimize.FuncEvaluation, optimize.GradEvaluation, optimize.FuncEvaluation | optimize.GradEvaluation:
			eval(op)
		default:
			return opt, optimize.Failure, errUnexpectedOp
		}
		op, err = ls.Iterate(loc)
	}
}

var errUnexpectedOp = errors.New("extremes: line search asked for an unexpected operation")
