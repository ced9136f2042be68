package ingest

import (
	"testing"
)

// hoursAxis builds stamps from hour offsets.
func hoursAxis(h ...float64) []Stamp {
	out := make([]Stamp, len(h))
	for i, x := range h {
		out[i] = Stamp(x * 3600)
	}
	return out
}

// run appends n steps of dt hours after the last of ts (or from 0).
func run(ts []float64, n int, dt float64) []float64 {
	t := 0.0
	if len(ts) > 0 {
		t = ts[len(ts)-1] + dt
	}
	for k := 0; k < n; k++ {
		ts = append(ts, t)
		t += dt
	}
	return ts
}

// TestStepDurations checks the duration rule (README "Time steps, durations
// and gaps"; the rule is ours, the expected values follow from it by hand).
func TestStepDurations(t *testing.T) {
	type want struct {
		dur  map[int]float64 // step -> hours (steps not listed: as every)
		gaps map[int]bool
	}
	cases := []struct {
		name  string
		ts    []float64
		every float64
		w     want
	}{
		{"constant 3 h", run(nil, 40, 3), 3, want{}},
		// one step missing from a regular hourly record: a gap of 1 h
		{"hourly, one missing", append(run(nil, 30, 1), run([]float64{30}, 29, 1)[1:]...), 1, want{gaps: map[int]bool{29: true}}},
		// a 2-day hole in an hourly record: the step before it stands for 1 h
		{"hourly, 2-day hole", append(run(nil, 30, 1), run([]float64{29 + 48}, 30, 1)[1:]...), 1, want{gaps: map[int]bool{29: true}}},
		// 3-hourly then hourly: each side its own step
		{"3 h then 1 h", append(run(nil, 30, 3), run([]float64{90 - 1}, 30, 1)[1:]...), 0, want{dur: func() map[int]float64 {
			m := map[int]float64{}
			for i := 0; i < 30; i++ {
				m[i] = 3
			}
			for i := 30; i < 60; i++ {
				m[i] = 1
			}
			return m
		}()}},
		// 1.5 h and 3 h interleaved: irregular, no gaps
		{"interleaved", func() []float64 {
			var ts []float64
			t := 0.0
			for i := 0; i < 40; i++ {
				ts = append(ts, t)
				t += []float64{1.5, 3}[i%2]
			}
			return ts
		}(), 0, want{dur: func() map[int]float64 {
			m := map[int]float64{}
			for i := 0; i < 39; i++ {
				m[i] = []float64{1.5, 3}[i%2]
			}
			m[39] = 1.5 // the last step: the difference before it (d_38 = 1.5 h)
			return m
		}()}},
	}
	for _, c := range cases {
		ts := hoursAxis(c.ts...)
		dur, gap := stepDurations(ts)
		for i := range ts {
			wantD := c.every
			if d, ok := c.w.dur[i]; ok {
				wantD = d
			}
			if got := float64(dur[i]) / 3600; got != wantD {
				t.Errorf("%s: step %d (%g h) stands for %g h, want %g", c.name, i, c.ts[i], got, wantD)
			}
			if gap[i] != c.w.gaps[i] {
				t.Errorf("%s: step %d: gap after = %v, want %v", c.name, i, gap[i], c.w.gaps[i])
			}
		}
	}
}

// TestSegments checks the segment grouping (README: runs of >= 3 steps of
// one duration; shorter runs together irregular).
func TestSegments(t *testing.T) {
	ts := append(run(nil, 20, 3), run([]float64{60 - 1}, 20, 1)[1:]...) // 3-hourly, then hourly
	// then 1.5/3 h interleaved
	x := ts[len(ts)-1]
	for i := 0; i < 10; i++ {
		x += []float64{1.5, 3}[i%2]
		ts = append(ts, x)
	}
	c := &Catalog{Calendar: "standard", times: hoursAxis(ts...)}
	c.dur, c.gapAfter = stepDurations(c.times)
	segs := c.segments()
	// the last hourly step stands for the 1.5 h to the next step: it opens
	// the irregular segment
	if len(segs) != 3 {
		t.Fatalf("segments %+v, want 3", segs)
	}
	if segs[0].StepHours != 3 || segs[0].Steps != 20 || segs[1].StepHours != 1 || segs[1].Steps != 19 {
		t.Errorf("segments %+v: want 20 steps every 3 h, then 19 every 1 h", segs[:2])
	}
	if segs[2].StepHours != 0 || segs[2].MinStepHours != 1.5 || segs[2].MaxStepHours != 3 || segs[2].Steps != 11 {
		t.Errorf("segment %+v: want irregular, 1.5 to 3 h, 11 steps", segs[2])
	}
	if segs[0].Hours != 60 || segs[1].Hours != 19 {
		t.Errorf("segment hours %g, %g; want 60, 19", segs[0].Hours, segs[1].Hours)
	}
}
