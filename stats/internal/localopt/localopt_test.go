package localopt

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/optimize/functions"
)

type testProblem struct {
	name string
	f    func([]float64) float64
	g    func(grad, x []float64)
	x0   []float64
}

// testProblems are gonum's own test functions (optimize/functions: Beale,
// extended Rosenbrock, Brown and Dennis, Box 3-D; Moré, Garbow and Hillstrom
// 1981) from their usual starts, plus a 1-D quadratic and a function that is
// +Inf on half the plane (as a likelihood outside its support).
func testProblems() []testProblem {
	halfInf := func(x []float64) float64 {
		if x[0] <= 0 {
			return math.Inf(1)
		}
		return (x[0]-2)*(x[0]-2) + math.Log(x[0])*x[1]*x[1] + 0.1*x[1]
	}
	halfInfGrad := func(g, x []float64) {
		if x[0] <= 0 {
			return
		}
		g[0] = 2*(x[0]-2) + x[1]*x[1]/x[0]
		g[1] = 2*math.Log(x[0])*x[1] + 0.1
	}
	return []testProblem{
		{"Beale", functions.Beale{}.Func, functions.Beale{}.Grad, []float64{1, 1}},
		{"ExtendedRosenbrock2", functions.ExtendedRosenbrock{}.Func, functions.ExtendedRosenbrock{}.Grad, []float64{-1.2, 1}},
		{"ExtendedRosenbrock4", functions.ExtendedRosenbrock{}.Func, functions.ExtendedRosenbrock{}.Grad, []float64{-1.2, 1, -1.2, 1}},
		{"BrownAndDennis", functions.BrownAndDennis{}.Func, functions.BrownAndDennis{}.Grad, []float64{25, 5, -5, -1}},
		{"Box3D", functions.Box3D{}.Func, functions.Box3D{}.Grad, []float64{0, 10, 20}},
		{"quadratic1", func(x []float64) float64 { return 3*(x[0]-0.7)*(x[0]-0.7) + 1 }, func(g, x []float64) { g[0] = 6 * (x[0] - 0.7) }, []float64{5}},
		{"halfInf", halfInf, halfInfGrad, []float64{0.05, 1}},
		{"startInf", halfInf, halfInfGrad, []float64{-1, 1}},
	}
}

func sameResult(t *testing.T, what string, got Result, gerr error, want *optimize.Result, werr error) {
	t.Helper()
	if (gerr == nil) != (werr == nil) || got.Status != want.Status {
		t.Errorf("%s: status %v err %v, optimize.Minimize %v err %v", what, got.Status, gerr, want.Status, werr)
		return
	}
	if got.F != want.F && !(math.IsNaN(got.F) && math.IsNaN(want.F)) {
		t.Errorf("%s: f %.17g, optimize.Minimize %.17g", what, got.F, want.F)
	}
	for k := range got.X {
		if got.X[k] != want.X[k] {
			t.Errorf("%s: x[%d] %.17g, optimize.Minimize %.17g", what, k, got.X[k], want.X[k])
		}
	}
}

// TestMatchesMinimize: both drivers return bit for bit the optimum, value,
// status and error class of gonum's optimize.Minimize with the same method
// and settings (gonum v0.17.0 is the reference), on gonum's test functions,
// with and without iteration limits and gradient thresholds.
func TestMatchesMinimize(t *testing.T) {
	settings := []Settings{
		{MajorIterations: 200, GradientThreshold: 1e-7, Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 25}},
		{MajorIterations: 7},
		{MajorIterations: 4000, Converger: &optimize.FunctionConverge{Absolute: 1e-11, Relative: 1e-11, Iterations: 40}},
	}
	for _, p := range testProblems() {
		for k, s := range settings {
			gs := func() *optimize.Settings {
				c := s.Converger
				if fc, ok := c.(*optimize.FunctionConverge); ok {
					cp := *fc
					c = &cp
				}
				return &optimize.Settings{MajorIterations: s.MajorIterations, GradientThreshold: s.GradientThreshold, Converger: c}
			}
			want, werr := optimize.Minimize(optimize.Problem{Func: p.f, Grad: p.g}, p.x0, gs(), &optimize.BFGS{})
			got, gerr := BFGS(Problem{Func: p.f, Grad: p.g}, p.x0, s)
			sameResult(t, sprintf("BFGS %s settings %d", p.name, k), got, gerr, want, werr)
			fg := func(x, g []float64) float64 {
				v := p.f(x)
				if g != nil && !math.IsInf(v, 0) {
					p.g(g, x)
				}
				return v
			}
			got, gerr = BFGS(Problem{FuncGrad: fg}, p.x0, s)
			sameResult(t, sprintf("BFGS (FuncGrad) %s settings %d", p.name, k), got, gerr, want, werr)
			want, werr = optimize.Minimize(optimize.Problem{Func: p.f}, p.x0, gs(), &optimize.NelderMead{})
			got, gerr = NelderMead(p.f, p.x0, s)
			sameResult(t, sprintf("NelderMead %s settings %d", p.name, k), got, gerr, want, werr)
		}
	}
}

func sprintf(format string, a ...any) string { return fmt.Sprintf(format, a...) }

// QuasiNewton2 (extremes.ProfileGEV's inner fit) finds the minimum of the Rosenbrock
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
	x, fx, h, ok := QuasiNewton2(f, x0, f(x0, nil), 1e-9, [2][2]float64{})
	if !ok || math.Abs(x[0]-1) > 1e-6 || math.Abs(x[1]-1) > 1e-6 || fx > 1e-12 {
		t.Fatalf("from no curvature: (%g, %g), f %g, ok %v; want (1, 1)", x[0], x[1], fx, ok)
	}
	first := evals
	x1 := []float64{0.9, 0.8}
	evals = 0
	x, _, _, ok = QuasiNewton2(f, x1, f(x1, nil), 1e-9, h)
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

// Newton2 (extremes.FitGPD's search) finds the minimum of the Rosenbrock
// function, (1, 1) (Nocedal and Wright 2006, exercise 2.1), from the usual
// start (-1.2, 1), where the Hessian is not positive definite at first
// (Hessian modification), and stops with its gradient threshold met; the
// Hessian it returns is the analytic one at the minimum,
// [[802, -400], [-400, 200]].
func TestNewton2Rosenbrock(t *testing.T) {
	evals := 0
	f := func(x, g []float64, h *[2][2]float64) float64 {
		evals++
		a, b := 1-x[0], x[1]-x[0]*x[0]
		if g != nil {
			g[0] = -2*a - 400*x[0]*b
			g[1] = 200 * b
			h[0][0] = 2 - 400*b + 800*x[0]*x[0]
			h[0][1], h[1][0] = -400*x[0], -400*x[0]
			h[1][1] = 200
		}
		return a*a + 100*b*b
	}
	x, fx, g, h, ok := Newton2(f, []float64{-1.2, 1}, 1e-9)
	if !ok || math.Abs(x[0]-1) > 1e-9 || math.Abs(x[1]-1) > 1e-9 || fx > 1e-18 {
		t.Fatalf("(%g, %g), f %g, ok %v; want (1, 1)", x[0], x[1], fx, ok)
	}
	if math.Max(math.Abs(g[0]), math.Abs(g[1])) >= 1e-9 {
		t.Errorf("gradient %v at the end", g)
	}
	if math.Abs(h[0][0]-802) > 1e-6 || math.Abs(h[0][1]+400) > 1e-6 || h[1][1] != 200 {
		t.Errorf("Hessian %v, want [[802 -400] [-400 200]]", h)
	}
	t.Logf("%d evaluations from (-1.2, 1)", evals)
}
