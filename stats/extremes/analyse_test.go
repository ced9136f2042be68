package extremes

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// streamKnown feeds a Collector with an invented, synthetic record of daily steps
// (360-day toy calendar) whose annual maxima are draws from a known GEV and whose
// storm Te follows Te = 4.5 sqrt(Hm0) exactly; background steps stay small.
func streamKnown(years int, seed uint64) (*Collector, []float64) {
	truth := GEV{Loc: 6, Scale: 1, Shape: 0}
	r := rand.New(rand.NewPCG(seed, 3))
	c := NewCollector(CollectorConfig{})
	var maxima []float64
	h := 0.0
	for y := 0; y < years; y++ {
		peakDay := r.IntN(360)
		am := truth.Quantile(openUnit(r))
		maxima = append(maxima, am)
		for d := 0; d < 360; d++ {
			v := 1 + 0.5*r.Float64()
			if d%10 == 5 { // a storm every 10 days, below the annual maximum
				v = 1.5 + 0.9*(am-1.5)*r.Float64()
			}
			if d == peakDay {
				v = am
			}
			c.Add(2000+y, d/30+1, h, 24, v, 4.5*math.Sqrt(v), 5.2*math.Sqrt(v))
			h += 24
		}
	}
	return c, maxima
}

func TestAnalyseEndToEnd(t *testing.T) {
	c, maxima := streamKnown(40, 5)
	res := Analyse(c, AnalysisConfig{Bootstrap: Bootstrap{N: 200, Seed: 11}})
	if !strings.Contains(res.Caution, "not design values") {
		t.Error("caution missing")
	}
	if res.Years != 40 || math.Abs(res.RecordYears-40) > 1e-9 {
		t.Fatalf("years %d / record %.3f, want 40", res.Years, res.RecordYears)
	}
	// The GEV of Analyse is the ML fit of exactly the streamed annual maxima.
	direct, _ := FitGEV(maxima)
	if res.GEV.Loc != direct.Loc || res.GEV.Shape != direct.Shape {
		t.Errorf("Analyse GEV %+v differs from FitGEV of the annual maxima %+v", res.GEV, direct.GEV)
	}
	// Threshold rule: about 3 exceedances per year (k = 120 of the peaks).
	if res.GPD.N != 120 || math.Abs(res.PeaksPerYear-3) > 1e-12 {
		t.Errorf("GPD uses %d peaks (%.3f per year), want 120 (3 per year)", res.GPD.N, res.PeaksPerYear)
	}
	// Associated periods: the synthetic storms follow Te = 4.5 sqrt(Hm0) exactly, so
	// the regression must recover it (invented data: checks the method, not a value).
	for _, m := range []MethodResult{res.GEV, res.GPD} {
		if len(m.Levels) != 6 {
			t.Fatalf("%s: %d levels, want 6", m.Method, len(m.Levels))
		}
		for _, lv := range m.Levels {
			if math.IsNaN(lv.Hm0) {
				continue
			}
			near(t, m.Method+" Te", lv.Te, 4.5*math.Sqrt(lv.Hm0), 1e-9)
			near(t, m.Method+" Tp", lv.Tp, 5.2*math.Sqrt(lv.Hm0), 1e-9)
			if !(lv.Lower < lv.Hm0 && lv.Hm0 < lv.Upper) || !(lv.BootLower < lv.BootUpper) {
				t.Errorf("%s T=%g: level %.3f, delta [%.3f, %.3f], bootstrap [%.3f, %.3f]", m.Method, lv.PeriodYears, lv.Hm0, lv.Lower, lv.Upper, lv.BootLower, lv.BootUpper)
			}
		}
	}
	// The GEV has no 1-year level from annual maxima: NaN and flagged.
	if !math.IsNaN(res.GEV.Levels[0].Hm0) || res.GEV.Flags&FlagPeriodOutsideModel == 0 {
		t.Error("GEV 1-year level should be NaN and flagged period_outside_model")
	}
	if res.GPD.Flags != 0 {
		t.Errorf("GPD flags %v on a clean 40-year record", res.GPD.Flags.Names())
	}
	// Seeded bootstrap is reproducible.
	again := Analyse(c, AnalysisConfig{Bootstrap: Bootstrap{N: 200, Seed: 11}})
	if !reflect.DeepEqual(nanSafe(res), nanSafe(again)) {
		t.Error("same seed, different result")
	}
	t.Logf("GEV %.3f %.3f %.3f; 100-y GEV %.2f [%.2f, %.2f] boot [%.2f, %.2f]; GPD u=%.2f 100-y %.2f [%.2f, %.2f]",
		res.GEV.Loc, res.GEV.Scale, res.GEV.Shape, res.GEV.Levels[5].Hm0, res.GEV.Levels[5].Lower, res.GEV.Levels[5].Upper,
		res.GEV.Levels[5].BootLower, res.GEV.Levels[5].BootUpper, res.Threshold, res.GPD.Levels[5].Hm0, res.GPD.Levels[5].Lower, res.GPD.Levels[5].Upper)
}

// nanSafe renders a result with NaNs comparable.
func nanSafe(r Result) string { return strings.ReplaceAll(fmtAny(r), "NaN", "nan") }

func fmtAny(v any) string { return strings.TrimSpace(sprintf("%+v", v)) }

func TestAnalyseFlags(t *testing.T) {
	c, _ := streamKnown(6, 9)
	res := Analyse(c, AnalysisConfig{})
	if res.GEV.Flags&FlagFewYears == 0 || res.GPD.Flags&FlagFewPeaks == 0 {
		t.Errorf("6 years: flags GEV %v GPD %v, want few_years and few_peaks", res.GEV.Flags.Names(), res.GPD.Flags.Names())
	}
	empty := Analyse(NewCollector(CollectorConfig{}), AnalysisConfig{})
	if empty.GEV.Flags&FlagNoFit == 0 || empty.GPD.Flags&FlagNoFit == 0 {
		t.Errorf("empty collector: flags %v / %v, want no_fit", empty.GEV.Flags.Names(), empty.GPD.Flags.Names())
	}
	// A threshold below peaks that the per-year bound dropped is flagged.
	small := NewCollector(CollectorConfig{MaxPeaksPerYear: 2})
	h := 0.0
	r := rand.New(rand.NewPCG(1, 1))
	for y := 0; y < 12; y++ {
		for d := 0; d < 360; d++ {
			small.Add(2000+y, d/30+1, h, 24, 1+3*r.Float64(), 8, 10)
			h += 24
		}
	}
	res = Analyse(small, AnalysisConfig{Threshold: ThresholdHm0, ThresholdValue: 1.5})
	if res.GPD.Flags&FlagPeaksTruncated == 0 {
		t.Errorf("threshold under dropped peaks not flagged: %v", res.GPD.Flags.Names())
	}
	if got := (FlagFewYears | FlagNoConvergence).Names(); len(got) != 2 || got[0] != "few_years" || got[1] != "no_convergence" {
		t.Errorf("flag names %v", got)
	}
}

// A record with a single storm peak must not panic when the threshold is chosen
// by a target number of peaks per year (regression: index out of range).
func TestChooseThresholdOnePeak(t *testing.T) {
	got := POTThreshold([]Maximum{{Hm0: 3.2}}, AnalysisConfig{Threshold: ThresholdPeaksPerYear, TargetPeaksPerYear: 5}, 0.2)
	if got != 3.2 {
		t.Errorf("threshold %v, want the only peak 3.2", got)
	}
}

// TestPOTThresholdRules: the one threshold rule (POTThreshold). The quantile
// rule asks the caller for exactly the quantile it uses and returns it; the
// peaks-per-year rule leaves round(rate x years) peaks above the threshold
// (its definition). The pipeline's threshold column is proven end to end
// against numpy.percentile(hm0, 99) in testdata/e2e/reference.py.
func TestPOTThresholdRules(t *testing.T) {
	var asked []float64
	cfg := AnalysisConfig{Threshold: ThresholdQuantile, Hm0Quantile: func(q float64) float64 { asked = append(asked, q); return 10 * q }}
	if q := cfg.Hm0Quantiles(); len(q) != 1 || q[0] != 0.99 {
		t.Errorf("Hm0Quantiles of the default quantile rule %v, want [0.99]", q)
	}
	if u := POTThreshold(nil, cfg, 10); u != 9.9 || len(asked) != 1 || asked[0] != 0.99 {
		t.Errorf("quantile rule: threshold %v after asking %v, want 9.9 from the 0.99 quantile", u, asked)
	}
	cfg.ThresholdQuantile = 0.95
	if u := POTThreshold(nil, cfg, 10); u != 9.5 {
		t.Errorf("quantile rule with q = 0.95: threshold %v, want 9.5", u)
	}
	cfg.Hm0Quantile = nil
	if u := POTThreshold(nil, cfg, 10); !math.IsNaN(u) {
		t.Errorf("quantile rule without the cell's quantiles: %v, want NaN", u)
	}
	var peaks []Maximum
	for i := 0; i < 40; i++ {
		peaks = append(peaks, Maximum{Hm0: 1 + 0.37*float64((i*7)%40)})
	}
	ppy := AnalysisConfig{Threshold: ThresholdPeaksPerYear, TargetPeaksPerYear: 3}
	if q := ppy.Hm0Quantiles(); q != nil {
		t.Errorf("peaks-per-year rule asks for quantiles %v", q)
	}
	u := POTThreshold(peaks, ppy, 4)
	n := 0
	for _, p := range peaks {
		if p.Hm0 > u {
			n++
		}
	}
	if n != 12 {
		t.Errorf("peaks-per-year rule: %d peaks above %v, want round(3 x 4) = 12", n, u)
	}
	if u := POTThreshold(peaks, AnalysisConfig{Threshold: ThresholdHm0, ThresholdValue: 4.25}, 4); u != 4.25 {
		t.Errorf("fixed threshold %v, want 4.25", u)
	}
}
