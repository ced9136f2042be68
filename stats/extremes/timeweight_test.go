package extremes

import (
	"bytes"
	"math"
	"strings"
	"testing"
)

// Records whose step changes (issue 27). The input is invented and synthetic
// (a deterministic formula, below); the expected figures are not taken from it
// by the code under test but derived by hand from its construction, as each
// check says.
//
// Calendar: a 360-day toy calendar, 720 h a month, 8640 h a year, the record
// starting at 0 h on 1 January of year 2000. Sea states are a function of time
// only, so the 3-hourly and the hourly parts sample the same sea:
//
//	Hm0(t) = 1 + (H_k - 1) max(0, 1 - |t - t_k| / 36),  t_k = 120 + 240 k,
//	H_k = 2 + ((7k) mod 11) / 4  (2 .. 4.5 m),
//
// a background of 1 m and one triangular storm every 240 h (10 days) peaking at
// t_k, a multiple of 3 h, so that both steps hit each peak.
const (
	twYearH   = 8640.0 // hours in a toy year
	twChangeH = 17280.0
	twEndH    = 25920.0
	twStormH  = 240.0
)

func twHm0(t float64) float64 {
	k := math.Floor((t - 120 + twStormH/2) / twStormH) // nearest storm
	tk := 120 + twStormH*k
	hk := 2 + float64((7*int(k))%11)/4
	return 1 + (hk-1)*math.Max(0, 1-math.Abs(t-tk)/36)
}

// twStep is one step of the record: time, duration and values.
type twStep struct {
	year, month int
	hours, w    float64
	hm0         float64
}

// twRecord is two years 3-hourly (0 .. 17277 h), then one year hourly
// (17280 .. 25919 h). Each step's duration follows the duration rule of the
// time axis (the time to the next step; none of the differences is a gap: the
// largest, 3 h, is never above 1.5 times the upper quartile of its
// neighbours, which is 3 h wherever a difference of 3 h occurs): 3 h for
// every 3-hourly step (the last one, 17277 h, too: its next step is 3 h
// later), 1 h for every hourly step and, the last step, 1 h (the difference
// before it). missFrom..missTo (hours, half-open) are missing steps (Hm0 NaN).
func twRecord(missFrom, missTo float64) []twStep {
	var out []twStep
	add := func(t, w float64) {
		v := twHm0(t)
		if t >= missFrom && t < missTo {
			v = math.NaN()
		}
		y := int(t / twYearH)
		m := int(math.Mod(t, twYearH)/720) + 1
		out = append(out, twStep{year: 2000 + y, month: m, hours: t, w: w, hm0: v})
	}
	for t := 0.0; t < twChangeH; t += 3 {
		add(t, 3)
	}
	for t := twChangeH; t < twEndH; t++ {
		add(t, 1)
	}
	return out
}

func twFeed(c *Collector, steps []twStep) {
	for _, s := range steps {
		c.Add(s.year, s.month, s.hours, s.w, s.hm0, 5+2*s.hm0, 6+2.2*s.hm0)
	}
}

// Threshold 1.5 m: every storm peak (H_k >= 2 m) exceeds it, the background
// (1 m) does not.
var twAnalysis = AnalysisConfig{Threshold: ThresholdHm0, ThresholdValue: 1.5, MinYears: 2, MinPeaks: 5}

func TestYearsByCoveredTime(t *testing.T) {
	c := NewCollector(CollectorConfig{})
	twFeed(c, twRecord(math.Inf(1), math.Inf(1)))
	if c.Err() != nil {
		t.Fatal(c.Err())
	}
	// By construction each toy year holds 8640 h = 518400 min of data:
	// 2880 steps x 3 h in 2000 and 2001, 8640 steps x 1 h in 2002.
	ys := c.Years()
	if len(ys) != 3 {
		t.Fatalf("%d years, want 3", len(ys))
	}
	for _, y := range ys {
		if y.Minutes != 518400 || y.ValidMinutes != 518400 {
			t.Errorf("year %d: covered %d min, valid %d min; want 518400 both (8640 h)", y.Year, y.Minutes, y.ValidMinutes)
		}
	}
	// Storms every 240 h over 25920 h: 108 storms, one peak each (the
	// triangles are 72 h wide and 240 h apart, separation 48 h), 36 a year.
	// The first step (1 m, nothing before it) is also a peak but lies under the
	// threshold.
	res := Analyse(c, twAnalysis)
	if res.Years != 3 {
		t.Errorf("%d complete years entered the GEV, want 3 (each year is covered for all its 8640 h)", res.Years)
	}
	if math.Abs(res.RecordYears-3) > 1e-12 {
		t.Errorf("record %.15g years of covered time, want 3 (25920 h / 8640 h)", res.RecordYears)
	}
	if res.GPD.N != 108 {
		t.Errorf("%d exceedances, want 108 (25920 h / 240 h)", res.GPD.N)
	}
	if math.Abs(res.PeaksPerYear-36) > 1e-12 {
		t.Errorf("%.15g peaks a year, want 36 (108 peaks in 3 years)", res.PeaksPerYear)
	}
	if res.GEV.Flags&FlagIncompleteYears != 0 {
		t.Errorf("GEV flagged %v: no year is incomplete", res.GEV.Flags.Names())
	}
	// Annual maxima: H_k is largest (4.5 m) when 7k mod 11 = 10, k = 3, 14,
	// 25, 36, ... (k = 3 + 11 j); the first of each year: k = 3 (840 h),
	// k = 36 (8760 h), k = 80 (19320 h), hit by both steps.
	am := c.AnnualMaxima()
	wantT := []float64{840, 8760, 19320}
	if len(am) != 3 {
		t.Fatalf("%d annual maxima, want 3", len(am))
	}
	for i, m := range am {
		if m.Hm0 != 4.5 || m.Hours != wantT[i] {
			t.Errorf("year %d: maximum %g m at %g h, want 4.5 m at %g h", m.Year, m.Hm0, m.Hours, wantT[i])
		}
	}
}

// A 3-hourly year with its last 1920 h missing (15360 .. 17280 h, from the
// quiet time between two storms) keeps 6720 h of valid time, 0.778 of a full
// year (8640 h): below the 0.8 share it is left out, and the record is
// (8640 + 6720 + 8640) / 8640 = 2.777... years of valid time (arithmetic).
func TestYearsByCoveredTimeMissing(t *testing.T) {
	c := NewCollector(CollectorConfig{})
	twFeed(c, twRecord(15360, twChangeH))
	res := Analyse(c, twAnalysis)
	ys := c.Years()
	if len(ys) != 3 || ys[1].Minutes != 518400 || ys[1].ValidMinutes != 6720*60 {
		t.Fatalf("years %+v: want 2001 covered 518400 min, valid 403200 min (6720 h)", ys)
	}
	if res.Years != 2 {
		t.Errorf("%d years entered the GEV, want 2 (2001 has 6720/8640 = 0.78 of a year)", res.Years)
	}
	if res.GEV.Flags&FlagIncompleteYears == 0 {
		t.Errorf("GEV flags %v: 2001, inside the record, is left out and must be flagged", res.GEV.Flags.Names())
	}
	if math.Abs(res.RecordYears-24000.0/8640) > 1e-12 {
		t.Errorf("record %.15g years, want 24000/8640 = 2.777...", res.RecordYears)
	}
	// Storms t_k = 120 + 240 k whose triangles (t_k -+ 36 h) lie in the
	// missing 15360 .. 17280 h: k = 64 .. 71, 8 of the 108; 100 remain, and
	// 100 / (24000/8640) = 36 a year. (The first valid step after the missing
	// time, 1 m, is a peak too, under the threshold.)
	if res.GPD.N != 100 {
		t.Errorf("%d exceedances, want 100", res.GPD.N)
	}
	if math.Abs(res.PeaksPerYear-36) > 1e-12 {
		t.Errorf("%.15g peaks a year, want 36", res.PeaksPerYear)
	}
}

// Parts of the record split at the change of step (and inside years and
// storms) merge, through their checkpoint encoding, to the bytes of the whole.
func TestMergeAcrossStepChange(t *testing.T) {
	steps := twRecord(15480, 15900) // missing values too
	cfg := CollectorConfig{MaxPeaksPerYear: 20}
	whole := NewCollector(cfg)
	twFeed(whole, steps)
	want, _ := whole.MarshalBinary()
	at := func(h float64) int {
		for i, s := range steps {
			if s.hours >= h {
				return i
			}
		}
		return len(steps)
	}
	cases := [][]float64{
		{twChangeH},                  // at the change 3 h -> 1 h (a year boundary)
		{twChangeH - 3, twChangeH},   // the last 3-hourly step alone
		{9000, twChangeH, 20000},     // inside 2001 (3 h), at the change, inside 2002 (1 h)
		{17270, 17290, 19320, 19330}, // around the change, through the peak of a storm
	}
	for _, cut := range cases {
		idx := []int{0}
		for _, h := range cut {
			idx = append(idx, at(h))
		}
		idx = append(idx, len(steps))
		var acc *Collector
		for k := 0; k+1 < len(idx); k++ {
			p := NewCollector(cfg)
			twFeed(p, steps[idx[k]:idx[k+1]])
			b, _ := p.MarshalBinary()
			q := &Collector{}
			if err := q.UnmarshalBinary(b); err != nil {
				t.Fatal(err)
			}
			if acc == nil {
				acc = q
			} else if err := acc.Merge(q); err != nil {
				t.Fatal(err)
			}
		}
		got, _ := acc.MarshalBinary()
		if !bytes.Equal(got, want) {
			t.Errorf("split at %v h: merged state differs from the whole record's", cut)
		}
	}
}

// A constant-step record gives the same figures whatever its step: covered
// and valid time are the step counts times the step, and every ratio of them
// is the same (the step cancels). streamMaxima's record of 30 years has four
// years of which only 30 days are fed: 26 complete years and
// (26 x 360 + 4 x 30) / 360 = 26 1/3 years of record (arithmetic).
func TestConstantStepScaleFree(t *testing.T) {
	var ref string
	for _, w := range []float64{24, 3, 1, 0.5} {
		res := Analyse(streamMaximaW(w, gumbelDraws(30, 3), 0, 4, 10, 29), AnalysisConfig{})
		// the annual maxima's valid and full-year times scale with the
		// step; their ratio, the coverage, must not
		for i := range res.AnnualMaxima {
			am := &res.AnnualMaxima[i]
			if r := float64(am.ValidMinutes) / float64(am.FullMinutes); math.Abs(r-am.Coverage) > 1e-12 {
				t.Errorf("step %g h, year %d: valid/full %g, coverage %g", w, am.Year, r, am.Coverage)
			}
			am.ValidMinutes, am.FullMinutes = 0, 0
		}
		s := nanSafe(res)
		if ref == "" {
			ref = s
			if res.Years != 26 || math.Abs(res.RecordYears-(26+1.0/3)) > 1e-12 {
				t.Errorf("%d years, record %.15g; want 26 and 26 1/3", res.Years, res.RecordYears)
			}
		} else if s != ref {
			t.Errorf("steps of duration %g h: result differs from that of 24 h", w)
		}
	}
}

func TestStepDurations(t *testing.T) {
	for _, c := range []struct {
		h    float64
		want int64
	}{{3, 180}, {1, 60}, {0.5 / 60, 1}, {0.4 / 60, 0}, {0, 0}, {-1, 0}, {math.NaN(), 0}, {math.Inf(1), 0}, {1 << 20 / 60.0, 1 << 20}, {(1<<20 + 1) / 60.0, 0}} {
		if got := StepMinutes(c.h); got != c.want {
			t.Errorf("StepMinutes(%g h) = %d, want %d", c.h, got, c.want)
		}
	}
	c := NewCollector(CollectorConfig{})
	c.Add(2000, 1, 0, 3, 2, 8, 10)
	c.Add(2000, 1, 3, 0, 2, 8, 10)
	if c.Err() == nil || !strings.Contains(c.Err().Error(), "duration") {
		t.Errorf("a step of duration 0 was accepted (err %v)", c.Err())
	}
	if ys := c.Years(); len(ys) != 1 || ys[0].Minutes != 180 {
		t.Errorf("years %+v, want one of 180 min (the rejected step not counted)", ys)
	}
}

// A version-1 state (steps counted, not time) is refused with a clear error.
func TestCollectorVersion1Refused(t *testing.T) {
	c := NewCollector(CollectorConfig{})
	twFeed(c, twRecord(math.Inf(1), math.Inf(1))[:100])
	b, _ := c.MarshalBinary()
	if b[4] != collectorVersion || b[5] != 0 {
		t.Fatalf("header %v: version not at bytes 4-5", b[:6])
	}
	b[4] = 1
	err := (&Collector{}).UnmarshalBinary(b)
	if err == nil || !strings.Contains(err.Error(), "version 1") || !strings.Contains(err.Error(), "rerun") {
		t.Errorf("version-1 state: err %v, want a refusal naming version 1 and what to do", err)
	}
}
