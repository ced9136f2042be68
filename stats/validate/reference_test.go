package validate

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"

	"swellgrid/stats/seastate"
)

// Reference values in testdata/validate/reference.json were made by
// testdata/validate/make_ref.py with Debian's python3-numpy 1.24.2 and
// python3-scipy 1.10.1 from the invented pairs of testdata/validate/pairs.csv:
// means, bias and RMSE with numpy, Pearson r with scipy.stats.pearsonr, the
// slope through the origin with numpy.linalg.lstsq, quantiles with
// numpy.percentile (method "linear"), circular means and the circular bias
// with scipy.stats.circmean, wave power with a dispersion relation solved by
// scipy.optimize.brentq.

type refStats struct {
	N              int       `json:"n"`
	MeanObs        float64   `json:"mean_obs"`
	MeanModel      float64   `json:"mean_model"`
	Bias           float64   `json:"bias"`
	RMSE           float64   `json:"rmse"`
	ScatterIndex   float64   `json:"scatter_index"`
	R              float64   `json:"r"`
	SlopeOrigin    float64   `json:"slope_origin"`
	SlopeSymmetric float64   `json:"slope_symmetric"`
	QModel         []float64 `json:"q_model"`
	QObs           []float64 `json:"q_obs"`
}

type reference struct {
	Depth  float64                         `json:"depth_m"`
	Rho    float64                         `json:"rho"`
	G      float64                         `json:"g"`
	Thr    float64                         `json:"storm_threshold_m"`
	Groups map[string]map[string]*refStats `json:"groups"`
}

type pairs struct {
	month                                  []int
	oh, mh, ote, mte, otp, mtp, odir, mdir []float64
}

func loadPairs(t *testing.T) (*pairs, *reference) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/validate/reference.json")
	if err != nil {
		t.Fatalf("reference values missing (run testdata/validate/make_ref.py): %v", err)
	}
	ref := &reference{}
	if err := json.Unmarshal(b, ref); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("../../testdata/validate/pairs.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	p := &pairs{}
	cols := []*[]float64{&p.oh, &p.mh, &p.ote, &p.mte, &p.otp, &p.mtp, &p.odir, &p.mdir}
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			continue
		}
		fs := strings.Split(line, ",")
		m, _ := strconv.Atoi(fs[0])
		p.month = append(p.month, m)
		for k, c := range cols {
			v, err := strconv.ParseFloat(fs[k+1], 64)
			if err != nil {
				t.Fatal(err)
			}
			*c = append(*c, v)
		}
	}
	return p, ref
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(want) != math.IsNaN(got) || math.Abs(got-want) > tol*math.Max(1, math.Abs(want)) {
		t.Errorf("%s = %.15g, numpy/scipy reference %.15g (tolerance %g)", what, got, want, tol)
	}
}

func checkLinear(t *testing.T, what string, s Stats, r *refStats, tol float64) {
	t.Helper()
	if s.N != r.N {
		t.Errorf("%s: N = %d, reference %d", what, s.N, r.N)
	}
	near(t, what+" mean_obs", s.MeanObs, r.MeanObs, tol)
	near(t, what+" mean_model", s.MeanModel, r.MeanModel, tol)
	near(t, what+" bias", s.Bias, r.Bias, tol)
	near(t, what+" rmse", s.RMSE, r.RMSE, tol)
	near(t, what+" scatter_index", s.ScatterIndex, r.ScatterIndex, tol)
	near(t, what+" r", s.R, r.R, tol)
	near(t, what+" slope_origin", s.SlopeOrigin, r.SlopeOrigin, tol)
	near(t, what+" slope_symmetric", s.SlopeSymmetric, r.SlopeSymmetric, tol)
}

// TestAgainstNumpyScipy: every statistic of every group (whole record,
// calendar months, seasons, storm tail) and variable against the reference.
// Tolerances: 1e-12 relative for sums of 3000 values (double rounding);
// 1e-9 for the wave power, whose dispersion roots differ by the solvers'
// tolerances (seastate: machine precision; brentq xtol 1e-15).
func TestAgainstNumpyScipy(t *testing.T) {
	p, ref := loadPairs(t)
	c := seastate.Consts{Rho: ref.Rho, G: ref.G}
	opw, mpw := PowerKW(p.oh, p.ote, ref.Depth, c), PowerKW(p.mh, p.mte, ref.Depth, c)
	groups, thr := Groups(p.month, p.oh, 95)
	near(t, "storm threshold", thr, ref.Thr, 1e-14)
	if len(groups) != len(ref.Groups) {
		t.Fatalf("%d groups, reference %d", len(groups), len(ref.Groups))
	}
	for _, g := range groups {
		r := ref.Groups[g.Period]
		if r == nil {
			t.Fatalf("group %s not in the reference", g.Period)
		}
		checkLinear(t, g.Period+" hm0", Paired(Pick(p.mh, g.Index), Pick(p.oh, g.Index)), r["hm0"], 1e-12)
		checkLinear(t, g.Period+" te", Paired(Pick(p.mte, g.Index), Pick(p.ote, g.Index)), r["te"], 1e-12)
		checkLinear(t, g.Period+" tp", Paired(Pick(p.mtp, g.Index), Pick(p.otp, g.Index)), r["tp"], 1e-12)
		checkLinear(t, g.Period+" power", Paired(Pick(mpw, g.Index), Pick(opw, g.Index)), r["power"], 1e-9)
		cs := Circular(Pick(p.mdir, g.Index), Pick(p.odir, g.Index))
		rd := r["dir"]
		if cs.N != rd.N {
			t.Errorf("%s dir: N = %d, reference %d", g.Period, cs.N, rd.N)
		}
		near(t, g.Period+" dir circular mean obs", cs.MeanObs, rd.MeanObs, 1e-10)
		near(t, g.Period+" dir circular mean model", cs.MeanModel, rd.MeanModel, 1e-10)
		near(t, g.Period+" dir circular bias", cs.Bias, rd.Bias, 1e-10)
		near(t, g.Period+" dir circular rmse", cs.RMSE, rd.RMSE, 1e-12)
		for v, pr := range map[string][2][]float64{"hm0": {p.mh, p.oh}, "power": {mpw, opw}} {
			if r[v].QObs == nil {
				continue
			}
			qm, qo := QQ(Pick(pr[0], g.Index), Pick(pr[1], g.Index))
			for k := range qm {
				near(t, g.Period+" "+v+" model quantile", qm[k], r[v].QModel[k], 1e-12)
				near(t, g.Period+" "+v+" measured quantile", qo[k], r[v].QObs[k], 1e-12)
			}
		}
	}
}

// TestSymmetricSlope: exchanging model and measurement inverts the
// symmetric slope (its defining property) but not the slope through the
// origin; a model equal to the measurement has every slope 1, r 1, bias 0.
func TestSymmetricSlope(t *testing.T) {
	o := []float64{1, 2, 3.5, 0.7, 2.2}
	m := []float64{1.3, 1.9, 4.1, 0.5, 2.6}
	a, b := Paired(m, o), Paired(o, m)
	near(t, "slope_sym * swapped", a.SlopeSymmetric*b.SlopeSymmetric, 1, 1e-15)
	if math.Abs(a.SlopeOrigin*b.SlopeOrigin-1) < 1e-3 {
		t.Errorf("slope through the origin inverted on exchange (%g, %g): it should not be symmetric", a.SlopeOrigin, b.SlopeOrigin)
	}
	s := Paired(o, o)
	if s.Bias != 0 || s.RMSE != 0 || s.SlopeOrigin != 1 || s.SlopeSymmetric != 1 || math.Abs(s.R-1) > 1e-15 {
		t.Errorf("identical series: %+v", s)
	}
}

// TestCircularWrap: directions across north. Model 355 and measurement 5
// differ by -10 degrees, not 350 (common practice).
func TestCircularWrap(t *testing.T) {
	s := Circular([]float64{355, 10, 350}, []float64{5, 0, 0})
	near(t, "circular rmse", s.RMSE, 10, 1e-12)
	near(t, "circular bias", s.Bias, math.Atan2(math.Sin(-10*math.Pi/180)*2+math.Sin(10*math.Pi/180), math.Cos(10*math.Pi/180)*3)*180/math.Pi, 1e-12)
	near(t, "circular mean of the measurement", s.MeanObs, math.Atan2(math.Sin(5*math.Pi/180), math.Cos(5*math.Pi/180)+2)*180/math.Pi, 1e-12)
	if w := WrapDeg(190); w != -170 {
		t.Errorf("WrapDeg(190) = %g, want -170", w)
	}
}

// TestEmpty: no pair gives NaN statistics and N = 0, never 0 for "no result".
func TestEmpty(t *testing.T) {
	s := Paired([]float64{math.NaN()}, []float64{1})
	if s.N != 0 || !math.IsNaN(s.Bias) || !math.IsNaN(s.RMSE) || !math.IsNaN(s.R) {
		t.Errorf("no pair: %+v", s)
	}
	c := Circular(nil, nil)
	if c.N != 0 || !math.IsNaN(c.Bias) {
		t.Errorf("no direction pair: %+v", c)
	}
}
