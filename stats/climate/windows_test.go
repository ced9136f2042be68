package climate

import (
	"math"
	"testing"
)

// referenceWindows applies the definition of a weather window directly to a
// whole record (no streaming state): a window is a maximal spell of
// consecutive accepted steps, each starting where the previous one ended,
// with a valid Hm0 below the limit, lasting at least the duration; it is
// counted in the calendar month of its first step and its time is credited
// to the months of its steps.
func referenceWindows(steps []Step, limit, durH float64) (count, minutes [12]float64) {
	type spell struct {
		startCM int
		cms     []int
		mins    []float64
		total   float64
	}
	var cur *spell
	lastEnd := math.NaN()
	flush := func() {
		if cur != nil && cur.total >= durH*60-1e-9 {
			count[cur.startCM]++
			for i, cm := range cur.cms {
				minutes[cm] += cur.mins[i]
			}
		}
		cur = nil
	}
	for _, st := range steps {
		if st.Month < 1 || st.Month > 12 || !(st.DtHours > 0) {
			flush()
			lastEnd = math.NaN()
			continue
		}
		start := math.Round(st.Hours * 60)
		w := math.Round(st.DtHours * 60)
		if start != lastEnd {
			flush()
		}
		lastEnd = start + w
		if st.Hm0 >= 0 && st.Hm0 < limit {
			if cur == nil {
				cur = &spell{startCM: st.Month - 1}
			}
			cur.cms = append(cur.cms, st.Month-1)
			cur.mins = append(cur.mins, w)
			cur.total += w
		} else {
			flush()
		}
	}
	flush()
	return
}

// TestWindowsAgainstDefinition compares the streaming tallies with the
// definition applied to the whole record.
func TestWindowsAgainstDefinition(t *testing.T) {
	cfg := mergeConfig(t)
	for seed := uint64(0); seed < 6; seed++ {
		steps := messyRecord(seed)
		rows := feed(cfg, steps).Windows()
		checked := 0
		for _, r := range rows {
			cnt, mins := referenceWindows(steps, r.LimitM, r.DurationH)
			if float64(r.Windows) != cnt[r.Month-1] || r.WindowHours*60 != mins[r.Month-1] {
				t.Fatalf("seed %d, limit %g m, %g h, month %d: %d windows %g h; definition gives %g windows %g h",
					seed, r.LimitM, r.DurationH, r.Month, r.Windows, r.WindowHours, cnt[r.Month-1], mins[r.Month-1]/60)
			}
			if cnt[r.Month-1] > 0 {
				checked++
			}
		}
		if checked == 0 {
			t.Fatalf("seed %d: no windows at all, the test checks nothing", seed)
		}
	}
}

// TestWindowsWorkedCase: a hand-made 360_day record, hourly, Hm0 = 1 m
// (calm for the 1.5 m limit) during hours 700..729 (30 h, from day 29 of
// month 1 into month 2) and hours 800..805 (6 h, month 2), 3 m otherwise.
// With a 1.5 m limit: a 24 h window count 1 in month 1 (where it starts),
// time 20 h in month 1 (hours 700..719) and 10 h in month 2; a 6 h window
// count 1 in month 1 and 1 in month 2, time 20 h and 10 + 6 = 16 h; a 48 h
// window none. Month 1 has 720 valid hours: fraction 20/720.
func TestWindowsWorkedCase(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Calendar = "360_day"
	validated(t, cfg)
	s := NewCellState(cfg)
	for i := 0; i < 1440; i++ {
		h := 3.0
		if (i >= 700 && i < 730) || (i >= 800 && i < 806) {
			h = 1
		}
		s.Add(&Step{Year: 2000, Month: i/720 + 1, Hours: float64(i), DtHours: 1, Hm0: h, Te: 7, Tp: 8, J: 1e4, DirDeg: 0})
	}
	want := map[[3]float64][2]float64{ // limit, dur, month -> windows, hours
		{1.5, 24, 1}: {1, 20}, {1.5, 24, 2}: {0, 10},
		{1.5, 6, 1}: {1, 20}, {1.5, 6, 2}: {1, 16},
		{1.5, 48, 1}: {0, 0}, {1.5, 48, 2}: {0, 0},
	}
	for _, r := range s.Windows() {
		w, ok := want[[3]float64{r.LimitM, r.DurationH, float64(r.Month)}]
		if !ok {
			continue
		}
		if float64(r.Windows) != w[0] || r.WindowHours != w[1] {
			t.Errorf("limit %g m, %g h, month %d: %d windows, %g h; want %g, %g h", r.LimitM, r.DurationH, r.Month, r.Windows, r.WindowHours, w[0], w[1])
		}
		if r.Month == 1 && r.LimitM == 1.5 && r.DurationH == 6 {
			within(t, "fraction in 6 h windows, month 1", r.FractionInWindows, 20.0/720, 1e-15)
			within(t, "windows per month, month 1", r.WindowsPerMonth, 1, 1e-15)
		}
		delete(want, [3]float64{r.LimitM, r.DurationH, float64(r.Month)})
	}
	if len(want) != 0 {
		t.Errorf("rows missing: %v", want)
	}
}
