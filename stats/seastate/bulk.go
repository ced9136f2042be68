package seastate

import "math"

// BulkPowerDeep returns the deep-water wave power per metre of crest (W/m)
// from the significant wave height hm0 (m) and energy period te (s):
//
//	J = rho g^2 Hm0^2 Te / (64 pi)
//
// (IEC TS 62600-101; it is the spectral power with the deep-water group
// velocity cg = g / (4 pi f), since then rho g sum cg S df = rho g^2 m_-1 /
// (4 pi) and m_-1 = Te Hm0^2 / 16). With rho = 1025 kg/m^3 and g = 9.81 m/s^2
// the coefficient is 490.6 W per m of crest per m^2 s, the familiar
// "0.49 kW/m per m^2 s". A non-positive or non-finite te gives NaN.
func BulkPowerDeep(hm0, te float64, c Consts) float64 {
	if !(te > 0) || math.IsInf(te, 0) {
		return math.NaN()
	}
	return c.Rho * c.G * c.G * hm0 * hm0 * te / (64 * math.Pi)
}

// BulkPowerFinite returns the wave power per metre of crest (W/m) from hm0 (m)
// and te (s) in water of depth h (m), taking the group velocity of the
// frequency 1/Te as representative of the sea state:
//
//	J = rho g Hm0^2 cg(1/Te, h) / 16
//
// (IEC TS 62600-101 bulk approximation; cg from GroupVelocity). It equals
// BulkPowerDeep in deep water (h NaN, +Inf or <= 0). It is an approximation:
// with a real spectrum the group velocity varies across frequencies, and the
// spectral J from Kernel.Params is preferred when spectra exist. A
// non-positive or non-finite te gives NaN.
func BulkPowerFinite(hm0, te, h float64, c Consts) float64 {
	if !(te > 0) || math.IsInf(te, 0) {
		return math.NaN()
	}
	return c.Rho * c.G * hm0 * hm0 * GroupVelocity(1/te, h, c.G) / 16
}

// BulkStep is the power of one step of a run on bulk parameters (the
// bulk-power choice): the energy period
//
//	Te = te               when the record has one (haveTe),
//	Te = alpha Tp         otherwise (TeFromTp, the IEC TS 62600-101 fallback),
//
// and the power per metre of crest (W/m)
//
//	J = rho g Hm0^2 cg(1/Te, h) / 16
//
// (IEC TS 62600-101 bulk approximation; BulkDepth.Power, cg from the G(y)
// table, exact deep-water value rho g^2 Hm0^2 Te / (64 pi) in deep water).
// J is NaN when Hm0 is missing or negative, Te is missing or not positive,
// or the step is dry (NewBulkDepthAt). It returns the Te used and J.
func BulkStep(d BulkDepth, hm0, te, tp float64, haveTe bool, alpha float64, c Consts) (teUsed, j float64) {
	if !haveTe {
		te = TeFromTp(tp, alpha)
	}
	if hm0 >= 0 && te > 0 && !d.dry {
		return te, d.Power(hm0, te, c)
	}
	return te, math.NaN()
}
