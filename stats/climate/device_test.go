package climate

import (
	"math"
	"strings"
	"testing"
)

// tpEnergyCSV is the matrix of annualEnergyCSV over Tp instead of Te.
const tpEnergyCSV = `# invented device for tests, over Tp
hm0_m\tp_s, 6, 8, 10
1, 10, 20, 30
2, 40, 80, 100
`

// tpSteps are five sea states whose Te and Tp fall in different columns of
// a matrix with centres 6, 8, 10 s (edges 5, 7, 9, 11 s); Tp = Te / 0.85.
var tpSteps = []struct{ h, te, tp, hours, jkw float64 }{
	{1, 5.1, 6, 100, 1},  // Tp col 6 s: 10 kW  (Te col 6 s: 10 kW)
	{1, 8.5, 10, 200, 1}, // Tp col 10 s: 30 kW (Te col 8 s: 20 kW)
	{2, 6.8, 8, 300, 1},  // Tp col 8 s: 80 kW  (Te col 6 s: 40 kW)
	{2, 8.5, 10, 300, 3}, // Tp col 10 s: 100 kW (Te col 8 s: 80 kW)
	{3, 8.5, 10, 100, 2}, // Hm0 above the top edge (2.5 m): outside the matrix, 0 kW
}

func feedTp(t *testing.T, dev *Device, withTp bool) DeviceSummary {
	t.Helper()
	cfg := DefaultConfig()
	cfg.Devices = []*Device{dev}
	validated(t, cfg)
	s := NewCellState(cfg)
	hour := 0.0
	for _, c := range tpSteps {
		tp := c.tp
		if !withTp {
			tp = math.NaN()
		}
		for k := 0; k < int(c.hours); k++ {
			s.Add(&Step{Year: 2001, Month: 1 + int(hour/744)%12, Hours: hour, DtHours: 1, Hm0: c.h, Te: c.te, Tp: tp, J: c.jkw * 1000, DirDeg: 0})
			hour++
		}
	}
	return s.Summary().Devices[0]
}

// A matrix over Tp, by hand with the method of IEC TS 62600-100 (mean power
// = sum P_ij f_ij over the occurrence of the sea states; from memory):
//
//	Tp from the data: (100*10 + 200*30 + 300*80 + 300*100 + 100*0) / 1000 h = 61 kW
//	AEP = 61 kW * 8766 h = 534.726 MWh; CF on the largest entry 100 kW = 0.61
//	energy J dt: 100, 200, 300, 900, 200 (kW/m h), 1700 in all:
//	  outside the matrix 200/1700, at rated (100 kW) 900/1700
//	with rated_kw 200: CF = 0.305, at rated 0
//	the same matrix read over Te: (1000 + 4000 + 12000 + 24000) / 1000 = 41 kW
//	no Tp in the data, Tp = Te / 0.85: 61 kW again
func TestTpMatrixRatedAndOutsideByHand(t *testing.T) {
	read := func(csv string) *Device {
		d, err := ReadPowerMatrixCSV(strings.NewReader(csv), "tp-device")
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	dev := read(tpEnergyCSV)
	if dev.Period != PeriodTp || dev.HeaderPeriod != "tp" {
		t.Fatalf("header hm0_m\\tp_s read as period %v (header %q)", dev.Period, dev.HeaderPeriod)
	}
	d := feedTp(t, dev, true)
	within(t, "mean power, Tp from the data (kW)", d.MeanPowerKW, 61, 1e-9)
	within(t, "AEP (MWh/yr)", d.AEPMWh, 534.726, 1e-9)
	within(t, "capacity factor on the largest entry", d.CapacityFactor, 0.61, 1e-12)
	within(t, "energy share outside the matrix", d.OutsideMatrixEnergyShare, 200.0/1700, 1e-12)
	within(t, "energy share at rated", d.AboveRatedEnergyShare, 900.0/1700, 1e-12)
	if d.Period != "tp" {
		t.Errorf("summary period %q", d.Period)
	}

	dev = read(tpEnergyCSV)
	dev.Rated = 200
	d = feedTp(t, dev, true)
	within(t, "capacity factor on rated_kw 200", d.CapacityFactor, 0.305, 1e-12)
	within(t, "rated power", d.RatedKW, 200, 0)
	within(t, "energy share at rated 200 kW", d.AboveRatedEnergyShare, 0, 0)

	dev = read(tpEnergyCSV)
	dev.TeOverTp = 0.85
	d = feedTp(t, dev, false)
	within(t, "mean power, Tp = Te / 0.85 (kW)", d.MeanPowerKW, 61, 1e-9)
	within(t, "device coverage without Tp", d.CoverageFrac, 1, 0)

	dev = read(tpEnergyCSV)
	d = feedTp(t, dev, false)
	if !math.IsNaN(d.MeanPowerKW) || d.CoverageFrac != 0 {
		t.Errorf("Tp matrix, no Tp and no Te/Tp ratio: mean power %g, coverage %g; want NaN, 0", d.MeanPowerKW, d.CoverageFrac)
	}

	dev = read(strings.Replace(tpEnergyCSV, `hm0_m\tp_s`, `hm0_m\te_s`, 1))
	d = feedTp(t, dev, true)
	within(t, "the same matrix over Te (kW)", d.MeanPowerKW, 41, 1e-9)

	dev = read(tpEnergyCSV)
	dev.Rated = 99
	cfg := DefaultConfig()
	cfg.Devices = []*Device{dev}
	if err := cfg.Validate(); err == nil || !strings.Contains(err.Error(), "below the largest entry") {
		t.Errorf("rated power below the matrix maximum: %v", err)
	}
}

// The corner label of a power matrix CSV may name its period.
func TestPowerMatrixHeaderPeriod(t *testing.T) {
	for _, c := range []struct{ label, want, err string }{
		{`hm0_m\tp_s`, "tp", ""}, {`hm0_m\te_s`, "te", ""}, {`Hs [m] / Tp [s]`, "tp", ""}, {`HM0\TE`, "te", ""},
		{`x`, "", ""}, {`hm0_m`, "", ""}, {`hs_m\tz_s`, "", "over tz"}, {`Hs\T02`, "", "over t02"},
	} {
		csv := c.label + ", 6, 8\n1, 10, 20\n2, 40, 80\n"
		d, err := ReadPowerMatrixCSV(strings.NewReader(csv), "lab")
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) || !strings.Contains(err.Error(), "row 1, column 1") {
				t.Errorf("label %q: error %v, want one naming %q and the cell", c.label, err, c.err)
			}
			continue
		}
		if err != nil {
			t.Errorf("label %q: %v", c.label, err)
			continue
		}
		if d.HeaderPeriod != c.want {
			t.Errorf("label %q: period %q, want %q", c.label, d.HeaderPeriod, c.want)
		}
	}
}
