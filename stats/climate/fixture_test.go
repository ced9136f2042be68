package climate

import (
	"math"
	"testing"
)

// TestSingleCellEveryFigure runs one cell over an invented three-year
// fixture (synthSteps; no real place) with two devices and checks that every
// figure of the Summary and every table is produced and plausible. The
// values themselves are checked against outside references in the other
// tests; this one guards against a figure silently missing.
func TestSingleCellEveryFigure(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Devices = []*Device{testDevice(BinLookup, "bin"), testDevice(Bilinear, "bilin")}
	validated(t, cfg)
	s := feed(cfg, synthSteps(3, 42, 1))
	sum := s.Summary()
	scalars := map[string]float64{
		"RecordHours": sum.RecordHours, "CoverageFrac": sum.CoverageFrac,
		"PowerMeanKWm": sum.PowerMeanKWm, "PowerStdKWm": sum.PowerStdKWm, "PowerCoV": sum.PowerCoV, "PowerMaxKWm": sum.PowerMaxKWm,
		"Hm0MeanM": sum.Hm0MeanM, "Hm0StdM": sum.Hm0StdM, "Hm0CoV": sum.Hm0CoV, "Hm0MaxM": sum.Hm0MaxM,
		"TeMeanS": sum.TeMeanS, "TpMeanS": sum.TpMeanS, "DirMeanDeg": sum.DirMeanDeg,
		"AnnualMeanPowerKWm": sum.AnnualMeanPowerKWm, "MVI": sum.MVI, "SVI": sum.SVI, "InterannualCoV": sum.InterannualCoV,
	}
	for k, v := range scalars {
		if math.IsNaN(v) || math.IsInf(v, 0) || v < 0 {
			t.Errorf("%s = %g", k, v)
		}
	}
	for i := 1; i < len(sum.PowerPercentilesKWm); i++ {
		if !(sum.PowerPercentilesKWm[i] >= sum.PowerPercentilesKWm[i-1]) || !(sum.Hm0PercentilesM[i] >= sum.Hm0PercentilesM[i-1]) {
			t.Errorf("percentiles not increasing: %v %v", sum.PowerPercentilesKWm, sum.Hm0PercentilesM)
		}
	}
	if sum.YearsUsed != 3 || len(sum.Devices) != 2 {
		t.Errorf("years used %d, devices %d", sum.YearsUsed, len(sum.Devices))
	}
	for _, d := range sum.Devices {
		if !(d.AEPMWh > 0) || !(d.CapacityFactor > 0 && d.CapacityFactor <= 1) {
			t.Errorf("device %s: AEP %g MWh, CF %g", d.Name, d.AEPMWh, d.CapacityFactor)
		}
		if tot := d.AboveRatedTimeShare + d.BelowCutInTimeShare + d.OutsideMatrixTimeShare; tot > 1+1e-12 {
			t.Errorf("device %s: shares add to %g", d.Name, tot)
		}
	}
	if n := len(s.Monthly()); n != 12+36 {
		t.Errorf("%d monthly rows, want 48", n)
	}
	if len(s.Seasonal()) != 4 || len(s.Scatter()) == 0 || len(s.Exceedance()) == 0 {
		t.Error("a table is empty")
	}
	if n := len(s.Windows()); n != 3*4*12 {
		t.Errorf("%d window rows, want 144", n)
	}
	var share float64
	for _, r := range s.Scatter() {
		share += r.TimeShare
	}
	within(t, "scatter shares sum", share, 1, 1e-12)
	t.Logf("mean %.2f kW/m, p50 %.2f, p99 %.2f, Hm0 mean %.3f m, MVI %.3f, SVI %.3f, COV %.3f, AEP %.1f / %.1f MWh",
		sum.PowerMeanKWm, sum.PowerPercentilesKWm[1], sum.PowerPercentilesKWm[3], sum.Hm0MeanM, sum.MVI, sum.SVI,
		sum.InterannualCoV, sum.Devices[0].AEPMWh, sum.Devices[1].AEPMWh)
}

// TestAddDoesNotAllocate: after the first step of a year, Add allocates nothing.
func TestAddDoesNotAllocate(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Devices = []*Device{testDevice(BinLookup, "bin"), testDevice(Bilinear, "bilin")}
	validated(t, cfg)
	steps := synthSteps(1, 1, 1)
	s := NewCellState(cfg)
	s.Add(&steps[0])
	i := 1
	allocs := testing.AllocsPerRun(5000, func() {
		s.Add(&steps[i])
		i++
	})
	if allocs != 0 {
		t.Errorf("Add allocates %g times per step", allocs)
	}
}
