package extremes

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"
)

// synthSeries makes an invented, synthetic hourly-ish Hm0/Te/Tp record for
// property tests (not a reference: the checks below compare the streaming code
// with a direct evaluation of the peak definition and with itself).
func synthSeries(seed uint64, n int) (hours, hm0, te, tp []float64, year, month []int) {
	r := rand.New(rand.NewPCG(seed, 7))
	h := 0.0
	level := 1.5
	for i := 0; i < n; i++ {
		h += 1 + float64(r.IntN(3)) // irregular steps of 1-3 h
		level = 0.97*level + 0.03*1.5 + 0.25*r.NormFloat64()*0.5
		v := math.Abs(level) + 0.1
		v = math.Round(v*10) / 10 // coarse values make ties common
		if r.IntN(50) == 0 {
			v = math.NaN()
		}
		// 360-day toy calendar: 720 h per month.
		mon := int(h/720) % 12
		yr := 2000 + int(h/(720*12))
		hours = append(hours, h)
		hm0 = append(hm0, v)
		te = append(te, 5+2*v)
		tp = append(tp, 6+2.2*v)
		year = append(year, yr)
		month = append(month, mon+1)
	}
	return
}

// durations gives each step of a record without gaps its duration in hours:
// the time to the next step, and for the last step the time since the one
// before (the duration rule of the time axis when no difference is a gap).
func durations(hours []float64) []float64 {
	w := make([]float64, len(hours))
	for i := range hours {
		switch {
		case i+1 < len(hours):
			w[i] = hours[i+1] - hours[i]
		case i > 0:
			w[i] = hours[i] - hours[i-1]
		default:
			w[i] = 1
		}
	}
	return w
}

// bruteForcePeaks evaluates the storm-peak definition of Collector directly.
func bruteForcePeaks(hours, hm0 []float64, sep, floor float64) []float64 {
	var out []float64
	for i := range hours {
		if math.IsNaN(hm0[i]) || hm0[i] < floor {
			continue
		}
		ok := true
		for j := range hours {
			if j == i || math.IsNaN(hm0[j]) {
				continue
			}
			d := hours[j] - hours[i]
			if d < 0 && -d < sep && hm0[j] >= hm0[i] {
				ok = false
			}
			if d > 0 && d < sep && hm0[j] > hm0[i] {
				ok = false
			}
		}
		if ok {
			out = append(out, hours[i])
		}
	}
	return out
}

func TestPeaksMatchDefinition(t *testing.T) {
	hours, hm0, te, tp, yr, mo := synthSeries(1, 3000)
	w := durations(hours)
	cfg := CollectorConfig{SeparationHours: 48, MaxPeaksPerYear: 1000, PeakFloor: 1.0}
	c := NewCollector(cfg)
	for i := range hours {
		c.Add(yr[i], mo[i], hours[i], w[i], hm0[i], te[i], tp[i])
	}
	want := bruteForcePeaks(hours, hm0, 48, 1.0)
	got := c.Peaks()
	if len(got) != len(want) || len(want) < 10 {
		t.Fatalf("got %d peaks, definition gives %d", len(got), len(want))
	}
	for i := range want {
		if got[i].Hours != want[i] {
			t.Fatalf("peak %d at %g h, definition gives %g h", i, got[i].Hours, want[i])
		}
		if i > 0 && got[i].Hours-got[i-1].Hours < 48 {
			t.Fatalf("peaks %d and %d closer than the separation", i-1, i)
		}
	}
}

func TestAnnualMaximaAndYearStart(t *testing.T) {
	hours, hm0, te, tp, yr, mo := synthSeries(2, 20000)
	w := durations(hours)
	for _, start := range []int{1, 7} {
		c := NewCollector(CollectorConfig{YearStartMonth: start})
		for i := range hours {
			c.Add(yr[i], mo[i], hours[i], w[i], hm0[i], te[i], tp[i])
		}
		want := map[int]float64{}
		for i := range hours {
			y := yr[i]
			if mo[i] < start {
				y--
			}
			if v, ok := want[y]; !math.IsNaN(hm0[i]) && (!ok || hm0[i] > v) {
				want[y] = hm0[i]
			}
		}
		am := c.AnnualMaxima()
		if len(am) != len(want) {
			t.Fatalf("start %d: %d maxima, want %d", start, len(am), len(want))
		}
		for _, m := range am {
			if m.Hm0 != want[m.Year] || m.Te != 5+2*m.Hm0 {
				t.Errorf("start %d year %d: max %g (Te %g), want %g", start, m.Year, m.Hm0, m.Te, want[m.Year])
			}
		}
	}
}

// TestMergeExact splits records at many points (including inside storms and
// inside the first separation window) and requires the merged state to be byte
// for byte the state of the whole record.
func TestMergeExact(t *testing.T) {
	for seed := uint64(0); seed < 6; seed++ {
		hours, hm0, te, tp, yr, mo := synthSeries(seed+10, 4000)
		w := durations(hours)
		cfg := CollectorConfig{SeparationHours: 48, MaxPeaksPerYear: 3, YearStartMonth: 4}
		whole := NewCollector(cfg)
		for i := range hours {
			whole.Add(yr[i], mo[i], hours[i], w[i], hm0[i], te[i], tp[i])
		}
		wantB, _ := whole.MarshalBinary()
		r := rand.New(rand.NewPCG(seed, 99))
		for trial := 0; trial < 30; trial++ {
			// 1-5 cut points, some very close together (parts shorter than sep).
			cuts := []int{0}
			for k := 0; k < 1+r.IntN(5); k++ {
				cuts = append(cuts, r.IntN(len(hours)))
			}
			if trial%3 == 0 {
				cuts = append(cuts, cuts[1]+1+r.IntN(20))
			}
			sortInts(cuts)
			for k := range cuts {
				cuts[k] = min(cuts[k], len(hours))
			}
			cuts = append(cuts, len(hours))
			var acc *Collector
			for k := 0; k+1 < len(cuts); k++ {
				p := NewCollector(cfg)
				for i := cuts[k]; i < cuts[k+1]; i++ {
					p.Add(yr[i], mo[i], hours[i], w[i], hm0[i], te[i], tp[i])
				}
				// Round-trip each part through its checkpoint encoding.
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
			gotB, _ := acc.MarshalBinary()
			if !bytes.Equal(gotB, wantB) {
				t.Fatalf("seed %d cuts %v: merged state differs from whole record (peaks %d vs %d)", seed, cuts, len(acc.Peaks()), len(whole.Peaks()))
			}
		}
	}
}

func sortInts(a []int) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j] < a[j-1]; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

func TestCollectorBoundedAndErrors(t *testing.T) {
	hours, hm0, te, tp, yr, mo := synthSeries(3, 30000)
	w := durations(hours)
	c := NewCollector(CollectorConfig{MaxPeaksPerYear: 5})
	for i := range hours {
		c.Add(yr[i], mo[i], hours[i], w[i], hm0[i], te[i], tp[i])
	}
	perYear := map[int]int{}
	for _, p := range c.Peaks() {
		perYear[p.Year]++
	}
	for y, n := range perYear {
		if n > 5 {
			t.Errorf("year %d keeps %d peaks, bound is 5", y, n)
		}
	}
	if len(c.window) > 48 || len(c.head) > 48 {
		t.Errorf("window %d / head %d exceed the steps in one separation", len(c.window), len(c.head))
	}
	c.Add(2000, 1, 1, 1, 2, 3, 4)
	if c.Err() == nil {
		t.Error("out-of-order step not reported")
	}
	if err := c.Merge(NewCollector(CollectorConfig{MaxPeaksPerYear: 6})); err != nil {
		t.Error("merging an empty collector must be a no-op")
	}
	d := NewCollector(CollectorConfig{MaxPeaksPerYear: 6})
	d.Add(2100, 1, 1e9, 1, 1, 1, 1)
	if err := c.Merge(d); err == nil {
		t.Error("merging different configurations must fail")
	}
	if err := (&Collector{}).UnmarshalBinary([]byte("junk")); err == nil {
		t.Error("bad checkpoint accepted")
	}
}
