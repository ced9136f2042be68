package climate

import (
	"math"
	"testing"
)

// TestMonthlyYieldByHand: each device's energy by month on a record made
// by hand (360-day calendar, months of 720 h). January 2001 hourly in sea
// state A (Hm0 1.25 m, Te 6.5 s); February 2001 half hourly in A, half
// 3-hourly in B (Hm0 2.25 m, Te 8.5 s); January 2002 only its first ten
// days, hourly in B (coverage 1/3, below the default 0.8: excluded). The
// device (testDevice's bin matrix, P = min(750, 20 Hm0^2 Te / 4) kW at the
// bin centres) gives pa = 50.78125 kW in A and pb = 215.15625 kW in B.
// Expected (common practice: energy = duration-weighted mean power x the
// month's hours): February's mean is (pa + pb) / 2 (weighted by duration;
// by count it would be (360 pa + 120 pb) / 480); January's climatology
// pools only 2001 (pa, 720 h, coverage 1 of 2 year-months); every month
// of the spans has a row, March 2001 without data null and excluded.
func TestMonthlyYieldByHand(t *testing.T) {
	cfg := mergeConfig(t)
	pa, pb := 20*1.25*1.25*6.5/4, 20*2.25*2.25*8.5/4
	var st []Step
	add := func(y, m int, h0, dt float64, n int, hm0, te float64) {
		for i := 0; i < n; i++ {
			st = append(st, Step{Year: y, Month: m, Hours: h0 + dt*float64(i), DtHours: dt, J: 1e4, Hm0: hm0, Te: te, Tp: te, DirDeg: 200})
		}
	}
	add(2001, 1, 0, 1, 720, 1.25, 6.5)
	add(2001, 2, 720, 1, 360, 1.25, 6.5)
	add(2001, 2, 1080, 3, 120, 2.25, 8.5)
	add(2002, 1, 8640, 1, 240, 2.25, 8.5)
	s := feed(cfg, st)
	rows := s.MonthlyYieldIn([][2]int{{2001 * 12, 2001*12 + 2}, {2002 * 12, 2002 * 12}})
	// 2 devices x (12 climatology + Jan, Feb, Mar 2001 + Jan 2002)
	if len(rows) != 2*16 {
		t.Fatalf("%d rows, want 32", len(rows))
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if math.IsNaN(want) != math.IsNaN(got) || (!math.IsNaN(want) && math.Abs(got-want) > 1e-9*math.Max(1, math.Abs(want))) {
			t.Errorf("%s: %g, want %g", what, got, want)
		}
	}
	r := rows[:16] // the bin device
	near("Jan climatology power", r[0].MeanPowerKW, pa)
	near("Jan climatology energy", r[0].EnergyMWh, pa*720/1000)
	near("Jan climatology coverage", r[0].CoverageFrac, 0.5)
	if r[0].YearsUsed != 1 || r[0].Year != 0 || r[0].Month != 1 {
		t.Errorf("Jan climatology %+v, want 1 year used", r[0])
	}
	near("Feb climatology energy", r[1].EnergyMWh, (pa+pb)/2*720/1000)
	near("Mar climatology energy", r[2].EnergyMWh, math.NaN())
	jan, feb, mar, jan2 := r[12], r[13], r[14], r[15]
	if jan.Year != 2001 || jan.Month != 1 || feb.Month != 2 || mar.Month != 3 || jan2.Year != 2002 {
		t.Fatalf("year-month rows out of order: %+v", r[12:])
	}
	near("Jan 2001 energy", jan.EnergyMWh, pa*720/1000)
	near("Feb 2001 power", feb.MeanPowerKW, (pa+pb)/2)
	near("Feb 2001 valid hours", feb.ValidHours, 720)
	near("Mar 2001 energy", mar.EnergyMWh, math.NaN())
	near("Jan 2002 energy", jan2.EnergyMWh, pb*720/1000)
	near("Jan 2002 coverage", jan2.CoverageFrac, 1.0/3)
	if jan.Excluded || feb.Excluded || !mar.Excluded || !jan2.Excluded {
		t.Errorf("excluded: Jan %v Feb %v Mar %v Jan 2002 %v, want false false true true", jan.Excluded, feb.Excluded, mar.Excluded, jan2.Excluded)
	}
	// split in two and merged: the same rows
	a, b := feed(cfg, st[:900]), feed(cfg, st[900:])
	if err := a.Merge(b); err != nil {
		t.Fatal(err)
	}
	for i, m := range a.MonthlyYieldIn([][2]int{{2001 * 12, 2001*12 + 2}, {2002 * 12, 2002 * 12}}) {
		if m.EnergyMWh != rows[i].EnergyMWh && !(math.IsNaN(m.EnergyMWh) && math.IsNaN(rows[i].EnergyMWh)) {
			t.Errorf("row %d merged %+v, whole %+v", i, m, rows[i])
		}
	}
}
