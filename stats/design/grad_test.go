package design

import (
	"math"
	"testing"
)

// checkGrad compares an analytic gradient with central differences of the
// function (step 1e-6; numerical differentiation is common practice, e.g.
// Nocedal and Wright 2006, section 8.1).
func checkGrad(t *testing.T, what string, f func(x, g []float64) float64, x []float64) {
	t.Helper()
	g := make([]float64, len(x))
	f(x, g)
	for i := range x {
		h := 1e-6 * math.Max(1, math.Abs(x[i]))
		xp := append([]float64(nil), x...)
		xp[i] += h
		fp := f(xp, nil)
		xp[i] -= 2 * h
		fd := (fp - f(xp, nil)) / (2 * h)
		if !(math.Abs(fd-g[i]) <= 1e-6*math.Max(1, math.Abs(fd))) {
			t.Errorf("%s: d/dx%d analytic %.9g, central difference %.9g", what, i, g[i], fd)
		}
	}
}

// The analytic gradients of the four objectives of FitJoint agree with
// central differences of the objectives, at points off the optimum, on the
// reference sample's histogram and occurrence table (scipy_design_refs.json).
func TestObjectiveGradients(t *testing.T) {
	_, h, cells := loadRefs(t)
	first, last, tot := occupiedRange(h)
	wb := weibullObjective(h, first, last, tot)
	for _, x := range [][]float64{{math.Log(0.1), 0.5, 0.4}, {math.Log(0.02), 0.1, 0.2}, {math.Log(0.5), 1, 0.6}} {
		checkGrad(t, "weibullBinnedNLL", wb, x)
	}
	bins := []bin{{math.Inf(-1), math.Log(4), 3}, {math.Log(4), math.Log(5), 20}, {math.Log(5), math.Log(6), 41}, {math.Log(6), math.Inf(1), 9}}
	gd := newGrouped(bins)
	for _, x := range [][]float64{{1.6, math.Log(0.15)}, {1.7, math.Log(0.3)}} {
		checkGrad(t, "normalBinnedNLL", func(p, g []float64) float64 { return normalBinnedNLL(p, g, gd, 73) }, x)
	}
	rows := ConditionalRows(cells, h)
	var wt float64
	for _, r := range rows {
		wt += r.Weight
	}
	for _, x := range [][]float64{{1.1, 0.5, math.Log(0.5)}, {1.3, 0.7, math.Log(0.3)}} {
		checkGrad(t, "meanLSQ", func(p, g []float64) float64 { return meanLSQ(p, g, rows, wt) }, x)
	}
	for _, x := range [][]float64{{math.Log(0.05), 0.1, math.Log(0.3)}, {math.Log(0.02), 0.2, math.Log(0.5)}} {
		checkGrad(t, "spreadLSQ", func(p, g []float64) float64 { return spreadLSQ(p, g, rows, wt) }, x)
	}
}

// FitConditional's variable projection finds the least squares of the three
// parameters: at its result the gradients of the full objectives meanLSQ
// and spreadLSQ (checked against central differences above) vanish (below
// 1e-8; the objectives are of order 1e-3), and no point of a grid of steps
// around it in all three parameters has a smaller sum of squares; on the
// reference sample (scipy_design_refs.json) and on rows whose means follow
// c + d ln h exactly plus a wiggle, where the infimum is at A2 -> 0: there
// the objective at the result is within 1e-10 of that limit's least
// squares.
func TestConditionalIsLeastSquares(t *testing.T) {
	_, h, cells := loadRefs(t)
	rows := ConditionalRows(cells, h)
	check := func(name string, rows []Row, interior bool) Conditional {
		var wt float64
		for _, r := range rows {
			wt += r.Weight
		}
		c, err := FitConditional(rows)
		if err != nil {
			t.Fatal(err)
		}
		objs := []struct {
			name string
			f    func(p, g []float64) float64
			p    []float64
		}{
			{"meanLSQ", func(p, g []float64) float64 { return meanLSQ(p, g, rows, wt) }, []float64{c.A0, c.A1, math.Log(c.A2)}},
			{"spreadLSQ", func(p, g []float64) float64 { return spreadLSQ(p, g, rows, wt) }, []float64{math.Log(c.B0), c.B1, math.Log(c.B2)}},
		}
		for i, o := range objs {
			g := make([]float64, 3)
			f0 := o.f(o.p, g)
			if interior || i == 1 {
				for j := range g {
					if !(math.Abs(g[j]) < 1e-8) {
						t.Errorf("%s %s: gradient %v at the fit %v", name, o.name, g, o.p)
					}
				}
			}
			for _, d := range []float64{1e-3, 1e-2, 1e-1} {
				for j := range o.p {
					for _, s := range []float64{-d, d} {
						q := append([]float64(nil), o.p...)
						q[j] += s * math.Max(1, math.Abs(q[j]))
						if fq := o.f(q, nil); fq < f0 {
							t.Errorf("%s %s: %v has sum of squares %.12g below the fit's %.12g at %v", name, o.name, q, fq, f0, o.p)
						}
					}
				}
			}
		}
		return c
	}
	check("reference sample", rows, true)
	var lg []Row
	for k := 0; k < 12; k++ {
		hm := 0.25 + 0.5*float64(k)
		lg = append(lg, Row{Hm0Mean: hm, Weight: float64(100 - 7*k), Mean: 1.5 + 0.2*math.Log(hm) + 0.001*math.Sin(float64(k)), Std: 0.1 + 0.05*math.Exp(-0.4*hm)})
	}
	c := check("logarithmic means", lg, false)
	// The limit A2 -> 0: the weighted straight line of the means on ln h.
	var wt, xm, ym, sxy, sxx, f float64
	for _, r := range lg {
		wt += r.Weight
	}
	for _, r := range lg {
		xm += r.Weight / wt * math.Log(r.Hm0Mean)
		ym += r.Weight / wt * r.Mean
	}
	for _, r := range lg {
		dx := math.Log(r.Hm0Mean) - xm
		sxy += r.Weight / wt * dx * (r.Mean - ym)
		sxx += r.Weight / wt * dx * dx
	}
	d := sxy / sxx
	for _, r := range lg {
		e := r.Mean - (ym + d*(math.Log(r.Hm0Mean)-xm))
		f += r.Weight / wt * e * e
	}
	if got := meanLSQ([]float64{c.A0, c.A1, math.Log(c.A2)}, nil, lg, wt); !(got-f < 1e-10) {
		t.Errorf("logarithmic means: sum of squares %.12g at A2 = %g, the limit's %.12g", got, c.A2, f)
	}
}

// meanLSQ is the weighted least-squares objective of the mean of ln Te in
// p = (A0, A1, log A2), with r_k = Mean_k - (A0 + A1 h_k^A2), h_k the row's
// mean Hm0 and v_k its weight over the total wt,
//
//	f = sum_k v_k r_k^2,
//	df/dA0 = -2 sum v_k r_k,  df/dA1 = -2 sum v_k r_k h_k^A2,
//	df/dlog A2 = -2 sum v_k r_k A1 A2 h_k^A2 ln h_k
//
// (gradient derived here), which it writes into grad when grad is non-nil.
func meanLSQ(p, grad []float64, rows []Row, wt float64) float64 {
	a2 := math.Exp(p[2])
	var f, g0, g1, g2 float64
	for _, r := range rows {
		v := r.Weight / wt
		ha := math.Pow(r.Hm0Mean, a2)
		d := r.Mean - (p[0] + p[1]*ha)
		f += v * d * d
		g0 -= 2 * v * d
		g1 -= 2 * v * d * ha
		if ha != 0 {
			g2 -= 2 * v * d * p[1] * a2 * ha * math.Log(r.Hm0Mean)
		}
	}
	if grad != nil {
		grad[0], grad[1], grad[2] = g0, g1, g2
	}
	return f
}

// spreadLSQ is the weighted least-squares objective of the standard
// deviation of ln Te in p = (log B0, B1, log B2), with
// r_k = Std_k - (B0 + B1 exp(-B2 h_k)) and v_k as in meanLSQ,
//
//	f = sum_k v_k r_k^2,
//	df/dlog B0 = -2 sum v_k r_k B0,  df/dB1 = -2 sum v_k r_k exp(-B2 h_k),
//	df/dlog B2 = 2 sum v_k r_k B1 B2 h_k exp(-B2 h_k)
//
// (gradient derived here), which it writes into grad when grad is non-nil.
func spreadLSQ(p, grad []float64, rows []Row, wt float64) float64 {
	b0, b2 := math.Exp(p[0]), math.Exp(p[2])
	var f, g0, g1, g2 float64
	for _, r := range rows {
		v := r.Weight / wt
		e := math.Exp(-b2 * r.Hm0Mean)
		d := r.Std - (b0 + p[1]*e)
		f += v * d * d
		g0 -= 2 * v * d * b0
		g1 -= 2 * v * d * e
		g2 += 2 * v * d * p[1] * b2 * r.Hm0Mean * e
	}
	if grad != nil {
		grad[0], grad[1], grad[2] = g0, g1, g2
	}
	return f
}
