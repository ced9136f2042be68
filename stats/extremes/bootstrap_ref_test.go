package extremes

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"swellgrid/internal/testtool"
)

// bootRefs is testdata/extremes/bootstrap_refs.json, made by
// testdata/extremes/make_bootstrap_refs.py with Debian's python3-scipy and
// numpy: a parametric bootstrap of B refits with scipy's own sampling and
// fitting, each 95 % end with its 99.9 % Monte Carlo band.
type bootRefs struct {
	B   int `json:"B"`
	GEV struct {
		Levels []bootLevel `json:"levels"`
	} `json:"gev"`
	GPD struct {
		Threshold float64     `json:"threshold"`
		Years     float64     `json:"years"`
		Levels    []bootLevel `json:"levels"`
	} `json:"gpd"`
}

type bootLevel struct {
	Period float64 `json:"period_y"`
	Level  float64 `json:"level"`
	Ends   []struct {
		Value float64    `json:"value"`
		Band  [2]float64 `json:"band"`
	} `json:"ends"`
}

// TestBootstrapAgainstScipy: the parametric-bootstrap intervals of the
// Port Pirie GEV and the rainfall GPD (Coles 2001 sections 3.4.1 and 4.4.1)
// against scipy's bootstrap of the same size. Two Monte Carlo estimates of
// one percentile differ by sqrt(2) times the spread of one, so each end must
// lie within sqrt(2) x the reference's 99.9 % band half-width of scipy's end.
func TestBootstrapAgainstScipy(t *testing.T) {
	var ref bootRefs
	b, err := os.ReadFile("../../testdata/extremes/bootstrap_refs.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	cfg := AnalysisConfig{Bootstrap: Bootstrap{N: ref.B, Seed: 20261202}}
	check := func(what string, levels []Level, want []bootLevel) {
		for i, w := range want {
			l := levels[i]
			if math.Abs(l.Hm0-w.Level) > 2e-3*w.Level {
				t.Errorf("%s T=%g: level %.5f, scipy %.5f", what, w.Period, l.Hm0, w.Level)
			}
			for k, got := range []float64{l.BootLower, l.BootUpper} {
				e := w.Ends[k]
				half := math.Sqrt2 * math.Max(e.Value-e.Band[0], e.Band[1]-e.Value)
				t.Logf("%s T=%g end %d: %.5f, scipy %.5f (band %.5f..%.5f, allowed +-%.5f)", what, w.Period, k, got, e.Value, e.Band[0], e.Band[1], half)
				if !(math.Abs(got-e.Value) <= half) {
					t.Errorf("%s T=%g: bootstrap end %d = %.5f, scipy %.5f +- %.5f", what, w.Period, k, got, e.Value, half)
				}
			}
		}
	}

	x := readColumn(t, "portpirie.csv", 1)
	g, err := FitGEV(x)
	if err != nil || !g.Converged {
		t.Fatalf("GEV fit: %v %+v", err, g)
	}
	levels := make([]Level, len(ref.GEV.Levels))
	for i, w := range ref.GEV.Levels {
		levels[i].PeriodYears = w.Period
		levels[i].Hm0, _ = g.GEV.ReturnLevel(w.Period)
	}
	if failed := bootstrapGEV(g, cfg, levels); failed > ref.B/100 {
		t.Errorf("GEV: %d of %d refits failed", failed, ref.B)
	}
	check("Port Pirie GEV", levels, ref.GEV.Levels)

	r := readColumn(t, "rain_exceedances.csv", 0)
	p, err := FitGPD(r, ref.GPD.Threshold, float64(len(r))/ref.GPD.Years)
	if err != nil || !p.Converged {
		t.Fatalf("GPD fit: %v %+v", err, p)
	}
	levels = make([]Level, len(ref.GPD.Levels))
	for i, w := range ref.GPD.Levels {
		levels[i].PeriodYears = w.Period
		levels[i].Hm0, _ = p.GPD.ReturnLevel(w.Period, p.PeaksPerYear)
	}
	if failed := bootstrapGPD(p, ref.GPD.Years, cfg, levels); failed > ref.B/100 {
		t.Errorf("GPD: %d of %d refits failed", failed, ref.B)
	}
	check("rainfall GPD", levels, ref.GPD.Levels)
}

// TestBootstrapRefsReproduced reruns make_bootstrap_refs.py (Debian's python3
// with numpy and scipy; required under CI; about a minute) and checks that it
// gives the committed bootstrap_refs.json.
func TestBootstrapRefsReproduced(t *testing.T) {
	py := testtool.NeedPython(t, "numpy", "scipy")
	out, err := exec.Command(py, "../../testdata/extremes/make_bootstrap_refs.py").Output()
	if err != nil {
		t.Fatalf("make_bootstrap_refs.py: %v", err)
	}
	want, err := os.ReadFile(filepath.Join("..", "..", "testdata", "extremes", "bootstrap_refs.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(bytes.TrimSpace(out), bytes.TrimSpace(want)) {
		t.Errorf("make_bootstrap_refs.py no longer gives bootstrap_refs.json (rerun it and check the change)")
	}
}
