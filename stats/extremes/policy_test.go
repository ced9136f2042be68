package extremes

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// streamMaxima feeds a Collector one year per given annual maximum (360-day
// toy calendar, daily steps): small background seas, nine storms a year of
// 3 m plus an exponential excess of 1 m mean (kept below the year's maximum),
// and the maximum itself on day 200. skip
// lists years (indices) of which only the first 30 days are fed. Invented data:
// these fixtures check the policy's logic, not a value.
func streamMaxima(maxima []float64, skip ...int) *Collector {
	return streamMaximaW(24, maxima, skip...)
}

// streamMaximaW is streamMaxima with each daily step given the duration w
// hours (24 for a true daily record).
func streamMaximaW(w float64, maxima []float64, skip ...int) *Collector {
	c := NewCollector(CollectorConfig{})
	r := rand.New(rand.NewPCG(99, 1))
	h := 0.0
	for y, am := range maxima {
		for d := 0; d < 360; d++ {
			if slices.Contains(skip, y) && d >= 30 {
				h += 24
				continue
			}
			v := 0.5 + 0.001*float64(d%7)
			if d%36 == 18 && d != 198 {
				v = math.Min(3+r.ExpFloat64(), am-0.01)
			}
			if d == 200 {
				v = am
			}
			c.Add(2000+y, d/30+1, h, w, v, 4.5*math.Sqrt(v), 5.2*math.Sqrt(v))
			h += 24
		}
	}
	return c
}

func gumbelDraws(n int, seed uint64) []float64 {
	g := GEV{Loc: 6, Scale: 1, Shape: 0}
	r := rand.New(rand.NewPCG(seed, 7))
	x := make([]float64, n)
	for i := range x {
		x[i] = g.Quantile(openUnit(r))
	}
	return x
}

// Every reason of the publication policy, alone, withholds the level and
// names itself (one flag per reason).
func TestPublicationEachReason(t *testing.T) {
	cfg := AnalysisConfig{}
	good := FitQuality{Fitted: true, Converged: true, InfoOK: true, Shape: 0.1, N: 30, Record: 30}
	goodPOT := FitQuality{Fitted: true, Converged: true, InfoOK: true, Shape: 0.1, N: 90, Record: 30, PerPeaks: true}
	if f := Publication(good, 100, cfg); f != 0 {
		t.Fatalf("a sound GEV fit is withheld: %v", f.Names())
	}
	if f := Publication(goodPOT, 100, cfg); f != 0 {
		t.Fatalf("a sound GPD fit is withheld: %v", f.Names())
	}
	type c struct {
		name string
		q    FitQuality
		T    float64
		want Flag
	}
	mod := func(q FitQuality, f func(*FitQuality)) FitQuality { f(&q); return q }
	cases := []c{
		{"not fitted", mod(good, func(q *FitQuality) { q.Fitted = false }), 100, FlagNoFit},
		{"no convergence", mod(good, func(q *FitQuality) { q.Converged = false }), 100, FlagNoConvergence},
		{"singular information", mod(good, func(q *FitQuality) { q.InfoOK = false }), 100, FlagSingularInformation},
		{"shape above range", mod(good, func(q *FitQuality) { q.Shape = 0.51 }), 100, FlagShapeImplausible},
		{"shape below range", mod(good, func(q *FitQuality) { q.Shape = -0.51 }), 100, FlagShapeImplausible},
		{"shape NaN", mod(good, func(q *FitQuality) { q.Shape = math.NaN() }), 100, FlagShapeImplausible},
		{"extrapolation", good, 121, FlagExtrapolation},
		{"few years", mod(good, func(q *FitQuality) { q.N = 9 }), 30, FlagFewYears},
		{"GPD no convergence", mod(goodPOT, func(q *FitQuality) { q.Converged = false }), 100, FlagNoConvergence},
		{"GPD singular information", mod(goodPOT, func(q *FitQuality) { q.InfoOK = false }), 100, FlagSingularInformation},
		{"GPD shape", mod(goodPOT, func(q *FitQuality) { q.Shape = 0.6 }), 100, FlagShapeImplausible},
		{"GPD extrapolation", mod(goodPOT, func(q *FitQuality) { q.Record = 2 }), 100, FlagExtrapolation},
		{"GPD few peaks", mod(goodPOT, func(q *FitQuality) { q.N = 19 }), 100, FlagFewPeaks},
	}
	for _, k := range cases {
		got := Publication(k.q, k.T, cfg)
		if got != k.want || got&Withheld == 0 {
			t.Errorf("%s: flags %v, want exactly %v (and withheld)", k.name, got.Names(), k.want.Names())
		}
	}
	// The limits are the configured ones.
	wide := AnalysisConfig{ShapeMin: -1, ShapeMax: 1, MaxExtrapolation: 10, MinYears: 5, MinPeaks: 5}
	if f := Publication(mod(good, func(q *FitQuality) { q.Shape = 0.8; q.N = 6; q.Record = 6 }), 60, wide); f != 0 {
		t.Errorf("configured limits ignored: %v", f.Names())
	}
}

// Fixtures through Analyse reaching each reason: the level is null, its flag
// set, and the parameters are kept where the fit converged.
func TestAnalyseWithholds(t *testing.T) {
	ten := AnalysisConfig{ReturnPeriods: []float64{10, 20}}
	// No convergence: twelve identical annual maxima (and no spread at all).
	same := make([]float64, 12)
	for i := range same {
		same[i] = 4
	}
	r := Analyse(streamMaxima(same), ten)
	assertWithheld(t, "identical maxima", r.GEV, FlagNoConvergence)
	if !math.IsNaN(r.GEV.Loc) {
		t.Errorf("non-converged GEV reports Loc %v", r.GEV.Loc)
	}
	// Shape out of range: a heavy-tailed set of maxima (converged, regular, shape about 1.1).
	heavy := []float64{1, 1.1, 1.2, 1.3, 1.5, 1.7, 2, 2.5, 3, 4, 6, 12}
	r = Analyse(streamMaxima(heavy), ten)
	assertWithheld(t, "heavy tail", r.GEV, FlagShapeImplausible)
	if !(r.GEV.Shape > 0.5) || math.IsNaN(r.GEV.Loc) || r.GEV.Flags&(FlagNoConvergence|FlagSingularInformation) != 0 {
		t.Errorf("heavy tail: shape %v loc %v flags %v; want a converged fit with its parameters", r.GEV.Shape, r.GEV.Loc, r.GEV.Flags.Names())
	}
	// Too few years (and too few peaks: 18 < 20) with a sound fit otherwise.
	r = Analyse(streamMaxima(gumbelDraws(6, 1)), AnalysisConfig{ReturnPeriods: []float64{5, 10}})
	assertWithheld(t, "6 years", r.GEV, FlagFewYears)
	assertWithheld(t, "6 years POT", r.GPD, FlagFewPeaks)
	// Extrapolation: 15 years publish 10- and 50-year levels, not 100 (> 4 x 15).
	r = Analyse(streamMaxima(gumbelDraws(15, 2)), AnalysisConfig{ReturnPeriods: []float64{10, 50, 100}})
	for _, m := range []MethodResult{r.GEV, r.GPD} {
		if math.IsNaN(m.Levels[0].Hm0) || math.IsNaN(m.Levels[1].Hm0) {
			t.Errorf("%s: 10/50-year levels withheld from 15 years: %v", m.Method, m.Flags.Names())
		}
		if !math.IsNaN(m.Levels[2].Hm0) || m.Levels[2].Flags != FlagExtrapolation || m.Flags&FlagExtrapolation == 0 {
			t.Errorf("%s: 100-year level %v from 15 years, flags %v", m.Method, m.Levels[2].Hm0, m.Levels[2].Flags.Names())
		}
	}
	// Singular information is reached in Publication only (TestPublicationEachReason):
	// no natural record of converged fit with a singular information was found.
}

func assertWithheld(t *testing.T, what string, m MethodResult, want Flag) {
	t.Helper()
	for _, l := range m.Levels {
		if !math.IsNaN(l.Hm0) || !math.IsNaN(l.Lower) || !math.IsNaN(l.ProfLower) || !math.IsNaN(l.BootLower) {
			t.Errorf("%s: %s T=%g published %v [%v, %v]", what, m.Method, l.PeriodYears, l.Hm0, l.ProfLower, l.ProfUpper)
		}
		if l.Flags&want == 0 {
			t.Errorf("%s: %s T=%g flags %v, want %v", what, m.Method, l.PeriodYears, l.Flags.Names(), want.Names())
		}
	}
	if m.Flags&want == 0 {
		t.Errorf("%s: %s flags %v, want %v", what, m.Method, m.Flags.Names(), want.Names())
	}
}

// Physical limits and record checks: depth-limited levels are flagged (and
// kept), GEV levels for T at least the record length below the largest
// analysed annual maximum are flagged, incomplete_years only for a year left
// out inside the record, and intervals never fall below zero or the threshold.
func TestLimitsAndRecordFlags(t *testing.T) {
	am := gumbelDraws(30, 3)
	r := Analyse(streamMaxima(am), AnalysisConfig{ReturnPeriods: []float64{10, 100}, DepthM: 15})
	near(t, "depth limit", r.DepthLimit, 9, 1e-12)
	for _, m := range []MethodResult{r.GEV, r.GPD} {
		for _, l := range m.Levels {
			over := l.Hm0 > 9 || l.ProfUpper > 9
			if math.IsNaN(l.Hm0) || over != (l.Flags&FlagDepthLimited != 0) {
				t.Errorf("%s T=%g: level %.2f [%.2f, %.2f] flags %v with limit 9 m", m.Method, l.PeriodYears, l.Hm0, l.ProfLower, l.ProfUpper, l.Flags.Names())
			}
			if l.ProfLower < 0 || l.Lower < 0 || !(l.ProfLower < l.Hm0 && l.Hm0 < l.ProfUpper) {
				t.Errorf("%s T=%g: profile [%v, %v] around %v", m.Method, l.PeriodYears, l.ProfLower, l.ProfUpper, l.Hm0)
			}
			if m.Method == "gpd_storm_peaks" && (l.ProfLower <= r.Threshold || l.Lower < r.Threshold) {
				t.Errorf("GPD T=%g: interval [%v | %v] below the threshold %v", l.PeriodYears, l.ProfLower, l.Lower, r.Threshold)
			}
		}
	}
	if r.GPD.Levels[1].Flags&FlagDepthLimited == 0 {
		t.Errorf("the 100-year POT level %.2f m at 15 m depth is not flagged", r.GPD.Levels[1].Hm0)
	}
	if r.GEV.Flags&FlagIncompleteYears != 0 {
		t.Error("complete record flagged incomplete_years")
	}
	deep := Analyse(streamMaxima(am), AnalysisConfig{ReturnPeriods: []float64{10, 100}})
	if deep.GEV.Flags&FlagDepthLimited != 0 || !math.IsNaN(deep.DepthLimit) {
		t.Error("no depth, but depth_limited")
	}
	// Partial first and last years are normal; a gap year inside is flagged.
	if f := Analyse(streamMaxima(am, 0, 29), AnalysisConfig{}).GEV.Flags; f&FlagIncompleteYears != 0 {
		t.Errorf("partial first/last years flagged: %v", f.Names())
	}
	if f := Analyse(streamMaxima(am, 0, 12), AnalysisConfig{}).GEV.Flags; f&FlagIncompleteYears == 0 {
		t.Errorf("a year left out inside the record not flagged: %v", f.Names())
	}
	// A record whose largest maximum stands far above the rest: the 30-year
	// level lies below it and is flagged; the 10-year level (T < record) is not.
	out := append([]float64(nil), am...)
	out[17] = 13
	r = Analyse(streamMaxima(out), AnalysisConfig{ReturnPeriods: []float64{10, 30}, ShapeMax: 1})
	if l := r.GEV.Levels[1]; math.IsNaN(l.Hm0) || l.Hm0 >= 13 || l.Flags&FlagBelowRecordMax == 0 {
		t.Errorf("30-year level %.2f below the record maximum 13 m: flags %v", l.Hm0, l.Flags.Names())
	}
	if l := r.GEV.Levels[0]; l.Flags&FlagBelowRecordMax != 0 {
		t.Errorf("10-year level of a 30-year record flagged below_record_maximum")
	}
	near(t, "largest analysed annual maximum", r.MaxAnnual, 13, 0)
}

// With 20 exceedances the delta-method interval of a long return period
// reaches below the threshold; Analyse truncates it there (the profile
// interval never goes below it by construction). Data: the first 20 rainfall
// exceedances of 30 mm of Coles (2001), section 4.4.1, fed as storm peaks 5
// days apart over 20/3.16 years, T = 60 years with max_extrapolation 10 (a
// published sample, used for the logic only).
func TestDeltaIntervalTruncatedAtThreshold(t *testing.T) {
	x := readColumn(t, "rain_exceedances.csv", 0)[:20]
	c := NewCollector(CollectorConfig{})
	lambda := 152 / (17531.0 / 365)
	years := 20 / lambda
	steps := int(years * 360)
	h := 0.0
	for i := 0; i < steps; i++ {
		v := 1.0
		if i%18 == 9 && i/18 < len(x) {
			v = x[i/18]
		}
		c.Add(2000+i/360, (i%360)/30+1, h, 24, v, 8, 10)
		h += 24
	}
	T := 60.0
	r := Analyse(c, AnalysisConfig{Threshold: ThresholdHm0, ThresholdValue: 30, ReturnPeriods: []float64{T}, RecordYears: years, MaxExtrapolation: 10})
	if r.GPD.N != 20 {
		t.Fatalf("%d exceedances, want 20", r.GPD.N)
	}
	_, rawLo, _ := r.GPDFit.ReturnLevel(T)
	l := r.GPD.Levels[0]
	if !(rawLo < 30) {
		t.Fatalf("fixture does not reach the case: raw delta lower %.2f", rawLo)
	}
	if math.IsNaN(l.Hm0) || l.Lower != 30 || !(l.ProfLower > 30) || !(l.Upper > l.Hm0) {
		t.Errorf("T=%g: level %.2f, delta [%.2f, %.2f] (raw lower %.2f), profile [%.2f, %.2f]", T, l.Hm0, l.Lower, l.Upper, rawLo, l.ProfLower, l.ProfUpper)
	}
	// The profile upper end (about 323 mm without a limit) lies beyond 3 times
	// the record's largest value: reported open, null and flagged.
	xmax := 0.0
	for _, v := range x {
		xmax = math.Max(xmax, v)
	}
	_, rawHi := r.GPDFit.ProfileGPD(T, x, 0)
	if !(rawHi > PlausibleFactor*xmax) || !math.IsNaN(l.ProfUpper) || l.Flags&FlagOpenInterval == 0 {
		t.Errorf("profile upper %v (unlimited %.1f, 3 x max %.1f), flags %v", l.ProfUpper, rawHi, PlausibleFactor*xmax, l.Flags.Names())
	}
	t.Logf("20 exceedances, T=%g: level %.2f, delta [%.2f (raw %.2f), %.2f], profile [%.2f, open (%.2f unlimited)], flags %v", T, l.Hm0, l.Lower, rawLo, l.Upper, l.ProfLower, rawHi, l.Flags.Names())
}

// TestBootstrapIntervalBounds: the bootstrap interval of a published level
// passes the same common-sense bounds as its profile interval. Ten annual
// maxima drawn from a heavy-tailed GEV (Shape 0.3) are fitted with a shape
// inside the policy's range, so the 40-year level (4 x the record) is
// published; many resamples of ten then fit shapes far above 0.5 (they are
// kept: the bootstrap replicates the unrestricted ML estimator) and the
// 97.5% point of their 40-year levels lies beyond PlausibleFactor x the
// record's largest Hm0: the upper end is reported open (NaN with
// FlagOpenInterval), never as an absurd height, and the lower end is not
// below zero.
func TestBootstrapIntervalBounds(t *testing.T) {
	g := GEV{Loc: 3, Scale: 0.8, Shape: 0.3}
	var found bool
	for seed := uint64(1); seed < 400 && !found; seed++ {
		r := rand.New(rand.NewPCG(seed, 3))
		am := make([]float64, 10)
		for i := range am {
			am[i] = math.Max(g.Quantile(openUnit(r)), 3.3)
		}
		c := streamMaxima(am)
		cfg := AnalysisConfig{ReturnPeriods: []float64{40}, Bootstrap: Bootstrap{N: 200, Seed: 5}}
		res := Analyse(c, cfg)
		lv := res.GEV.Levels[0]
		if math.IsNaN(lv.Hm0) {
			continue // withheld (shape outside the range): no interval at all
		}
		if !(lv.BootLower >= 0) {
			t.Fatalf("seed %d: bootstrap lower end %v below zero", seed, lv.BootLower)
		}
		if math.IsNaN(lv.BootUpper) {
			if lv.Flags&FlagOpenInterval == 0 {
				t.Fatalf("seed %d: bootstrap upper end null without FlagOpenInterval (flags %v)", seed, lv.Flags.Names())
			}
			found = true
			continue
		}
		if lv.BootUpper > PlausibleFactor*res.MaxAnnual {
			t.Fatalf("seed %d: bootstrap upper end %.1f m published above %g x the record maximum %.2f m", seed, lv.BootUpper, float64(PlausibleFactor), res.MaxAnnual)
		}
	}
	if !found {
		t.Fatal("no sample gave an open bootstrap upper end: the test does not exercise the bound")
	}
}
