package seastate

import (
	"math"
	"testing"
)

// Deep-water coefficient rho g^2 / (64 pi) = 490.6 W/m per m^2 s for seawater
// (rho 1025, g 9.81): the "about 0.49 kW per metre of crest per m^2 s" of
// IEC TS 62600-101 and common practice; power grows with Hm0^2.
func TestBulkPowerDeepCoefficient(t *testing.T) {
	c := BulkPowerDeep(1, 1, DefaultConsts)
	if math.Abs(c-490.6) > 0.05 {
		t.Errorf("rho g^2/(64 pi) = %.3f W/m/(m^2 s), want 490.6 (about 0.49 kW, common practice)", c)
	}
	relClose(t, "J(2 m, 8 s)/J(1 m, 8 s)", BulkPowerDeep(2, 8, DefaultConsts)/BulkPowerDeep(1, 8, DefaultConsts), 4, 1e-15, "J ~ Hm0^2 (common practice)")
	// a 2 m, 8 s deep-water sea: about 15.7 kW/m (0.49 * 4 * 8, common practice)
	relClose(t, "J(2 m, 8 s)", BulkPowerDeep(2, 8, DefaultConsts), 0.4906*4*8*1000, 2e-4, "0.49 Hm0^2 Te kW/m")
	for _, h := range []float64{math.Inf(1), 0, math.NaN()} {
		relClose(t, "finite formula in deep water", BulkPowerFinite(2.5, 9, h, DefaultConsts), BulkPowerDeep(2.5, 9, DefaultConsts), 1e-15, "cg = g Te/(4 pi)")
	}
	for _, te := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if !math.IsNaN(BulkPowerDeep(1, te, DefaultConsts)) || !math.IsNaN(BulkPowerFinite(1, te, 20, DefaultConsts)) {
			t.Errorf("te = %v: want NaN", te)
		}
	}
	// shallow water: cg -> sqrt(g h), J -> rho g Hm0^2 sqrt(g h) / 16
	// (kh = 0.0142 here; cg/sqrt(gh) = 1 - O((kh)^2), tolerance 2 (kh)^2)
	relClose(t, "J shallow", BulkPowerFinite(1, 200, 2, DefaultConsts), 1025*9.81*math.Sqrt(9.81*2)/16, 4e-4, "shallow-water limit")
}

// BulkStep is the run's choice of bulk power: Te from the record or alpha Tp
// (IEC TS 62600-101), J = rho g Hm0^2 cg(1/Te, h) / 16 with the exact group
// velocity (BulkPowerFinite, dispersion solved to machine precision and
// checked against scipy in dispersion_test.go) within the table's error, and
// no power for a missing or negative Hm0, a missing Te or a dry step.
func TestBulkStep(t *testing.T) {
	c := DefaultConsts
	d := NewBulkDepth(20, c.G)
	te, j := BulkStep(d, 2, 8, math.NaN(), true, 0.9, c)
	if te != 8 {
		t.Errorf("Te used %v, want 8", te)
	}
	relClose(t, "J(2 m, 8 s, 20 m)", j, BulkPowerFinite(2, 8, 20, c), 1e-9, "BulkPowerFinite (exact cg)")
	te, j = BulkStep(d, 2, math.NaN(), 10, false, 0.9, c)
	relClose(t, "Te from Tp", te, 9, 1e-15, "Te = 0.9 Tp")
	relClose(t, "J from 0.9 Tp", j, BulkPowerFinite(2, 9, 20, c), 1e-9, "BulkPowerFinite (exact cg)")
	_, j = BulkStep(NewBulkDepthAt(math.Inf(1), c.G), 2, 8, 0, true, 0.9, c)
	relClose(t, "deep water", j, 0.4906*4*8*1000, 2e-4, "0.49 Hm0^2 Te kW/m (common practice)")
	for _, x := range []struct {
		what        string
		d           BulkDepth
		hm0, te, tp float64
		haveTe      bool
	}{
		{"negative Hm0", d, -0.1, 8, 9, true},
		{"missing Hm0", d, math.NaN(), 8, 9, true},
		{"missing Te (Tp not used when the record has Te)", d, 2, math.NaN(), 9, true},
		{"missing Tp without Te", d, 2, 8, math.NaN(), false},
		{"dry step (depth 0)", NewBulkDepthAt(0, c.G), 2, 8, 9, true},
		{"dry step (depth missing)", NewBulkDepthAt(math.NaN(), c.G), 2, 8, 9, true},
	} {
		if _, j := BulkStep(x.d, x.hm0, x.te, x.tp, x.haveTe, 0.9, c); !math.IsNaN(j) {
			t.Errorf("%s: J = %v, want NaN (no power)", x.what, j)
		}
	}
}
