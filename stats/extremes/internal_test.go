package extremes

import (
	"errors"
	"math"
	"testing"
)

// TestGradients compares the analytic log-likelihood gradients (and the GPD
// Hessian) with central differences (common practice for checking derived
// gradients), including
// shapes at and next to the series switch of boxLog.
func TestGradients(t *testing.T) {
	z := readColumn(t, "portpirie.csv", 1)
	for _, xi := range []float64{-0.3, -0.15, -1e-4 / 5, 0, 3e-6, 2e-4, 0.25} {
		x := []float64{3.87, math.Log(0.2), xi}
		g := make([]float64, 3)
		if math.IsInf(gevNegLogLik(x, g, z), 1) {
			if xi > -0.2 {
				t.Fatalf("shape %g: Port Pirie outside the support", xi)
			}
		}
		for i := range x {
			if xi < -0.2 {
				break // outside the GEV support for these data; the GPD part still runs
			}
			h := 1e-6
			xp := append([]float64(nil), x...)
			xm := append([]float64(nil), x...)
			xp[i] += h
			xm[i] -= h
			num := (gevNegLogLik(xp, nil, z) - gevNegLogLik(xm, nil, z)) / (2 * h)
			near(t, "GEV gradient", g[i], num, 1e-5*(1+math.Abs(num)))
		}
		if xi > -0.2 {
			// The analytic GEV Hessian against central differences of the gradient.
			hs := make([]float64, 9)
			gevNegLogLikHess(x, g, hs, z)
			checkHessian(t, "GEV Hessian", x, func(x, g []float64) { gevNegLogLik(x, g, z) }, func(i, j int) float64 { return hs[i*3+j] })
		}
		y := make([]float64, len(z))
		for i, v := range z {
			y[i] = v - 3.5
		}
		p := []float64{math.Log(0.5), xi}
		gp := make([]float64, 2)
		gpdNegLogLik(p, gp, y)
		for i := range p {
			h := 1e-6
			pp := append([]float64(nil), p...)
			pm := append([]float64(nil), p...)
			pp[i] += h
			pm[i] -= h
			num := (gpdNegLogLik(pp, nil, y) - gpdNegLogLik(pm, nil, y)) / (2 * h)
			near(t, "GPD gradient", gp[i], num, 1e-5*(1+math.Abs(num)))
		}
		// The analytic Hessian against central differences of the gradient.
		var hs [2][2]float64
		gpdNegLogLikHess(p, gp, &hs, y)
		checkHessian(t, "GPD Hessian", p, func(x, g []float64) { gpdNegLogLik(x, g, y) }, func(i, j int) float64 { return hs[i][j] })
	}
}

// checkHessian compares an analytic Hessian, hess(i, j), with central
// differences of the analytic gradient grad at x (step 1e-6; common
// practice for checking derived second derivatives).
func checkHessian(t *testing.T, name string, x []float64, grad func(x, g []float64), hess func(i, j int) float64) {
	t.Helper()
	const h = 1e-6
	gp, gm := make([]float64, len(x)), make([]float64, len(x))
	for i := range x {
		xp := append([]float64(nil), x...)
		xm := append([]float64(nil), x...)
		xp[i] += h
		xm[i] -= h
		grad(xp, gp)
		grad(xm, gm)
		for j := range x {
			num := (gp[j] - gm[j]) / (2 * h)
			near(t, name, hess(i, j), num, 1e-5*(1+math.Abs(num)))
		}
	}
}

// TestGumbelLimitSmooth: L and dL/dxi of boxLog and the return-level term are
// continuous across the switch to the series (|xi y| = 1e-4) to near rounding,
// and equal the exact Gumbel/exponential limits at xi = 0 (Coles 2001, eq. 3.2
// and 4.2 limits).
func TestGumbelLimitSmooth(t *testing.T) {
	y := 2.5
	below := 0.99999e-4 / y
	above := 1.00001e-4 / y
	Lb, dLb, _ := boxLog(below, y)
	La, dLa, _ := boxLog(above, y)
	near(t, "L across switch", La-Lb, dLb*(above-below), 1e-13)
	near(t, "dL across switch", dLb, dLa, 1e-6)
	L0, dL0, _ := boxLog(0, y)
	near(t, "L at 0", L0, y, 0)
	near(t, "dL at 0", dL0, -y*y/2, 0)
	a0, da0 := expShapeTerm(0, y)
	near(t, "A at 0", a0, y, 0)
	near(t, "dA at 0", da0, y*y/2, 0)
	ab, dab := expShapeTerm(below, y)
	aa, daa := expShapeTerm(above, y)
	near(t, "A across switch", aa-ab, dab*(above-below), 1e-13)
	near(t, "dA across switch", dab, daa, 1e-6)
	// Gumbel return level: z_T = Loc - Scale log(-log(1 - 1/T)).
	g := GEV{Loc: 2, Scale: 0.5}
	z, _ := g.ReturnLevel(100)
	near(t, "Gumbel z100", z, 2-0.5*math.Log(-math.Log(0.99)), 1e-12)
}

// TestDegenerateInputs: fits of degenerate samples return without panicking,
// with an error or flags, never a silent success with NaN parameters.
func TestDegenerateInputs(t *testing.T) {
	if _, err := FitGEV([]float64{1, 2}); err == nil {
		t.Error("2 maxima accepted")
	}
	if _, err := FitGPD([]float64{1}, 0, 1); err == nil {
		t.Error("1 exceedance accepted")
	}
	for _, x := range [][]float64{{3, 3, 3, 3, 3}, {1, 1, 1, 1, 5}, {1e6, 1e6 + 1, 1e6 + 3, 1e6 + 2}, {math.NaN(), 1, 2, 3, 4}} {
		f, err := FitGEV(x)
		if err != nil {
			continue
		}
		if f.Converged && (math.IsNaN(f.Loc) || math.IsNaN(f.Scale) || math.IsNaN(f.Shape)) {
			t.Errorf("%v: converged with NaN parameters %+v", x, f.GEV)
		}
	}
	var c Collector
	if got := Analyse(&c, AnalysisConfig{}); got.Flags&FlagNoFit == 0 {
		t.Error("zero Collector not flagged")
	}
}

// Equal values have no maximum-likelihood GEV or GPD (the likelihood grows
// without bound as Scale -> 0; elementary, e.g. Coles 2001, section 3.3.2 on
// the regularity of the likelihood): the fits return at once, not converged,
// with ErrNoSpread, and no level is published.
func TestNoSpread(t *testing.T) {
	g, err := FitGEV([]float64{2, 2, 2, 2, 2})
	if err != nil || g.Converged || !errors.Is(g.OptErr, ErrNoSpread) || g.InfoOK || !math.IsNaN(g.Shape) || g.N != 5 {
		t.Errorf("GEV of equal maxima: %+v, %v", g, err)
	}
	p, err := FitGPD([]float64{3, 3, 3}, 1, 2)
	if err != nil || p.Converged || !errors.Is(p.OptErr, ErrNoSpread) || p.InfoOK || !math.IsNaN(p.Scale) || p.N != 3 {
		t.Errorf("GPD of equal peaks: %+v, %v", p, err)
	}
	if f := Publication(FitQuality{Fitted: true, Converged: g.Converged, InfoOK: g.InfoOK, Shape: g.Shape, N: 30, Record: 30}, 10, AnalysisConfig{}); f&Withheld == 0 {
		t.Errorf("level of equal maxima published (flags %v)", f.Names())
	}
}

// The likelihoods evaluated without a gradient (the Nelder-Mead path) give
// bit for bit the value of the evaluation with one, near the Gumbel limit,
// away from it and outside the support (Port Pirie maxima, Coles 2001).
func TestNegLogLikWithoutGradient(t *testing.T) {
	z := readColumn(t, "portpirie.csv", 1)
	for _, x := range [][]float64{{3.87, math.Log(0.2), -0.05}, {3.9, math.Log(0.25), 1e-6}, {3.8, math.Log(0.1), 0.4}, {4.5, math.Log(0.05), -0.8}} {
		g := make([]float64, 3)
		if a, b := gevNegLogLik(x, nil, z), gevNegLogLik(x, g, z); a != b && !(math.IsInf(a, 1) && math.IsInf(b, 1)) {
			t.Errorf("GEV nll at %v: %v without the gradient, %v with it", x, a, b)
		}
		y := make([]float64, len(z))
		for i, v := range z {
			y[i] = v - 3.5
		}
		p := []float64{x[1] + 1, x[2]}
		if a, b := gpdNegLogLik(p, nil, y), gpdNegLogLik(p, g[:2], y); a != b && !(math.IsInf(a, 1) && math.IsInf(b, 1)) {
			t.Errorf("GPD nll at %v: %v without the gradient, %v with it", p, a, b)
		}
	}
}
