package climate

import (
	"bytes"
	"math"
	"math/rand"
	"testing"
)

func roseConfig(t *testing.T, n int) *Config {
	t.Helper()
	c := DefaultConfig()
	c.DirectionSectors = n
	if err := c.Validate(); err != nil {
		t.Fatal(err)
	}
	return c
}

// feedRose feeds steps a..b-1 of a reproducible record (bulk and spectral
// style alternating) to s.
func feedRose(s *CellState, a, b int) {
	rng := rand.New(rand.NewSource(7))
	n := len(s.rose.w)
	sec := make([]float64, n)
	for i := 0; i < b; i++ {
		j, d := 5000+30000*rng.Float64(), 720*rng.Float64()-360
		for k := range sec {
			sec[k] = j * rng.Float64() / float64(n)
		}
		if i < a {
			continue
		}
		st := PrepareTime(2030+i/8760, 1+(i/730)%12, float64(i), 1)
		s.AddAt(&st, j, 2, 8, 10, d)
		if i%2 == 0 {
			s.AddDirection(&st, j, d)
		} else {
			s.AddDirectionalPower(&st, sec, d)
		}
	}
}

// A record split anywhere and merged gives the bytes of the whole record,
// and the bytes read back give the same state (stats/climate exactness).
func TestDirectionsMergeExact(t *testing.T) {
	cfg := roseConfig(t, 16)
	whole := NewCellState(cfg)
	feedRose(whole, 0, 500)
	want, _ := whole.MarshalBinary()
	for _, cut := range []int{1, 137, 499} {
		a, b := NewCellState(cfg), NewCellState(cfg)
		feedRose(a, 0, cut)
		feedRose(b, cut, 500)
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		if got, _ := a.MarshalBinary(); !bytes.Equal(got, want) {
			t.Errorf("split at %d: merged state differs from the whole record's", cut)
		}
	}
	back := NewCellState(cfg)
	if err := back.UnmarshalBinary(want); err != nil {
		t.Fatal(err)
	}
	if got, _ := back.MarshalBinary(); !bytes.Equal(got, want) {
		t.Error("unmarshal then marshal changed the bytes")
	}
	// a state with another sector count is refused (fingerprint)
	if err := NewCellState(roseConfig(t, 8)).UnmarshalBinary(want); err == nil {
		t.Error("a 16-sector state was read into an 8-sector state")
	}
	// shares sum to 1, the sector means to the mean power of the steps
	var ps, os_, pm float64
	for _, r := range whole.Directions() {
		ps, os_, pm = ps+r.PowerShare, os_+r.OccurrenceShare, pm+r.PowerMeanKWm
	}
	if math.Abs(ps-1) > 1e-12 || math.Abs(os_-1) > 1e-12 || !(pm > 5 && pm < 35) {
		t.Errorf("shares sum to %g and %g, sector means to %g kW/m", ps, os_, pm)
	}
}

// The analytic case: all power from one bearing fills one sector, the one
// whose arc holds the bearing (sector k of n centred on k*360/n, nautical
// "from", edges included clockwise: common practice of wind and wave roses).
func TestDirectionsOneBearing(t *testing.T) {
	for _, c := range []struct {
		n      int
		dir    float64
		sector int
	}{{16, 90, 4}, {16, 101.24, 4}, {16, 101.25, 5}, {16, 348.75, 0}, {16, -5, 0}, {8, 200, 4}, {36, 359.9, 0}, {4, 135, 2}} {
		s := NewCellState(roseConfig(t, c.n))
		for i := 0; i < 10; i++ {
			st := PrepareTime(2030, 1, float64(i), 1)
			s.AddDirection(&st, 20000, c.dir)
		}
		rows := s.Directions()
		if len(rows) != c.n {
			t.Fatalf("%d rows, want %d", len(rows), c.n)
		}
		for _, r := range rows {
			want := 0.0
			if r.Sector == c.sector {
				want = 1
			}
			if r.PowerShare != want || r.OccurrenceShare != want || r.PowerMeanKWm != 20*want {
				t.Errorf("n=%d, all from %g deg: sector %d (%g..%g) has power share %g, occurrence %g, mean %g kW/m",
					c.n, c.dir, r.Sector, r.FromDeg, r.ToDeg, r.PowerShare, r.OccurrenceShare, r.PowerMeanKWm)
			}
		}
		if got := DirectionSector(c.dir, c.n); got != c.sector {
			t.Errorf("DirectionSector(%g, %d) = %d, want %d", c.dir, c.n, got, c.sector)
		}
	}
	cfg := DefaultConfig()
	cfg.DirectionSectors = MaxDirectionSectors + 1
	if cfg.Validate() == nil {
		t.Errorf("%d sectors accepted", MaxDirectionSectors+1)
	}
}
