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
