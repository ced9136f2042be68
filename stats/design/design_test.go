package design

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

type refs struct {
	Sample struct {
		N            int
		WeibullTruth []float64 `json:"weibull_truth"`
	}
	HistRes float64   `json:"hm0_hist_res_m"`
	Hist    []float64 `json:"hm0_hist"`
	ScH     float64   `json:"scatter_hm0_step_m"`
	ScT     float64   `json:"scatter_te_step_s"`
	Scatter [][]float64
	Weibull struct{ Shape, Loc, Scale float64 } `json:"weibull_min_fit"`
	Rows    []struct {
		Row      int
		N        float64
		Hm0Mean  float64 `json:"hm0_mean"`
		LnTeMean float64 `json:"ln_te_mean"`
		LnTeStd  float64 `json:"ln_te_std"`
	}
	CurveMu    []float64 `json:"curve_fit_mu"`
	CurveSigma []float64 `json:"curve_fit_sigma"`
	HW         struct {
		SeaStateH float64 `json:"sea_state_h"`
		NPoints   int     `json:"n_points"`
		Contours  map[string]struct {
			Beta   float64
			Points [][2]float64
		}
	} `json:"haver_winterstein_2009"`
}

// loadRefs reads testdata/design/scipy_design_refs.json, made by
// make_scipy_design_refs.py with Debian's python3-scipy and python3-numpy.
func loadRefs(t *testing.T) (refs, Hist, []Cell) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/design/scipy_design_refs.json")
	if err != nil {
		t.Fatal(err)
	}
	var r refs
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	var h Hist
	for i, w := range r.Hist {
		h.Edges = append(h.Edges, float64(i)*r.HistRes)
		h.Weights = append(h.Weights, w)
	}
	h.Edges = append(h.Edges, math.Inf(1))
	var cells []Cell
	for i, row := range r.Scatter {
		for j, w := range row {
			c := Cell{Hm0Lo: float64(i) * r.ScH, Hm0Hi: float64(i+1) * r.ScH, TeLo: float64(j) * r.ScT, TeHi: float64(j+1) * r.ScT, Weight: w}
			if i == len(r.Scatter)-1 {
				c.Hm0Hi = math.Inf(1)
			}
			if j == len(row)-1 {
				c.TeHi = math.Inf(1)
			}
			cells = append(cells, c)
		}
	}
	return r, h, cells
}

// The binned maximum-likelihood Weibull of the 0.05 m Hm0 histogram agrees
// with scipy.stats.weibull_min.fit on the unbinned 200 000 sea states
// (scipy_design_refs.json) within its sampling error, and so do the
// quantiles that set a 100-year contour.
func TestWeibullAgainstScipy(t *testing.T) {
	r, h, _ := loadRefs(t)
	w, err := FitWeibull3(h)
	if err != nil {
		t.Fatal(err)
	}
	sp := Weibull3{Loc: r.Weibull.Loc, Scale: r.Weibull.Scale, Shape: r.Weibull.Shape}
	t.Logf("binned ML %+v; scipy weibull_min.fit %+v", w, sp)
	near(t, "Loc", w.Loc, sp.Loc, 0.003)
	near(t, "Scale", w.Scale, sp.Scale, 0.005)
	near(t, "Shape", w.Shape, sp.Shape, 0.005)
	for _, p := range []float64{0.5, 0.99, 1 - 3/(100*8766.0)} {
		near(t, "quantile", w.Quantile(p), sp.Quantile(p), 0.003*sp.Quantile(p))
	}
}

// The conditional moments of ln Te from the 0.5 m x 1 s occurrence table
// (Sheppard-corrected) agree with the moments of the unbinned sample, and the
// fitted Mu and Sigma agree with scipy.optimize.curve_fit on those moments.
func TestConditionalAgainstScipy(t *testing.T) {
	r, h, cells := loadRefs(t)
	rows := ConditionalRows(cells, h)
	byHm := map[int]Row{}
	for _, x := range rows {
		byHm[int(x.Hm0Mean/r.ScH)] = x
	}
	for _, ref := range r.Rows {
		g, ok := byHm[ref.Row]
		if !ok {
			if ref.N > MinRowShare*float64(r.Sample.N) {
				t.Errorf("row %d (%g sea states) missing", ref.Row, ref.N)
			}
			continue
		}
		near(t, "row mean Hm0", g.Hm0Mean, ref.Hm0Mean, 0.002)
		// Grouped and raw estimates of a row differ by a fraction of their
		// standard error (large in the sparse top rows) plus the grouping error.
		se := ref.LnTeStd / math.Sqrt(ref.N)
		near(t, "row mean ln Te", g.Mean, ref.LnTeMean, 0.002+se)
		near(t, "row std ln Te", g.Std, ref.LnTeStd, 0.004+se/math.Sqrt2)
	}
	c, err := FitConditional(rows)
	if err != nil {
		t.Fatal(err)
	}
	sp := Conditional{A0: r.CurveMu[0], A1: r.CurveMu[1], A2: r.CurveMu[2], B0: r.CurveSigma[0], B1: r.CurveSigma[1], B2: r.CurveSigma[2]}
	t.Logf("fitted %+v; curve_fit %+v", c, sp)
	for _, hm := range []float64{0.5, 1, 2, 4, 6, 8} {
		near(t, "Mu", c.Mu(hm), sp.Mu(hm), 0.005)
		near(t, "Sigma", c.Sigma(hm), sp.Sigma(hm), 0.005)
	}
	// The whole contour: within 1 % of the one from scipy's fits.
	j, err := FitJoint(h, cells)
	if err != nil {
		t.Fatal(err)
	}
	spj := Joint{Hm0: Weibull3{Loc: r.Weibull.Loc, Scale: r.Weibull.Scale, Shape: r.Weibull.Shape}, LnTe: sp}
	a, b := j.Largest(100, 3), spj.Largest(100, 3)
	near(t, "100-year largest Hm0", a.Hm0, b.Hm0, 0.01*b.Hm0)
	near(t, "its Te", a.Te, b.Te, 0.01*b.Te)
	t.Logf("100-year contour, 3 h: largest Hm0 %.3f m at Te %.3f s (scipy fits: %.3f m, %.3f s)", a.Hm0, a.Te, b.Hm0, b.Te)
}

// hybridLNW is the Hs marginal of Haver & Winterstein (2009), parameters from
// memory (see make_scipy_design_refs.py): log-normal below 3.213 m, Weibull above.
type hybridLNW struct{}

func (hybridLNW) Quantile(p float64) float64 {
	ln := distuv.LogNormal{Mu: 0.801, Sigma: 0.371}
	if p <= ln.CDF(3.213) {
		return ln.Quantile(p)
	}
	return Weibull3{Loc: 0, Scale: 2.713, Shape: 1.531}.Quantile(p)
}

// The IFORM contour of the northern North Sea model of Haver & Winterstein
// (2009) (parameters from memory) agrees with an independent scipy.stats
// computation (scipy_design_refs.json) to 1e-9.
func TestIFORMAgainstScipy(t *testing.T) {
	r, _, _ := loadRefs(t)
	mu := func(h float64) float64 { return 1.780 + 0.288*math.Pow(h, 0.474) }
	sg := func(h float64) float64 { return math.Sqrt(0.001 + 0.097*math.Exp(-0.255*h)) }
	for _, T := range []string{"1", "100"} {
		ref := r.HW.Contours[T]
		Ty := map[string]float64{"1": 1, "100": 100}[T]
		b := Beta(Ty, r.HW.SeaStateH)
		near(t, "beta", b, ref.Beta, 1e-9)
		pts := IFORM(hybridLNW{}, mu, sg, b, r.HW.NPoints)
		for k, p := range pts {
			near(t, "Hs", p.Hm0, ref.Points[k][0], 1e-9*ref.Points[k][0])
			near(t, "Tp", p.Te, ref.Points[k][1], 1e-9*ref.Points[k][1])
		}
		t.Logf("Haver & Winterstein (2009) %s-year contour: beta %.4f, Hs max %.3f m at Tp %.2f s", T, b, pts[0].Hm0, pts[0].Te)
	}
}

func TestFewData(t *testing.T) {
	h := Hist{Edges: []float64{0, 0.05, 0.1, math.Inf(1)}, Weights: []float64{3, 4, 0}}
	if _, err := FitJoint(h, nil); err == nil {
		t.Error("two occupied bins fitted")
	}
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.6g, want %.6g +- %.3g", what, got, want, tol)
	}
}
