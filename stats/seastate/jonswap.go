package seastate

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/mathext"
)

// JONSWAP peak-width parameters (Hasselmann et al. 1973; DNV-RP-C205 sec. 3.5.5).
const (
	jonswapSigmaLow  = 0.07 // f <= fp
	jonswapSigmaHigh = 0.09 // f > fp
)

// jonswapShape is the JONSWAP shape in x = f/fp (Hasselmann et al. 1973,
// "Measurements of wind-wave growth and swell decay during the Joint North
// Sea Wave Project", Dt. Hydrogr. Z. A8(12); DNV-RP-C205 sec. 3.5.5):
//
//	phi(x) = x^-5 exp(-5/4 x^-4) gamma^r(x),  r(x) = exp(-(x-1)^2 / (2 sigma^2)),
//	sigma = 0.07 for x <= 1, 0.09 for x > 1.
func jonswapShape(x, lnGamma float64) float64 {
	if x <= 0 {
		return 0
	}
	x4 := x * x * x * x
	sig := jonswapSigmaLow
	if x > 1 {
		sig = jonswapSigmaHigh
	}
	d := (x - 1) / sig
	return math.Exp(-1.25/x4+lnGamma*math.Exp(-0.5*d*d)) / (x4 * x)
}

// jonswapMoment returns I_n(gamma) = integral_0^inf x^n phi(x) dx for n < 4,
// the dimensionless moment of the JONSWAP shape. It splits phi into the
// Pierson-Moskowitz part, integrated in closed form with t = 5/4 x^-4,
//
//	integral_0^inf x^(n-5) exp(-5/4 x^-4) dx = 1/4 (5/4)^((n-4)/4) Gamma(1 - n/4),
//
// and the peak-enhancement part x^(n-5) exp(-5/4 x^-4) (gamma^r(x) - 1), which
// is negligible (below exp(-72) relative) outside 1 - 12 sigma_low < x <
// 1 + 12 sigma_high and is integrated there by 256-point Gauss-Legendre
// quadrature (gonum integrate/quad) on each side of the kink at x = 1.
func jonswapMoment(n int, gamma float64) float64 {
	nn := float64(n)
	pm := 0.25 * math.Pow(1.25, (nn-4)/4) * math.Gamma(1-nn/4)
	lg := math.Log(gamma)
	if lg == 0 {
		return pm
	}
	corr := func(x float64) float64 {
		x4 := x * x * x * x
		sig := jonswapSigmaLow
		if x > 1 {
			sig = jonswapSigmaHigh
		}
		d := (x - 1) / sig
		return math.Pow(x, nn-5) * math.Exp(-1.25/x4) * math.Expm1(lg*math.Exp(-0.5*d*d))
	}
	lo := quad.Fixed(corr, 1-12*jonswapSigmaLow, 1, 256, nil, 0)
	hi := quad.Fixed(corr, 1, 1+12*jonswapSigmaHigh, 256, nil, 0)
	return pm + lo + hi
}

// JONSWAP returns the JONSWAP variance density S(f) in m^2/Hz at the
// frequencies freqHz for significant wave height hm0 (m), peak period tp (s)
// and peak enhancement factor gamma (Hasselmann et al. 1973; DNV-RP-C205 sec.
// 3.5.5; gamma = 1 is the Pierson-Moskowitz spectrum):
//
//	S(f) = Hm0^2/16 * phi(f/fp) / (fp I_0(gamma)),  fp = 1/Tp,
//
// with phi the shape of jonswapShape. Normalisation: S is scaled so that the
// continuous integral of S over 0 < f < inf equals Hm0^2/16 exactly (the
// integral I_0 is computed by jonswapMoment), i.e. 4 sqrt(m0) = Hm0 for the
// continuous spectrum; a sum over a coarse or truncated grid gives slightly
// less. This replaces the approximate factor A_gamma = 1 - 0.287 ln(gamma) of
// DNV-RP-C205. Frequencies <= 0 get 0. hm0 < 0, tp <= 0 or gamma <= 0 (or
// any NaN) give a slice of NaN.
func JONSWAP(freqHz []float64, hm0, tp, gamma float64) []float64 {
	out := make([]float64, len(freqHz))
	if !(hm0 >= 0) || !(tp > 0) || !(gamma > 0) || math.IsInf(hm0+tp+gamma, 0) {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	fp := 1 / tp
	scale := hm0 * hm0 / 16 / (fp * jonswapMoment(0, gamma))
	lg := math.Log(gamma)
	for i, f := range freqHz {
		out[i] = scale * jonswapShape(f/fp, lg)
	}
	return out
}

// JONSWAPPeriodRatios returns Te/Tp, Tm01/Tp and Tm02/Tp of the continuous
// JONSWAP spectrum with peak enhancement gamma (see JONSWAP):
//
//	Te/Tp = I_-1/I_0,  Tm01/Tp = I_0/I_1,  Tm02/Tp = sqrt(I_0/I_2),
//
// with I_n from jonswapMoment. For gamma = 1 (Pierson-Moskowitz) the closed
// form is Te/Tp = Gamma(5/4) (5/4)^(-1/4) = 0.8572. Use it to set alpha in
// Te = alpha Tp for an assumed gamma.
func JONSWAPPeriodRatios(gamma float64) (teOverTp, tm01OverTp, tm02OverTp float64) {
	if !(gamma > 0) || math.IsInf(gamma, 0) {
		return math.NaN(), math.NaN(), math.NaN()
	}
	i0 := jonswapMoment(0, gamma)
	return jonswapMoment(-1, gamma) / i0, i0 / jonswapMoment(1, gamma), math.Sqrt(i0 / jonswapMoment(2, gamma))
}

// cosSpreadLogNorm returns ln G(s) for the cos-2s spreading function,
//
//	G(s) = 2^(2s-1) Gamma(s+1)^2 / (pi Gamma(2s+1))
//
// (Longuet-Higgins, Cartwright & Smith 1963, "Observations of the directional
// spectrum of sea waves using the motions of a floating buoy"; normalisation
// quoted from memory and checked in the tests by integrating D over the circle).
func cosSpreadLogNorm(s float64) float64 {
	ls1, _ := math.Lgamma(s + 1)
	l2s1, _ := math.Lgamma(2*s + 1)
	return (2*s-1)*math.Ln2 + 2*ls1 - l2s1 - math.Log(math.Pi)
}

// CosSpread returns the cos-2s directional spreading function in 1/rad at the
// directions dirDeg (degrees, nautical "from") for a mean direction
// meanFromDeg and spreading exponent s >= 0 (Longuet-Higgins et al. 1963):
//
//	D(theta) = G(s) |cos((theta - theta_m) / 2)|^(2s),
//
// with G(s) from cosSpreadLogNorm, so that the integral of D over the full
// circle is 1 (s = 0 is the uniform 1/(2 pi)). Multiply a 1-D spectrum in
// m^2/Hz by D to get a 2-D density in m^2/Hz/rad. s < 0 or NaN gives NaN.
func CosSpread(dirDeg []float64, meanFromDeg, s float64) []float64 {
	out := make([]float64, len(dirDeg))
	if !(s >= 0) || math.IsInf(s, 0) {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	lg := cosSpreadLogNorm(s)
	for i, d := range dirDeg {
		half := (d - meanFromDeg) * math.Pi / 360
		c := math.Abs(math.Cos(half))
		if c == 0 {
			out[i] = 0
			continue
		}
		out[i] = math.Exp(lg + 2*s*math.Log(c))
	}
	return out
}

// CosSpreadDirectionality returns the directionality coefficient
// JThetaMax / J of any spectrum whose directional distribution is the cos-2s
// function of CosSpread with exponent s at every frequency. Derivation (ours):
// J(theta) is J times the integral of D(theta') max(cos(theta - theta'), 0),
// largest at theta = theta_m because D is symmetric and unimodal about
// theta_m. With phi = theta' - theta_m and u = phi/2, cos phi = 2 cos^2 u - 1:
//
//	Dc = int_{-pi/2}^{pi/2} G cos^(2s)(phi/2) cos(phi) dphi
//	   = 2 G [2 C(2s+2) - C(2s)],   C(p) = int_{-pi/4}^{pi/4} cos^p u du,
//
// and with t = sin^2 u, C(p) = B(1/2; 1/2, (p+1)/2), the incomplete beta
// function B(x; a, b) = I_x(a, b) B(a, b) (I_x from gonum mathext.RegIncBeta).
// Special values: s = 0 gives 1/pi, s = 1 gives 1/4 + 1/pi; Dc -> 1 as s -> inf.
func CosSpreadDirectionality(s float64) float64 {
	if !(s >= 0) || math.IsInf(s, 0) {
		return math.NaN()
	}
	lg := cosSpreadLogNorm(s)
	incB := func(a, b float64) float64 { // B(1/2; a, b)
		la, _ := math.Lgamma(a)
		lb, _ := math.Lgamma(b)
		lab, _ := math.Lgamma(a + b)
		return mathext.RegIncBeta(a, b, 0.5) * math.Exp(la+lb-lab+lg)
	}
	return 2 * (2*incB(0.5, s+1.5) - incB(0.5, s+0.5))
}
