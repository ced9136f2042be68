package synth

import "math"

// Spectrum shape constants of JONSWAP (Hasselmann et al. 1973, Dtsch. Hydrogr.
// Z. Suppl. A8(12)): peak width sigma_a below the peak, sigma_b above it.
const (
	jonswapSigmaA = 0.07
	jonswapSigmaB = 0.09
)

// jonswapShapeIntegral returns I(gamma) = integral over x in (0, inf) of
// x^-5 exp(-5/4 x^-4) gamma^r(x) dx, r(x) = exp(-(x-1)^2 / (2 sigma^2)),
// the m0 of the unscaled JONSWAP shape with fp = 1. For gamma = 1 it is
// exactly 1/5 (the integrand is d/dx [exp(-5/4 x^-4) / 5]). It is computed by
// composite Simpson's rule on [0.2, 1] and [1, 30] (split at the peak, where
// sigma changes) with 30000 panels each, plus the analytic tail
// (1 - exp(-5/4 30^-4)) / 5 above 30, where gamma^r = 1 to double precision;
// below 0.2 the integrand is under 1e-300.
func jonswapShapeIntegral(gamma float64) float64 {
	simpson := func(a, b float64, n int) float64 {
		h := (b - a) / float64(n)
		sum := jonswapShape(a, gamma) + jonswapShape(b, gamma)
		for i := 1; i < n; i++ {
			w := 2.0
			if i%2 == 1 {
				w = 4
			}
			sum += w * jonswapShape(a+float64(i)*h, gamma)
		}
		return sum * h / 3
	}
	const top = 30.0
	return simpson(0.2, 1, 30000) + simpson(1, top, 30000) + (1-math.Exp(-1.25*math.Pow(top, -4)))/5
}

// jonswapShape is x^-5 exp(-5/4 x^-4) gamma^r(x) with x = f/fp (see jonswapS).
func jonswapShape(x, gamma float64) float64 {
	sigma := jonswapSigmaA
	if x > 1 {
		sigma = jonswapSigmaB
	}
	r := math.Exp(-(x - 1) * (x - 1) / (2 * sigma * sigma))
	return math.Pow(x, -5) * math.Exp(-1.25*math.Pow(x, -4)) * math.Pow(gamma, r)
}

// jonswapS is the JONSWAP frequency spectrum (m2 s, i.e. m2/Hz):
//
//	S(f) = Hm0^2/16 * fp^-1 * x^-5 exp(-5/4 x^-4) gamma^exp(-(x-1)^2/(2 sigma^2)) / I(gamma),
//	x = f/fp, fp = 1/Tp, sigma = 0.07 for f <= fp and 0.09 for f > fp,
//
// the shape of Hasselmann et al. (1973) with the Phillips constant replaced
// by the normalisation I(gamma) (jonswapShapeIntegral) so that the continuous
// spectrum has m0 = Hm0^2/16 exactly. For gamma = 1 it reduces to the
// Pierson-Moskowitz (Bretschneider) form (5/16) Hm0^2 fp^4 f^-5 exp(-5/4 (fp/f)^4),
// as written in DNV-RP-C205 (2010) section 3.5.5 (frequency form; from memory).
// norm must be jonswapShapeIntegral(gamma).
func jonswapS(f, hm0, tp, gamma, norm float64) float64 {
	if f <= 0 {
		return 0
	}
	fp := 1 / tp
	return hm0 * hm0 / 16 / fp * jonswapShape(f/fp, gamma) / norm
}

// spreadingCos2s is the directional spreading function (rad^-1)
//
//	D(theta) = G(s) cos^2s((theta - theta_m)/2),  G(s) = Gamma(s+1) / (2 sqrt(pi) Gamma(s+1/2)),
//
// of Longuet-Higgins, Cartwright and Smith (1963), normalised so that its
// integral over a full circle is 1 (the integral of cos^2s(x/2) over (-pi, pi)
// is 2 sqrt(pi) Gamma(s+1/2)/Gamma(s+1)). Angles in degrees; theta and
// theta_m in the same convention (here: direction waves come from).
func spreadingCos2s(thetaDeg, meanDeg, s float64) float64 {
	lg1, _ := math.Lgamma(s + 1)
	lg2, _ := math.Lgamma(s + 0.5)
	g := math.Exp(lg1-lg2) / (2 * math.Sqrt(math.Pi))
	c := math.Abs(math.Cos((thetaDeg - meanDeg) * math.Pi / 360))
	return g * math.Pow(c, 2*s)
}

// spectralAxes returns the frequency axis f_n = F0 FRatio^n (Hz) and the
// direction axis DirStart + k 360/NDir wrapped to [0, 360) (degrees).
func (sp *Spectra) axes() (freq, dir []float64) {
	freq = make([]float64, sp.NFreq)
	for n := range freq {
		freq[n] = sp.F0 * math.Pow(sp.FRatio, float64(n))
	}
	dir = make([]float64, sp.NDir)
	for k := range dir {
		dir[k] = wrap360(sp.DirStart + float64(k)*360/float64(sp.NDir))
	}
	return freq, dir
}
