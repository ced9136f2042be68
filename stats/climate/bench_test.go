package climate

import (
	"math"
	"math/rand/v2"
	"testing"
)

// synthSteps makes an invented hourly record (not a real place) for
// benchmarks and property tests: a seasonal Hm0 cycle with noise, Te tied to
// Hm0, J from the deep-water bulk formula, a few missing values.
func synthSteps(years int, seed uint64, dtH float64) []Step {
	rng := rand.New(rand.NewPCG(seed, 1))
	perYear := int(8760 / dtH)
	steps := make([]Step, 0, years*perYear)
	h := 2.0
	for y := 0; y < years; y++ {
		for m := 1; m <= 12; m++ {
			days := calGregorian.daysInMonth(2000+y, m)
			for k := 0; k < int(float64(days*24)/dtH); k++ {
				t := float64(len(steps)) * dtH
				season := 1 + 0.6*math.Cos(2*math.Pi*float64(m-1)/12)
				h = 0.97*h + 0.03*(season*2.2) + 0.15*rng.NormFloat64()
				if h < 0.2 {
					h = 0.2
				}
				te := 3.5 + 2.6*math.Sqrt(h) + 0.3*rng.NormFloat64()
				st := Step{Year: 2000 + y, Month: m, Hours: t, DtHours: dtH, Hm0: h, Te: te, Tp: te * 1.15,
					DirDeg: math.Mod(250+40*rng.NormFloat64()+360, 360)}
				st.J = 1025 * 9.81 * 9.81 * h * h * te / (64 * math.Pi)
				if rng.IntN(500) == 0 {
					st.J, st.Hm0 = math.NaN(), math.NaN()
				}
				steps = append(steps, st)
			}
		}
	}
	return steps
}

func benchConfig(b *testing.B, devices bool, access ...AccessRule) *Config {
	cfg := DefaultConfig()
	if devices {
		cfg.Devices = []*Device{testDevice(BinLookup, "bin"), testDevice(Bilinear, "bilin")}
	}
	cfg.AccessRules = access
	if err := cfg.Validate(); err != nil {
		b.Fatal(err)
	}
	return cfg
}

// testDevice is an invented 10 x 12 power matrix (kW) for benchmarks.
func testDevice(l Lookup, name string) *Device {
	d := &Device{Name: name, Lookup: l}
	for i := 0; i < 10; i++ {
		d.Hm0M = append(d.Hm0M, 0.25+0.5*float64(i))
	}
	for j := 0; j < 12; j++ {
		d.TeS = append(d.TeS, 4.5+float64(j))
	}
	for _, h := range d.Hm0M {
		for _, te := range d.TeS {
			d.PowerKW = append(d.PowerKW, math.Min(750, 20*h*h*te/4))
		}
	}
	return d
}

func benchAdd(b *testing.B, devices bool, access ...AccessRule) {
	cfg := benchConfig(b, devices, access...)
	steps := synthSteps(2, 7, 1)
	const cells = 64
	states := make([]*CellState, cells)
	for i := range states {
		states[i] = NewCellState(cfg)
	}
	b.ReportAllocs()
	b.ResetTimer()
	k := 0
	for i := 0; i < b.N; i += cells {
		if k == len(steps) {
			k = 0
			b.StopTimer()
			for _, s := range states {
				s.Reset()
			}
			b.StartTimer()
		}
		st := &steps[k]
		for _, s := range states {
			s.Add(st)
		}
		k++
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds()/1e6, "Mcellsteps/s")
}

// BenchmarkAdd feeds bulk steps (default config, no devices) to 64 cells.
func BenchmarkAdd(b *testing.B) { benchAdd(b, false) }

// BenchmarkAddTwoDevices adds a bin-lookup and a bilinear device.
func BenchmarkAddTwoDevices(b *testing.B) { benchAdd(b, true) }

// BenchmarkAddAccess is BenchmarkAddTwoDevices with two repair-access
// rules (issue 32: Hm0 below 2 m for 12 h; Hm0 below 1.5 m and Te below
// 7 s for 24 h), the feed cost of the waiting times for access: compare it
// with BenchmarkAddTwoDevices (make bench's BENCH_MICRO runs both).
func BenchmarkAddAccess(b *testing.B) {
	benchAdd(b, true, AccessRule{Hm0M: 2, RepairH: 12}, AccessRule{Hm0M: 1.5, TeS: 7, RepairH: 24})
}

// BenchmarkMerge merges two 10-year states of one cell.
func BenchmarkMerge(b *testing.B) {
	cfg := benchConfig(b, true)
	steps := synthSteps(20, 3, 1)
	a, c := NewCellState(cfg), NewCellState(cfg)
	half := len(steps) / 2
	for i := range steps[:half] {
		a.Add(&steps[i])
	}
	for i := range steps[half:] {
		c.Add(&steps[half+i])
	}
	dst := NewCellState(cfg)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		dst.copyFrom(a)
		if err := dst.Merge(c); err != nil {
			b.Fatal(err)
		}
	}
}
