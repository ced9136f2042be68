package extremes

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/optimize"
)

// TestOptimumLogLikAgainstScipy: the optimum that the synchronous optimiser
// (bfgsSync, through FitGEV and FitGPD) returns is scipy's maximum of the
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

// TestSyncBFGSMatchesMinimize: bfgsSync follows gonum's optimize.Minimize
// with &optimize.BFGS{} evaluation for evaluation, so on the scipy samples
// (GEV and GPD likelihoods, from the PWM starts) it returns bit for bit the
// optimum, value and status that optimize.Minimize returns with the same
// settings. gonum's own driver is the reference here.
func TestSyncBFGSMatchesMinimize(t *testing.T) {
	r := loadScipy(t)
	type problem struct {
		name string
		f    objective
		x0   []float64
		tol  float64
	}
	var ps []problem
	for i, ref := range r.GEVFits {
		z := finiteSorted(ref.X)
		s := gevPWMStart(z)
		ps = append(ps, problem{sprintf("GEV %d", i), func(p, g []float64) float64 { return gevNegLogLik(p, g, z) },
			[]float64{s.Loc, math.Log(s.Scale), s.Shape}, 1e-7 * float64(len(z))})
		// A poor start (far from the optimum) takes many more iterations.
		ps = append(ps, problem{sprintf("GEV %d, Gumbel start", i), func(p, g []float64) float64 { return gevNegLogLik(p, g, z) },
			[]float64{s.Loc + s.Scale, math.Log(2 * s.Scale), 0}, 1e-7 * float64(len(z))})
	}
	for i, ref := range r.GPDFits {
		y := finiteSorted(ref.Y)
		s := gpdPWMStart(y)
		ps = append(ps, problem{sprintf("GPD %d", i), func(p, g []float64) float64 { return gpdNegLogLik(p, g, y) },
			[]float64{math.Log(s.Scale), s.Shape}, 1e-7 * float64(len(y))})
	}
	for _, p := range ps {
		settings := localSettings{GradientThreshold: p.tol, MajorIterations: 200,
			Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 25}}
		got, st, err := bfgsSync(p.f, p.x0, settings)
		want, werr := optimize.Minimize(optimize.Problem{
			Func: func(x []float64) float64 { return p.f(x, nil) },
			Grad: func(g, x []float64) { p.f(x, g) },
		}, p.x0, &optimize.Settings{GradientThreshold: p.tol, MajorIterations: 200,
			Converger: &optimize.FunctionConverge{Absolute: 1e-12, Relative: 1e-12, Iterations: 25}}, &optimize.BFGS{})
		if (err == nil) != (werr == nil) || st != want.Status {
			t.Errorf("%s: status %v err %v, Minimize %v err %v", p.name, st, err, want.Status, werr)
			continue
		}
		if got.F != want.F {
			t.Errorf("%s: f %.17g, Minimize %.17g", p.name, got.F, want.F)
		}
		for k := range got.X {
			if got.X[k] != want.X[k] {
				t.Errorf("%s: x[%d] %.17g, Minimize %.17g", p.name, k, got.X[k], want.X[k])
			}
		}
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
