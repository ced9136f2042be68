package climate

import (
	"math"
	"testing"
)

// halfAndHalf is one 360-day year: January to June hourly with J 10 kW/m
// (Hm0 1.25 m, Te 6.5 s), July to December 3-hourly with J 40 kW/m (Hm0
// 2.25 m, Te 8.5 s): a record whose step changes, so that a count-weighted
// statistic differs from the duration-weighted one.
func halfAndHalf() []Step {
	var st []Step
	for i := 0; i < 180*24; i++ {
		h := float64(i)
		st = append(st, Step{Year: 2001, Month: int(h/720) + 1, Hours: h, DtHours: 1, J: 1e4, Hm0: 1.25, Te: 6.5, Tp: 7, DirDeg: 200})
	}
	for i := 0; i < 180*8; i++ {
		h := 180*24 + 3*float64(i)
		st = append(st, Step{Year: 2001, Month: int(h/720) + 1, Hours: h, DtHours: 3, J: 4e4, Hm0: 2.25, Te: 8.5, Tp: 9, DirDeg: 200})
	}
	return st
}

// TestAnnualDurationWeighted: the year's mean power and device energy
// weight each step by its duration (notes on the time axis: every statistic
// is weighted by w_i). Expected values by hand: half the year at 10 and half
// at 40 kW/m gives 25 kW/m (a count-weighted mean would give 17.5); the
// device (the bin matrix of testDevice, P = min(750, 20 Hm0^2 Te / 4) kW at
// the bin centres) gives 50.78125 kW then 215.15625 kW, so the year's
// energy is their mean times 8640 h (360-day calendar) / 1000 MWh. With
// the analysis year starting in July, the two halves fall in the years
// named 2000 and 2001.
func TestAnnualDurationWeighted(t *testing.T) {
	cfg := mergeConfig(t)
	s := feed(cfg, halfAndHalf())
	rows := s.Annual(1)
	if len(rows) != 1 {
		t.Fatalf("%d rows, want 1", len(rows))
	}
	r := rows[0]
	pa, pb := 20*1.25*1.25*6.5/4, 20*2.25*2.25*8.5/4
	if r.Year != 2001 || r.Hours != 8640 || math.Abs(r.PowerMeanKWm-25) > 1e-9 || r.CoverageFrac != 1 || r.Excluded {
		t.Errorf("row %+v, want year 2001, 8640 h, 25 kW/m, coverage 1", r)
	}
	wantE := (pa + pb) / 2 * 8640 / 1000
	if math.Abs(r.DeviceEnergyMWh[0]-wantE) > 1e-6 || r.DeviceCoverageFrac[0] != 1 {
		t.Errorf("device energy %g MWh coverage %g, want %g and 1", r.DeviceEnergyMWh[0], r.DeviceCoverageFrac[0], wantE)
	}
	jul := s.Annual(7)
	if len(jul) != 2 || jul[0].Year != 2000 || jul[1].Year != 2001 {
		t.Fatalf("analysis years from July: %+v", jul)
	}
	if math.Abs(jul[0].PowerMeanKWm-10) > 1e-9 || jul[0].CoverageFrac != 0.5 || !jul[0].Excluded ||
		math.Abs(jul[1].PowerMeanKWm-40) > 1e-9 || math.Abs(jul[1].DeviceEnergyMWh[0]-pb*8640/1000) > 1e-6 {
		t.Errorf("analysis years from July: %+v", jul)
	}
	// split in two and merged: the same rows (the device month sums merge)
	st := halfAndHalf()
	a, b := feed(cfg, st[:3000]), feed(cfg, st[3000:])
	if err := a.Merge(b); err != nil {
		t.Fatal(err)
	}
	if m := a.Annual(1); m[0].DeviceEnergyMWh[1] != r.DeviceEnergyMWh[1] || m[0].PowerMeanKWm != r.PowerMeanKWm {
		t.Errorf("merged %+v, whole %+v", m[0], r)
	}
}

// TestAEPBands: the components and their root-sum-square combination on a
// case computed by hand. Two complete years of 90 and 110 MWh (mean 100,
// sample std 14.142, inter-annual 0.14142); record: 0.14142/sqrt(2) = 0.1;
// a 1-year horizon: 0.14142; model 0.1; total sqrt(0.01 + 0.02 + 0.01) =
// 0.2. z_90 = 1.2816 and z_99 = 2.3263 are the standard normal quantiles of
// the published tables (Abramowitz and Stegun 1964, table 26.1; quoted from
// memory). P90 = P50 (1 - 1.2816 x 0.2). A total formed by adding the
// components (0.3414) fails.
func TestAEPBands(t *testing.T) {
	rows := []YearRow{
		{Year: 2001, Hours: 8760, DeviceEnergyMWh: []float64{90}},
		{Year: 2002, Hours: 8760, DeviceEnergyMWh: []float64{110}},
		{Year: 2003, Hours: 8760, DeviceEnergyMWh: []float64{500}, Excluded: true},
	}
	b := AEPBands(rows, []DeviceSummary{{Name: "d", AEPMWh: 100.5}}, []float64{1, 10}, []ModelError{AssumedModelError(0.1)})
	if len(b) != 2 {
		t.Fatalf("%d bands, want 2", len(b))
	}
	one, ten := b[0], b[1]
	near := func(what string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.6g, want %.6g", what, got, want)
		}
	}
	if one.YearsUsed != 2 || one.HorizonY != 1 || ten.HorizonY != 10 {
		t.Errorf("bands %+v", b)
	}
	near("inter-annual", one.InterannualFrac, math.Sqrt(2)/10, 1e-12)
	near("record", one.RecordFrac, 0.1, 1e-12)
	near("future 1 y", one.FutureFrac, math.Sqrt(2)/10, 1e-12)
	near("future 10 y", ten.FutureFrac, math.Sqrt(2)/10/math.Sqrt(10), 1e-12)
	near("total 1 y", one.TotalFrac, 0.2, 1e-12)
	near("total 10 y", ten.TotalFrac, math.Sqrt(0.01+0.002+0.01), 1e-12)
	near("P90 1 y", one.P90MWh, 100.5*(1-1.2816*0.2), 100.5*0.2*5e-5)
	near("P99 1 y", one.P99MWh, 100.5*(1-2.3263*0.2), 100.5*0.2*5e-5)
	if one.P50MWh != 100.5 {
		t.Errorf("P50 %g, want the AEP 100.5", one.P50MWh)
	}
	// a band wider than the normal model allows is not published
	if w := AEPBands(rows, []DeviceSummary{{Name: "d", AEPMWh: 100}}, []float64{1}, []ModelError{AssumedModelError(0.5)}); !math.IsNaN(w[0].P99MWh) || !(w[0].P90MWh > 0) {
		t.Errorf("model 0.5: P90 %g, P99 %g; want P99 null (z u > 1)", w[0].P90MWh, w[0].P99MWh)
	}
	if n, sd := InterannualPower([]YearRow{{PowerMeanKWm: 20}, {PowerMeanKWm: 30}, {PowerMeanKWm: 99, Excluded: true}}); n != 2 || math.Abs(sd-math.Sqrt(50)) > 1e-12 {
		t.Errorf("inter-annual power: %d years, std %g; want 2 and sqrt(50)", n, sd)
	}
}
