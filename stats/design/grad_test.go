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
