package extremes

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/optimize"
)

// TestOptimumLogLikAgainstScipy: the optimum that the synchronous optimiser
// (localopt.BFGS, through FitGEV and FitGPD) returns is scipy's maximum of the
// likelihood, to both sides: the maximised log-likelihood equals the one
// scipy.stats.genextreme.fit / genpareto.fit(floc=0) reached on the same
// samples (testdata/extremes/scipy_refs.json, written by make_scipy_refs.py
// with Debian python3-scipy 1.10.1) within 1e-9 (they agree to about 3e-14
// today), and it is the log-likelihood of the parameters reported (the sum of
// LogPDF at the returned parameters), so a wrong optimum or a value taken at
// another point than the parameters fails.
func TestOptimumLogLikAgainstScipy(t *testing.T) {
	r := loadScipy(t)
	for i, ref := range r.GEVFits {
		f, err := FitGEV(ref.X)
		if err != nil || !f.Converged || f.OptErr != nil {
			t.Fatalf("GEV sample %d: %v converged=%v %v", i, err, f.Converged, f.OptErr)
		}
		tol := 1e-9 * (1 + math.Abs(ref.LogLik))
		near(t, sprintf("GEV sample %d: loglik vs scipy genextreme.fit", i), f.LogLik, ref.LogLik, tol)
		var ll float64
		for _, z := range ref.X {
			ll += f.GEV.LogPDF(z)
		}
		near(t, sprintf("GEV sample %d: loglik of the returned parameters", i), ll, f.LogLik, tol)
	}
	for i, ref := range r.GPDFits {
		f, err := FitGPD(ref.Y, 0, 1)
		if err != nil || !f.Converged || f.OptErr != nil {
			t.Fatalf("GPD sample %d: %v converged=%v %v", i, err, f.Converged, f.OptErr)
		}
		tol := 1e-9 * (1 + math.Abs(ref.LogLik))
		near(t, sprintf("GPD sample %d: loglik vs scipy genpareto.fit", i), f.LogLik, ref.LogLik, tol)
		var ll float64
		for _, y := range ref.Y {
			ll += f.GPD.LogPDF(y)
		}
		near(t, sprintf("GPD sample %d: loglik of the returned parameters", i), ll, f.LogLik, tol)
	}
}

// TestOptimiserErrorReachesFlags: a likelihood with no finite value at the
// start (every point outside the support) makes both BFGS and the
// Nelder-Mead fallback fail with optimize.ErrFunc; minimise returns that
// error and converged = false, which FitGEV/FitGPD keep in OptErr with
// Converged = false, so Publication withholds the levels with
// FlagNoConvergence (an optimiser failure is a flag, never a number).
func TestOptimiserErrorReachesFlags(t *testing.T) {
	inf := func(x, g []float64) float64 { return math.Inf(1) }
	_, _, conv, err := minimise(inf, []float64{0, 0}, 1e-7)
	var ef optimize.ErrFunc
	if conv || !errors.As(err, &ef) || !strings.Contains(err.Error(), "Nelder-Mead") {
		t.Fatalf("minimise on +Inf: converged=%v err=%v, want not converged with optimize.ErrFunc", conv, err)
	}
}

// minimise2D (ProfileGEV's inner fit) finds the minimum of the Rosenbrock
// function, (1, 1) (Nocedal and Wright 2006, exercise 2.1; a standard test
// of quasi-Newton methods), from the usual start (-1.2, 1), without the
// fallback, from a start without curvature and again from the curvature it
// returned (as the next level of a profile does), the latter in fewer
// evaluations; its gradient threshold is met where it stops.
func TestMinimise2DRosenbrock(t *testing.T) {
	evals := 0
	f := func(x, g []float64) float64 {
		evals++
		a, b := 1-x[0], x[1]-x[0]*x[0]
		if g != nil {
			g[0] = -2*a - 400*x[0]*b
			g[1] = 200 * b
		}
		return a*a + 100*b*b
	}
	x0 := []float64{-1.2, 1}
	x, fx, h, ok := minimise2D(f, x0, f(x0, nil), 1e-9, [2][2]float64{})
	if !ok || math.Abs(x[0]-1) > 1e-6 || math.Abs(x[1]-1) > 1e-6 || fx > 1e-12 {
		t.Fatalf("from no curvature: (%g, %g), f %g, ok %v; want (1, 1)", x[0], x[1], fx, ok)
	}
	first := evals
	x1 := []float64{0.9, 0.8}
	evals = 0
	x, _, _, ok = minimise2D(f, x1, f(x1, nil), 1e-9, h)
	var g [2]float64
	f(x, g[:])
	if !ok || math.Abs(x[0]-1) > 1e-6 || math.Abs(x[1]-1) > 1e-6 || math.Max(math.Abs(g[0]), math.Abs(g[1])) >= 1e-9 {
		t.Fatalf("from the returned curvature: (%g, %g), gradient %v, ok %v", x[0], x[1], g, ok)
	}
	if evals >= first {
		t.Errorf("%d evaluations from the returned curvature, %d without", evals, first)
	}
	t.Logf("evaluations: %d from (-1.2, 1), %d from (0.9, 0.8) with the curvature at the optimum", first, evals)
}
