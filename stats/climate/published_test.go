package climate

import (
	"math"
	"strings"
	"testing"
)

// monthlyRecord feeds hourly steps of a 360_day calendar (every month 720 h)
// with a constant J (kW/m) per month: kw[y][m] for year 2001+y; a negative
// entry leaves the month empty. hoursIn[y][m] > 0 limits the month to its
// first hoursIn hours.
func monthlyRecord(t *testing.T, kw [][12]float64, hoursIn map[[2]int]int) *CellState {
	cfg := DefaultConfig()
	cfg.Calendar = "360_day"
	validated(t, cfg)
	s := NewCellState(cfg)
	for y := range kw {
		for m := 0; m < 12; m++ {
			if kw[y][m] < 0 {
				continue
			}
			n := 720
			if v, ok := hoursIn[[2]int{y, m}]; ok {
				n = v
			}
			for h := 0; h < n; h++ {
				tt := float64(y*8640 + m*720 + h)
				s.Add(&Step{Year: 2001 + y, Month: m + 1, Hours: tt, DtHours: 1, J: kw[y][m] * 1000, Hm0: 2, Te: 8, Tp: 9, DirDeg: 270})
			}
		}
	}
	return s
}

// TestVariabilityIndicesWorkedCase checks MVI, SVI and the inter-annual
// coefficient of variation by their published definitions (Cornett 2008,
// "A global wave energy resource assessment", ISOPE; definitions from
// memory): MVI = (P_M1 - P_M12) / P_year, SVI = (P_S1 - P_S4) / P_year,
// COV = std / mean of the annual means. Arithmetic written out:
//
//	year 1 monthly means (kW/m), Jan..Dec: 60 55 45 30 20 12 10 14 25 40 50 58
//	  sum 419, annual mean 419/12 = 34.916667 (360_day: equal month lengths)
//	year 2: every month 1.2 x year 1: annual mean 41.9
//	pooled monthly means = 1.1 x year 1; pooled annual mean 1.1 x 34.916667 = 38.408333
//	MVI = 1.1 (60 - 10) / 38.408333 = 55 / 38.408333 = 1.4319809
//	seasons (pooled): DJF 1.1 (58+60+55)/3 = 63.433333, JJA 1.1 (12+10+14)/3 = 13.2
//	SVI = (63.433333 - 13.2) / 38.408333 = 50.233333 / 38.408333 = 1.3078759
//	annual means 34.916667 and 41.9: mean 38.408333, population std 3.4916667
//	inter-annual COV = 3.4916667 / 38.408333 = 0.0909091 (= 0.1/1.1)
//
// A third year holds only half of January (360 of 720 h, coverage 0.5 <
// 0.8) at 500 kW/m: that month and that year are excluded and flagged and
// change nothing above.
func TestVariabilityIndicesWorkedCase(t *testing.T) {
	y1 := [12]float64{60, 55, 45, 30, 20, 12, 10, 14, 25, 40, 50, 58}
	var y2, y3 [12]float64
	for m := range y1 {
		y2[m] = 1.2 * y1[m]
		y3[m] = -1
	}
	y3[0] = 500
	s := monthlyRecord(t, [][12]float64{y1, y2, y3}, map[[2]int]int{{2, 0}: 360})
	sum := s.Summary()
	within(t, "AnnualMeanPowerKWm", sum.AnnualMeanPowerKWm, 1.1*419.0/12, 1e-9)
	within(t, "MVI", sum.MVI, 55/(1.1*419.0/12), 1e-9)
	within(t, "SVI", sum.SVI, (1.1*(58+60+55)/3-1.1*(12+10+14)/3)/(1.1*419.0/12), 1e-9)
	within(t, "InterannualCoV", sum.InterannualCoV, 0.1/1.1, 1e-9)
	within(t, "MVI (rounded, from the written-out arithmetic)", sum.MVI, 1.4319809, 1e-7)
	within(t, "SVI (rounded)", sum.SVI, 1.3078759, 1e-7)
	if sum.YearsUsed != 2 || len(sum.ExcludedYears) != 1 || sum.ExcludedYears[0] != 2003 {
		t.Errorf("years used %d, excluded %v; want 2 and [2003]", sum.YearsUsed, sum.ExcludedYears)
	}
	if sum.MonthsUsed != 24 || sum.MonthsExcluded != 1 {
		t.Errorf("months used %d, excluded %d; want 24 and 1", sum.MonthsUsed, sum.MonthsExcluded)
	}
	rows := s.Monthly()
	within(t, "January climatology", rows[0].PowerMeanKWm, 1.1*60, 1e-9)
	last := rows[len(rows)-1]
	if last.Year != 2003 || last.Month != 1 || !last.Excluded || last.Coverage != 0.5 {
		t.Errorf("last year-month row %+v: want 2003-01 excluded with coverage 0.5", last)
	}
	se := s.Seasonal()
	within(t, "DJF", se[0].PowerMeanKWm, 1.1*(58+60+55)/3, 1e-9)
	within(t, "JJA", se[2].PowerMeanKWm, 1.1*(12+10+14)/3, 1e-9)
}

// annualEnergyCase is a 2 x 3 power matrix (kW) and an occurrence table
// (hours) made up for the test.
const annualEnergyCSV = `# invented device for tests
hm0_m\te_s, 6, 8, 10
1, 10, 20, 30
2, 40, 80, 100
`

// TestAnnualEnergyByHand follows the method of IEC TS 62600-100 (mean
// annual energy production from a power matrix and a joint occurrence
// table; from memory): AEP = 8766 h x sum_ij P_ij f_ij.
//
//	occurrence: (1 m, 6 s) 100 h, (1 m, 8 s) 200 h, (2 m, 8 s) 300 h, (2 m, 10 s) 400 h; 1000 h in all
//	f = 0.1, 0.2, 0.3, 0.4;  P = 10, 20, 80, 100 kW
//	mean power = 0.1*10 + 0.2*20 + 0.3*80 + 0.4*100 = 1 + 4 + 24 + 40 = 69 kW
//	AEP = 69 kW x 8766 h = 604 854 kWh = 604.854 MWh;  CF = 69 / 100 = 0.69
//	at rated (100 kW): 400 of 1000 h = 0.4;  J = 3 kW/m there, 1 kW/m elsewhere:
//	energy share at rated = 400*3 / (600*1 + 400*3) = 2/3
func TestAnnualEnergyByHand(t *testing.T) {
	dev, err := ReadPowerMatrixCSV(strings.NewReader(annualEnergyCSV), "test-device")
	if err != nil {
		t.Fatal(err)
	}
	cfg := DefaultConfig()
	cfg.Devices = []*Device{dev}
	validated(t, cfg)
	s := NewCellState(cfg)
	hour := 0.0
	for _, c := range []struct{ h, te, hours, jkw float64 }{{1, 6, 100, 1}, {1, 8, 200, 1}, {2, 8, 300, 1}, {2, 10, 400, 3}} {
		for k := 0; k < int(c.hours); k++ {
			s.Add(&Step{Year: 2001, Month: 1 + int(hour/744)%12, Hours: hour, DtHours: 1, Hm0: c.h, Te: c.te, Tp: c.te, J: c.jkw * 1000, DirDeg: 0})
			hour++
		}
	}
	d := s.Summary().Devices[0]
	within(t, "mean power (kW)", d.MeanPowerKW, 69, 1e-9)
	within(t, "AEP (MWh/yr)", d.AEPMWh, 604.854, 1e-9)
	within(t, "capacity factor", d.CapacityFactor, 0.69, 1e-12)
	within(t, "time share at rated", d.AboveRatedTimeShare, 0.4, 1e-15)
	within(t, "energy share at rated", d.AboveRatedEnergyShare, 2.0/3, 1e-15)
	within(t, "time share below cut-in", d.BelowCutInTimeShare, 0, 0)
	within(t, "rated power", d.RatedKW, 100, 0)

	// the same AEP from the joint occurrence table the state itself built,
	// with the matrix powers typed in by hand (not through the code's lookup):
	// the sea states sit at the lower edges of the 0.5 m x 1 s scatter bins
	byHand := map[[2]float64]float64{{1, 6}: 10, {1, 8}: 20, {2, 8}: 80, {2, 10}: 100}
	var mean, share float64
	for _, r := range s.Scatter() {
		p, ok := byHand[[2]float64{r.Hm0LoM, r.TeLoS}]
		if !ok {
			t.Errorf("scatter bin (%g m, %g s) holds %g of the time, but no sea state was put there", r.Hm0LoM, r.TeLoS, r.TimeShare)
		}
		mean += p * r.TimeShare
		share += r.TimeShare
	}
	within(t, "time shares of the joint occurrence table", share, 1, 1e-12)
	within(t, "AEP from the joint occurrence table", annualEnergyMWh(mean), 604.854, 1e-9)
}

// TestBilinear checks the interpolation on the matrix above with the
// textbook bilinear formula: at (1.5 m, 7 s), half-way in both directions,
// P = (10 + 20 + 40 + 80) / 4 = 37.5 kW; at (1.25 m, 9 s): u = 0.25, t = 0.5,
// P = 0.75 (20+30)/2 + 0.25 (80+100)/2 = 18.75 + 22.5 = 41.25 kW; on a centre
// the matrix value; inside the outer half-bin the edge value is held.
func TestBilinear(t *testing.T) {
	dev, err := ReadPowerMatrixCSV(strings.NewReader(annualEnergyCSV), "bilinear-device")
	if err != nil {
		t.Fatal(err)
	}
	dev.Lookup = Bilinear
	cfg := DefaultConfig()
	cfg.Devices = []*Device{dev}
	validated(t, cfg)
	for _, c := range []struct{ h, te, want float64 }{{1.5, 7, 37.5}, {1.25, 9, 41.25}, {2, 8, 80}, {2.4, 10.8, 100}, {0.8, 6, 10}} {
		p, _ := dev.power(c.h, c.te)
		within(t, "bilinear power", p, c.want, 1e-12)
	}
	// outside: below the lowest row edge (0.5 m) is below cut-in, above 2.5 m or beyond Te edges outside
	for _, c := range []struct {
		h, te float64
		class int
	}{{0.4, 8, devBelowCutIn}, {2.6, 8, devOutside}, {1, 4.9, devOutside}, {1, 11.1, devOutside}} {
		if p, cl := dev.power(c.h, c.te); p != 0 || cl != c.class {
			t.Errorf("power(%g m, %g s) = %g kW class %d; want 0, class %d", c.h, c.te, p, cl, c.class)
		}
	}
}

func TestPowerMatrixErrors(t *testing.T) {
	cases := []struct{ name, csv, want string }{
		{"ragged", "x,6,8\n1,10,20\n2,40\n", "row 3 has 2 cells"},
		{"non-numeric", "x,6,8\n1,10,abc\n2,40,50\n", `row 2, column 3`},
		{"te not increasing", "x,8,6\n1,10,20\n2,40,50\n", "Te column centre 2"},
		{"hm0 not increasing", "x,6,8\n2,10,20\n1,40,50\n", "Hm0 row centre 2"},
		{"negative power", "x,6,8\n1,10,-2\n2,40,50\n", "row 1, Te column 2"},
		{"too small", "x,6,8\n1,10,20\n", "at least 2 Hm0 rows"},
		{"empty cell", "x,6,8\n1,10,\n2,40,50\n", `row 2, column 3`},
	}
	for _, c := range cases {
		_, err := ReadPowerMatrixCSV(strings.NewReader(c.csv), "dev-"+c.name)
		if err == nil {
			t.Errorf("%s: accepted", c.name)
			continue
		}
		if !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "dev-"+c.name) {
			t.Errorf("%s: error %q should name %q and the device", c.name, err, c.want)
		}
	}
}

func TestConfigValidate(t *testing.T) {
	bad := []struct {
		name string
		mod  func(*Config)
		want string
	}{
		{"limits out of order", func(c *Config) { c.WindowLimitsM = []float64{2, 1.5} }, "WindowLimitsM out of order"},
		{"non-positive duration", func(c *Config) { c.WindowDurationsH = []float64{0, 6} }, "WindowDurationsH[0]"},
		{"durations out of order", func(c *Config) { c.WindowDurationsH = []float64{12, 6} }, "out of order"},
		{"duration too long", func(c *Config) { c.WindowDurationsH = []float64{24 * 40} }, "exceeds the maximum"},
		{"coverage", func(c *Config) { c.CoverageMin = 0 }, "CoverageMin"},
		{"percentile", func(c *Config) { c.Percentiles = []float64{50, 10} }, "strictly increasing"},
		{"calendar", func(c *Config) { c.Calendar = "lunar" }, "lunar"},
		{"hist", func(c *Config) { c.Hm0HistResM = -1 }, "Hm0HistResM"},
		{"scatter", func(c *Config) { c.ScatterTeStepS = math.NaN() }, "scatter"},
		{"device names", func(c *Config) { c.Devices = []*Device{testDevice(BinLookup, "a"), testDevice(Bilinear, "a")} }, "two devices"},
	}
	for _, b := range bad {
		c := DefaultConfig()
		b.mod(c)
		err := c.Validate()
		if err == nil || !strings.Contains(err.Error(), b.want) {
			t.Errorf("%s: got %v, want an error mentioning %q", b.name, err, b.want)
		}
	}
	if err := DefaultConfig().Validate(); err != nil {
		t.Errorf("default config invalid: %v", err)
	}
}

// TestCalendarsMonthLengths checks month lengths against the CF conventions
// (section 4.4.1): Feb 1900 has 28 days in the Gregorian calendar and 29 in
// the Julian; Feb 2000 29 (divisible by 400); noleap 28, all_leap 29, 360_day 30.
func TestCalendarsMonthLengths(t *testing.T) {
	for _, c := range []struct {
		cal     string
		y, m, d int
	}{{"standard", 1900, 2, 28}, {"julian", 1900, 2, 29}, {"proleptic_gregorian", 2000, 2, 29}, {"gregorian", 2023, 2, 28},
		{"noleap", 2000, 2, 28}, {"all_leap", 2001, 2, 29}, {"360_day", 2001, 1, 30}, {"365_day", 2001, 12, 31}} {
		k, err := parseCalendar(c.cal)
		if err != nil {
			t.Fatal(err)
		}
		if got := k.daysInMonth(c.y, c.m); got != c.d {
			t.Errorf("%s %d-%02d: %d days, want %d", c.cal, c.y, c.m, got, c.d)
		}
	}
}

// TestRejectedAndInvalid: bad steps are counted, not silently used. The
// power of a step with an unusable Hm0 is left out with it, not counted
// again (ScreenStep); an unusable J with a usable Hm0 and Te is counted.
func TestRejectedAndInvalid(t *testing.T) {
	cfg := validated(t, DefaultConfig())
	s := NewCellState(cfg)
	s.Add(&Step{Year: 2000, Month: 0, Hours: 0, DtHours: 1, J: 1, Hm0: 1, Te: 5, Tp: 6, DirDeg: 0})
	s.Add(&Step{Year: 2000, Month: 1, Hours: 1, DtHours: 0, J: 1, Hm0: 1, Te: 5, Tp: 6, DirDeg: 0})
	s.Add(&Step{Year: 2000, Month: 1, Hours: 2, DtHours: 1, J: -5, Hm0: math.Inf(1), Te: 5, Tp: math.NaN(), DirDeg: 0})
	s.Add(&Step{Year: 2000, Month: 1, Hours: 3, DtHours: 1, J: -5, Hm0: 1, Te: 5, Tp: math.NaN(), DirDeg: 0})
	s.Add(&Step{Year: 2000, Month: 1, Hours: 4, DtHours: 1, J: 3e4, Hm0: 70, Te: 5, Tp: math.NaN(), DirDeg: 0})
	sum := s.Summary()
	if sum.RejectedSteps != 2 || sum.InvalidValues != 3 || sum.Steps != 5 || !math.IsNaN(sum.PowerMeanKWm) {
		t.Errorf("rejected %d invalid %d steps %d mean %g; want 2, 3, 5, NaN", sum.RejectedSteps, sum.InvalidValues, sum.Steps, sum.PowerMeanKWm)
	}
}

// TestScreenStep: each value's rule, and J left out with an unusable Hm0 or
// Te (the bounds of fixed.go).
func TestScreenStep(t *testing.T) {
	inf, nan := math.Inf(1), math.NaN()
	for _, c := range []struct {
		in   [5]float64 // J, Hm0, Te, Tp, direction
		keep [5]bool    // which come back unchanged (the others NaN)
		bad  int
	}{
		{[5]float64{1e4, 2, 8, 9, 270}, [5]bool{true, true, true, true, true}, 0},
		{[5]float64{nan, nan, nan, nan, nan}, [5]bool{}, 0},
		{[5]float64{1e4, -0.1, 8, 9, 270}, [5]bool{false, false, true, true, true}, 1},
		{[5]float64{1e4, 64, 8, 9, 270}, [5]bool{false, false, true, true, true}, 1},
		{[5]float64{1e4, 2, inf, 9, 270}, [5]bool{false, true, false, true, true}, 1},
		{[5]float64{1e4, 2, 8, -1, -inf}, [5]bool{true, true, true, false, false}, 2},
		{[5]float64{1 << 26, 2, 8, 9, 1e9}, [5]bool{false, true, true, true, false}, 2},
		{[5]float64{0, 0, 0, 0, -359}, [5]bool{true, true, true, true, true}, 0},
	} {
		var out [5]float64
		var bad int
		out[0], out[1], out[2], out[3], out[4], bad = ScreenStep(c.in[0], c.in[1], c.in[2], c.in[3], c.in[4])
		if bad != c.bad {
			t.Errorf("%v: %d unusable, want %d", c.in, bad, c.bad)
		}
		for k := range out {
			same := out[k] == c.in[k]
			if same != c.keep[k] || (!c.keep[k] && !math.IsNaN(out[k])) {
				t.Errorf("%v: value %d -> %v, want kept %v (else NaN)", c.in, k, out[k], c.keep[k])
			}
		}
	}
}

// TestBinEdges: bin edges half-way between centres, outer bins as wide as
// their neighbour spacing, closed below (common practice for power
// matrices). Centres 1, 2, 4 give edges 0.5, 1.5, 3, 5; an evenly spaced
// axis 1, 2, 3 gives 0.5, 1.5, 2.5, 3.5 through the fast path.
func TestBinEdges(t *testing.T) {
	a := newAxis([]float64{1, 2, 4})
	u := newAxis([]float64{1, 2, 3})
	if a.uniform || !u.uniform {
		t.Fatal("uniform detection wrong")
	}
	for _, c := range []struct {
		ax   *axis
		x    float64
		want int
	}{{&a, 0.4, -1}, {&a, 0.5, 0}, {&a, 1.49, 0}, {&a, 1.5, 1}, {&a, 2.99, 1}, {&a, 3, 2}, {&a, 4.99, 2}, {&a, 5, 3},
		{&u, 0.49, -1}, {&u, 0.5, 0}, {&u, 1.5, 1}, {&u, 2.4999, 1}, {&u, 2.5, 2}, {&u, 3.49, 2}, {&u, 3.5, 3}} {
		if got := c.ax.bin(c.x); got != c.want {
			t.Errorf("bin(%g) = %d, want %d (centres %v)", c.x, got, c.want, c.ax.c)
		}
	}
}
