package climate

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"
)

// messyRecord is an invented record with everything that makes merging hard:
// missing values, rejected steps, time gaps, a change of step length, long
// calm spells crossing month ends, and an invalid (negative) value.
func messyRecord(seed uint64) []Step {
	rng := rand.New(rand.NewPCG(seed, 99))
	var steps []Step
	t := 0.0
	h := 1.5
	dt := 1.0
	for len(steps) < 6000 {
		day := int(t / 24)
		st := Step{Year: 1990 + day/360, Month: (day/30)%12 + 1, Hours: t, DtHours: dt}
		// slow random walk around the window limits, with calm spells
		h += 0.08 * rng.NormFloat64()
		h = math.Max(0.3, math.Min(4.5, h))
		st.Hm0 = h
		st.Te = 4 + 2*math.Sqrt(h) + 0.2*rng.NormFloat64()
		st.Tp = st.Te * 1.2
		st.J = 490.6 * h * h * st.Te
		st.DirDeg = rng.Float64() * 360
		switch k := rng.IntN(400); {
		case k == 0:
			st.Hm0, st.J = math.NaN(), math.NaN()
		case k == 1:
			st.Month = 13 // rejected
		case k == 2:
			st.Te = -1 // invalid
		case k == 3:
			t += 7 // gap
		case k == 4:
			dt = 3 - dt + 1 // switch 1 h <-> 3 h
		}
		steps = append(steps, st)
		t += dt
	}
	return steps
}

func feed(cfg *Config, steps []Step) *CellState {
	s := NewCellState(cfg)
	for i := range steps {
		s.Add(&steps[i])
	}
	return s
}

func mustBytes(t *testing.T, s *CellState) []byte {
	t.Helper()
	b, err := s.MarshalBinary()
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func mergeConfig(t testing.TB) *Config {
	cfg := DefaultConfig()
	cfg.Calendar = "360_day"
	cfg.WindowDurationsH = []float64{3, 6, 12, 24, 48, 240}
	cfg.Devices = []*Device{testDevice(BinLookup, "bin"), testDevice(Bilinear, "bilin")}
	return validated(t, cfg)
}

// TestMergeEqualsWhole is the property test: for random splits into up to
// six parts, merging the parts' states in order gives exactly (same bytes)
// the state of the whole record, for left-to-right and tree-shaped merges.
func TestMergeEqualsWhole(t *testing.T) {
	cfg := mergeConfig(t)
	rng := rand.New(rand.NewPCG(5, 5))
	for trial := 0; trial < 40; trial++ {
		steps := messyRecord(uint64(trial))
		whole := mustBytes(t, feed(cfg, steps))
		nparts := 2 + rng.IntN(5)
		cuts := []int{0}
		for i := 1; i < nparts; i++ {
			cuts = append(cuts, rng.IntN(len(steps)+1))
		}
		cuts = append(cuts, len(steps))
		sortInts(cuts)
		var parts []*CellState
		for i := 0; i+1 < len(cuts); i++ {
			parts = append(parts, feed(cfg, steps[cuts[i]:cuts[i+1]]))
		}
		// left to right
		acc := NewCellState(cfg)
		for _, p := range parts {
			if err := acc.Merge(p); err != nil {
				t.Fatal(err)
			}
		}
		if got := mustBytes(t, acc); !bytes.Equal(got, whole) {
			t.Fatalf("trial %d, cuts %v: merged state differs from the whole record", trial, cuts)
		}
		// tree: merge pairs, then pairs of pairs
		level := parts
		for len(level) > 1 {
			var next []*CellState
			for i := 0; i < len(level); i += 2 {
				if i+1 == len(level) {
					next = append(next, level[i])
					continue
				}
				m := NewCellState(cfg)
				if err := m.Merge(level[i]); err != nil {
					t.Fatal(err)
				}
				if err := m.Merge(level[i+1]); err != nil {
					t.Fatal(err)
				}
				next = append(next, m)
			}
			level = next
		}
		if got := mustBytes(t, level[0]); !bytes.Equal(got, whole) {
			t.Fatalf("trial %d, cuts %v: tree-merged state differs from the whole record", trial, cuts)
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

// TestMergeEverySplitOfCalmRun splits a record at every step around a long
// calm spell crossing a month end: the windows tallies must not change.
func TestMergeEverySplitOfCalmRun(t *testing.T) {
	cfg := mergeConfig(t)
	var steps []Step
	for i := 0; i < 24*40; i++ {
		h := 3.0
		if i >= 24*25 && i < 24*38 { // calm from day 25 to day 38 (crosses the month end at day 30)
			h = 0.8 + 0.3*float64(i%5)/5
		}
		day := i / 24
		steps = append(steps, Step{Year: 2000, Month: day/30 + 1, Hours: float64(i), DtHours: 1, Hm0: h, Te: 7, Tp: 8, J: 490.6 * h * h * 7, DirDeg: 10})
	}
	whole := mustBytes(t, feed(cfg, steps))
	for cut := 24 * 20; cut <= 24*40; cut++ {
		a, b := feed(cfg, steps[:cut]), feed(cfg, steps[cut:])
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(mustBytes(t, a), whole) {
			t.Fatalf("split at step %d changes the state", cut)
		}
	}
	// blocks of k steps (parts lying wholly inside the calm spell)
	for _, k := range []int{1, 5, 13, 50, 97} {
		acc := NewCellState(cfg)
		for i := 0; i < len(steps); i += k {
			if err := acc.Merge(feed(cfg, steps[i:min(i+k, len(steps))])); err != nil {
				t.Fatal(err)
			}
		}
		if !bytes.Equal(mustBytes(t, acc), whole) {
			t.Fatalf("blocks of %d steps change the state", k)
		}
	}
}

// TestCheckpointRoundTrip: unmarshal(marshal(s)) continues exactly like s.
func TestCheckpointRoundTrip(t *testing.T) {
	cfg := mergeConfig(t)
	steps := messyRecord(77)
	whole := mustBytes(t, feed(cfg, steps))
	half := feed(cfg, steps[:3001])
	b := mustBytes(t, half)
	r := NewCellState(cfg)
	if err := r.UnmarshalBinary(b); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(mustBytes(t, r), b) {
		t.Fatal("round trip changes the bytes")
	}
	for i := 3001; i < len(steps); i++ {
		r.Add(&steps[i])
	}
	if !bytes.Equal(mustBytes(t, r), whole) {
		t.Fatal("state resumed from a checkpoint differs from the whole record")
	}
	// damaged or foreign checkpoints are errors, not panics
	if err := r.UnmarshalBinary(b[:len(b)/2]); err == nil {
		t.Error("truncated checkpoint accepted")
	}
	other := DefaultConfig()
	validated(t, other)
	if err := NewCellState(other).UnmarshalBinary(b); err == nil {
		t.Error("checkpoint accepted by a state with other settings")
	}
	if err := NewCellState(other).Merge(NewCellState(cfg)); err == nil {
		t.Error("merge of states with different settings accepted")
	}
}

// TestMergeOutOfOrder: a later state that starts before this one ends is an error.
func TestMergeOutOfOrder(t *testing.T) {
	cfg := mergeConfig(t)
	steps := messyRecord(3)
	a, b := feed(cfg, steps[:100]), feed(cfg, steps[100:200])
	if err := b.Merge(a); err == nil {
		t.Error("merging an earlier state after a later one was accepted")
	}
}

// TestStateSizeBounded: the state does not grow with the number of steps
// (one year at 1 h and at 6 min give the same size), only with years
// (296 bytes per year of month sums and the year, and per device 12 month
// records of its minutes and power sum: 20 bytes each in a checkpoint, 24
// in memory, as documented).
func TestStateSizeBounded(t *testing.T) {
	cfg := mergeConfig(t)
	year := func(dtH float64, years int) int {
		s := NewCellState(cfg)
		n := int(float64(360*24*years) / dtH)
		for i := 0; i < n; i++ {
			tt := float64(i) * dtH
			day := int(tt / 24)
			s.Add(&Step{Year: 2000 + day/360, Month: (day/30)%12 + 1, Hours: tt, DtHours: dtH, J: 2e4, Hm0: 1 + float64(i%300)/100, Te: 7, Tp: 8, DirDeg: 180})
		}
		return len(mustBytes(t, s))
	}
	h1, m6 := year(1, 1), year(0.1, 1)
	if h1 != m6 {
		t.Errorf("one year: %d bytes at 1 h steps, %d bytes at 6 min steps: state grows with steps", h1, m6)
	}
	nd := len(cfg.Devices)
	if d, want := year(1, 2)-h1, 12*24+8+12*20*nd; d != want {
		t.Errorf("a second year adds %d checkpoint bytes, want %d (12 month records of 24 bytes, the year, 12 x %d device records of 20 bytes)", d, want, nd)
	}
	if got, want := cfg.StateBytes(2)-cfg.StateBytes(1), 296+12*24*nd; got != want {
		t.Errorf("StateBytes grows by %d per year, want %d", got, want)
	}
	d := DefaultConfig()
	validated(t, d)
	t.Logf("default config: %d bytes per cell + %d per year", d.StateBytes(0), d.StateBytes(1)-d.StateBytes(0))
}

// TestDeterministicBytes: the same input gives the same bytes.
func TestDeterministicBytes(t *testing.T) {
	cfg := mergeConfig(t)
	steps := messyRecord(11)
	if !bytes.Equal(mustBytes(t, feed(cfg, steps)), mustBytes(t, feed(cfg, steps))) {
		t.Fatal("same input, different bytes")
	}
}
