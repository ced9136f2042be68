package climate

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// Reference values in testdata/climate/reference.json were made by
// testdata/climate/make_ref.py with Debian's python3-numpy 1.24.2 and
// python3-scipy 1.10.1 (versions recorded in the file) from the invented
// samples in testdata/climate/samples.csv.

type refFile struct {
	NumpyVersion string             `json:"numpy_version"`
	ScipyVersion string             `json:"scipy_version"`
	Levels       []float64          `json:"percentile_levels"`
	Weighted     map[string]float64 `json:"weighted"`
	Scatter      []struct {
		Row, Col, Count int
		JMean           float64 `json:"J_mean"`
	} `json:"scatter_unweighted"`
}

func loadRef(t *testing.T) (refFile, map[string]any, []Step) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/climate/reference.json")
	if err != nil {
		t.Fatalf("reference values missing (run testdata/climate/make_ref.py): %v", err)
	}
	var ref refFile
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	var u map[string]any
	var top map[string]json.RawMessage
	if err := json.Unmarshal(b, &top); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(top["unweighted"], &u); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("../../testdata/climate/samples.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var steps []Step
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			continue
		}
		var v [7]float64
		for i, p := range strings.Split(line, ",") {
			v[i], err = strconv.ParseFloat(p, 64)
			if err != nil {
				t.Fatal(err)
			}
		}
		day := int(v[0] / 24)
		steps = append(steps, Step{Year: 2001 + day/360, Month: (day/30)%12 + 1, Hours: v[0], DtHours: v[1],
			J: v[2], Hm0: v[3], Te: v[4], Tp: v[5], DirDeg: v[6]})
	}
	return ref, u, steps
}

func num(t *testing.T, m map[string]any, k string) float64 {
	t.Helper()
	v, ok := m[k].(float64)
	if !ok {
		t.Fatalf("reference value %q missing", k)
	}
	return v
}

func nums(t *testing.T, m map[string]any, k string) []float64 {
	t.Helper()
	a, ok := m[k].([]any)
	if !ok {
		t.Fatalf("reference list %q missing", k)
	}
	out := make([]float64, len(a))
	for i, x := range a {
		out[i] = x.(float64)
	}
	return out
}

func within(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.12g, reference %.12g (|diff| %.3g > tolerance %.3g)", what, got, want, math.Abs(got-want), tol)
	}
}

func validated(t testing.TB, cfg *Config) *Config {
	t.Helper()
	if err := cfg.Validate(); err != nil {
		t.Fatal(err)
	}
	return cfg
}

// TestAgainstNumpyUnweighted feeds the samples with unit weights (1 h each,
// contiguous) and compares with numpy.mean, numpy.std (ddof 0),
// numpy.percentile (linear), scipy.stats.circmean and shares computed by
// numpy. Tolerances are the stated quanta and histogram resolution.
func TestAgainstNumpyUnweighted(t *testing.T) {
	ref, u, steps := loadRef(t)
	cfg := DefaultConfig()
	cfg.Calendar = "360_day"
	validated(t, cfg)
	s := NewCellState(cfg)
	for i := range steps {
		st := steps[i]
		st.Hours, st.DtHours = float64(i), 1
		s.Add(&st)
	}
	sum := s.Summary()
	t.Logf("numpy %s, scipy %s, %d samples", ref.NumpyVersion, ref.ScipyVersion, len(steps))
	const jq = 1.0 / qJ / 2 / 1000 // half the J quantum, in kW/m
	const hq = 1.0 / qH / 2
	within(t, "PowerMeanKWm", sum.PowerMeanKWm, num(t, u, "J_mean")/1000, jq+1e-12)
	within(t, "PowerStdKWm", sum.PowerStdKWm, num(t, u, "J_std")/1000, jq+1e-12)
	within(t, "PowerMaxKWm", sum.PowerMaxKWm, num(t, u, "J_max")/1000, 1e-12)
	within(t, "Hm0MeanM", sum.Hm0MeanM, num(t, u, "hm0_mean"), hq+1e-12)
	within(t, "Hm0StdM", sum.Hm0StdM, num(t, u, "hm0_std"), hq+1e-12)
	within(t, "Hm0MaxM", sum.Hm0MaxM, num(t, u, "hm0_max"), 0)
	within(t, "TeMeanS", sum.TeMeanS, num(t, u, "te_mean"), 1.0/qT/2+1e-12)
	within(t, "TpMeanS", sum.TpMeanS, num(t, u, "tp_mean"), 1.0/qT/2+1e-12)
	// directions rounded to DirResDeg before averaging
	within(t, "DirMeanDeg (scipy.stats.circmean)", sum.DirMeanDeg, num(t, u, "dir_circmean"), DirResDeg/2)
	within(t, "PowerCoV", sum.PowerCoV, num(t, u, "J_std")/num(t, u, "J_mean"), 1e-6)

	jp, hp := nums(t, u, "J_percentiles"), nums(t, u, "hm0_percentiles")
	for i, p := range ref.Levels {
		// within one bin of the histogram at that value
		wantJ := jp[i] / 1000
		bw := math.Max(sum.PowerHistLowResKWm, math.Ldexp(1, int(math.Floor(math.Log2(math.Max(wantJ, sum.PowerPercentilesKWm[i])))))*sum.PowerHistRelRes)
		within(t, "J percentile "+strconv.FormatFloat(p, 'g', -1, 64), sum.PowerPercentilesKWm[i], wantJ, bw)
		within(t, "Hm0 percentile "+strconv.FormatFloat(p, 'g', -1, 64), sum.Hm0PercentilesM[i], hp[i], cfg.Hm0HistResM)
	}
	// exceedance at bin edges is exact: share of samples with Hm0 >= edge (numpy mean(hm0 >= e))
	shares := u["hm0_share_ge"].(map[string]any)
	rows := s.Exceedance()
	for k, v := range shares {
		e, _ := strconv.ParseFloat(k, 64)
		found := false
		for _, r := range rows {
			if r.Variable == "hm0_m" && math.Abs(r.Value-e) < 1e-9 {
				found = true
				within(t, "Hm0 share exceeded at "+k+" m", r.ShareExceeded, v.(float64), 1e-15)
			}
		}
		if !found {
			t.Errorf("no exceedance point at Hm0 = %s m", k)
		}
	}
	// joint occurrence against the table numpy binned (floor(h/0.5), floor(te/1), open last bins)
	sc := s.Scatter()
	if len(sc) != len(ref.Scatter) {
		t.Fatalf("scatter has %d non-empty bins, numpy %d", len(sc), len(ref.Scatter))
	}
	for i, r := range ref.Scatter {
		g := sc[i]
		if int(math.Round(g.Hm0LoM/0.5)) != r.Row || int(math.Round(g.TeLoS)) != r.Col || math.Abs(g.Hours-float64(r.Count)) > 1e-12 {
			t.Errorf("scatter bin %d: got Hm0 %g m, Te %g s, %g h; numpy row %d col %d count %d", i, g.Hm0LoM, g.TeLoS, g.Hours, r.Row, r.Col, r.Count)
		}
		within(t, "scatter mean power", g.PowerMeanKWm, r.JMean/1000, jq+1e-12)
	}
}

// TestAgainstNumpyWeighted feeds the samples with their own step lengths
// (1 h and 3 h) and compares with numpy.average(weights=dt) and the weighted
// population standard deviation.
func TestAgainstNumpyWeighted(t *testing.T) {
	ref, _, steps := loadRef(t)
	cfg := DefaultConfig()
	cfg.Calendar = "360_day"
	validated(t, cfg)
	s := NewCellState(cfg)
	for i := range steps {
		s.Add(&steps[i])
	}
	sum := s.Summary()
	w := ref.Weighted
	const jq = 1.0 / qJ / 2 / 1000
	within(t, "weighted PowerMeanKWm", sum.PowerMeanKWm, w["J_mean"]/1000, jq+1e-12)
	within(t, "weighted PowerStdKWm", sum.PowerStdKWm, w["J_std"]/1000, jq+1e-12)
	within(t, "weighted Hm0MeanM", sum.Hm0MeanM, w["hm0_mean"], 1.0/qH/2+1e-12)
	within(t, "weighted Hm0StdM", sum.Hm0StdM, w["hm0_std"], 1.0/qH/2+1e-12)
	within(t, "weighted TeMeanS", sum.TeMeanS, w["te_mean"], 1.0/qT/2+1e-12)
	if sum.RejectedSteps != 0 || sum.BackwardSteps != 0 || sum.CoverageFrac != 1 {
		t.Errorf("clean contiguous record: rejected %d, backward %d, coverage %g", sum.RejectedSteps, sum.BackwardSteps, sum.CoverageFrac)
	}
}
