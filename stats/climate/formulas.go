package climate

import (
	"math"
	"math/big"

	"gonum.org/v1/gonum/stat/distuv"
)

// This file holds every formula of the package, each in one function whose
// comment gives the formula and its source.

// weightedMean returns the time-weighted mean
//
//	mean = sum(w_i x_i) / sum(w_i)
//
// from the integer sums s1 = sum(w_i q_i) (q_i = x_i * scale, rounded) and
// w = sum(w_i), in units of x (definition of the weighted arithmetic mean,
// e.g. numpy.average with weights). NaN when w = 0.
func weightedMean(s1 uint64, w uint64, scale float64) float64 {
	if w == 0 {
		return math.NaN()
	}
	return float64(s1) / float64(w) / scale
}

// weightedStd returns the time-weighted population standard deviation
//
//	var = sum(w_i (x_i - mean)^2) / sum(w_i) = (W S2 - S1^2) / W^2
//
// with W = sum w_i, S1 = sum w_i q_i, S2 = sum w_i q_i^2 (the ddof = 0
// definition, numpy.std / numpy.average). The numerator is formed exactly in
// big integers, so there is no cancellation however large the mean.
func weightedStd(s1 uint64, s2 u128, w uint64, scale float64) float64 {
	if w == 0 {
		return math.NaN()
	}
	W := new(big.Int).SetUint64(w)
	S1 := new(big.Int).SetUint64(s1)
	num := new(big.Int).Mul(W, s2.big())
	num.Sub(num, new(big.Int).Mul(S1, S1))
	if num.Sign() <= 0 {
		return 0
	}
	den := new(big.Int).Mul(W, W)
	v, _ := new(big.Float).SetPrec(128).Quo(new(big.Float).SetInt(num), new(big.Float).SetInt(den)).Float64()
	return math.Sqrt(v) / scale
}

// coefficientOfVariation returns CoV = std / mean (common practice; the
// ratio used for the variability of wave power, e.g. Cornett 2008). NaN when
// the mean is not positive.
func coefficientOfVariation(std, mean float64) float64 {
	if !(mean > 0) {
		return math.NaN()
	}
	return std / mean
}

// circularMeanDeg returns the mean direction of angles theta_i (degrees) with
// weights w_i,
//
//	theta_mean = atan2(sum w_i sin theta_i, sum w_i cos theta_i)
//
// in [0, 360), and the mean resultant length R = |sum w e^{i theta}| / sum w
// in [0, 1] (Mardia & Jupp, Directional Statistics, 2000, section 2.2;
// scipy.stats.circmean uses the same definition). The angle convention is
// kept: nautical "coming from", clockwise from north, in and out.
func circularMeanDeg(sumSin, sumCos int64, w uint64) (deg, r float64) {
	if w == 0 {
		return math.NaN(), math.NaN()
	}
	s, c := float64(sumSin)/qDir, float64(sumCos)/qDir
	deg = math.Atan2(s, c) * 180 / math.Pi
	if deg < 0 {
		deg += 360
	}
	if deg >= 360 {
		deg -= 360
	}
	return deg, math.Hypot(s, c) / float64(w)
}

// variabilityIndex returns
//
//	VI = (P_max - P_min) / P_year
//
// where P_max and P_min are the mean powers of the most and least energetic
// month (monthly variability index, MVI) or season (seasonal variability
// index, SVI) and P_year the annual mean power (Cornett, A. M., 2008, "A
// global wave energy resource assessment", Proc. ISOPE; definition quoted
// from memory).
func variabilityIndex(pMax, pMin, pYear float64) float64 {
	if !(pYear > 0) {
		return math.NaN()
	}
	return (pMax - pMin) / pYear
}

// HoursPerYear is the year length used for annual energy: 365.25 days, as in
// IEC TS 62600-100 (from memory).
const HoursPerYear = 8766.0

// annualEnergyMWh returns the mean annual energy production
//
//	AEP = P_mean * 8766 h / 1000   (MWh/yr, P_mean in kW)
//
// where P_mean = sum_ij P_ij f_ij is the mean power over the joint occurrence
// f_ij of the sea states (IEC TS 62600-100, mean annual energy production
// from a power matrix and a scatter diagram; from memory). Summing the
// matrix power of every time step, weighted by its duration, is the same sum
// taken one step at a time.
func annualEnergyMWh(meanKW float64) float64 { return meanKW * HoursPerYear / 1000 }

// capacityFactor returns CF = P_mean / P_rated (common practice).
func capacityFactor(meanKW, ratedKW float64) float64 {
	if !(ratedKW > 0) {
		return math.NaN()
	}
	return meanKW / ratedKW
}

// histPercentile returns the p-th percentile (0..100) of a weighted
// histogram: the value where the cumulative weight reaches p/100 of the
// total, interpolated linearly inside the bin (uniform density within a
// bin; the grouped-data percentile of descriptive statistics, common
// practice). edges(i) gives bin i's lower and upper edge. The result is
// clamped to the observed [lo, hi]. It is within one bin width of the sample
// percentile.
func histPercentile(counts []uint32, total uint64, p float64, edges func(int) (float64, float64), lo, hi float64) float64 {
	if total == 0 {
		return math.NaN()
	}
	target := p / 100 * float64(total)
	var cum float64
	v := hi
	for i, c := range counts {
		if c == 0 {
			continue
		}
		next := cum + float64(c)
		if next >= target {
			a, b := edges(i)
			if math.IsInf(b, 1) {
				b = hi
			}
			v = a + (b-a)*(target-cum)/float64(c)
			break
		}
		cum = next
	}
	return math.Min(math.Max(v, lo), hi)
}

// powerBinEdges returns the edges (kW/m) of bin i of the power histogram with
// 2^bits bins per octave: bins 0..2^bits-1 split [0, 1) evenly, then octave
// e (>= 0) holds bins [2^e (1 + k 2^-bits), 2^e (1 + (k+1) 2^-bits)). This
// is the float layout of an exponent plus the top mantissa bits (a log-linear
// histogram; common practice). The open bin n has upper edge +Inf.
func powerBinEdges(i int, bits uint, n int) (float64, float64) {
	sub := 1 << bits
	if i >= n {
		return math.Ldexp(1, n/sub-1), math.Inf(1)
	}
	if i < sub {
		return float64(i) / float64(sub), float64(i+1) / float64(sub)
	}
	e := i/sub - 1
	k := i % sub
	base := math.Ldexp(1, e)
	return base * (1 + float64(k)/float64(sub)), base * (1 + float64(k+1)/float64(sub))
}

// yearEnergyMWh returns the energy of one device in one analysis year
//
//	E_year = P_year * H_year / 1000   (MWh, P_year in kW, H_year in h)
//
// where P_year is the duration-weighted mean device power over the year's
// steps with a valid Hm0 and matrix period and H_year the hours of the year
// in the data's calendar: time the record does not cover is taken at the
// year's mean (its share is the row's coverage). The same definition as
// annualEnergyMWh, over one year's own length (common practice).
func yearEnergyMWh(meanKW, hours float64) float64 { return meanKW * hours / 1000 }

// sampleStd returns the mean and the sample standard deviation (ddof 1, as
// numpy.std(x, ddof=1)) of x, sqrt(sum((x - mean)^2) / (n - 1)): the
// estimate of the year-to-year spread that the standard error of a mean
// uses (common practice). NaN below two values.
func sampleStd(x []float64) (float64, float64) {
	if len(x) < 2 {
		return math.NaN(), math.NaN()
	}
	m, sd := meanStd(x)
	n := float64(len(x))
	return m, sd * math.Sqrt(n/(n-1))
}

// meanUncertainty returns the relative standard uncertainty of a mean of
// n independent years whose relative year-to-year standard deviation is
// rel:
//
//	u = rel / sqrt(n)
//
// the standard error of the mean (common practice). With n the complete
// years of the record it is the uncertainty of the long-term mean from the
// record's length; with n the years of a future period, the variability
// of that period's mean about the long-term mean. Both treat years as
// independent (no trend, no autocorrelation between years).
func meanUncertainty(rel float64, n float64) float64 {
	if !(n > 0) {
		return math.NaN()
	}
	return rel / math.Sqrt(n)
}

// combinedUncertainty returns the root-sum-square
//
//	u = sqrt(sum u_i^2)
//
// of independent relative standard uncertainties (the law of propagation
// of uncertainty for uncorrelated inputs, JCGM 100:2008 "GUM" 5.1.2;
// quoted from memory). NaN when any component is NaN.
func combinedUncertainty(u ...float64) float64 {
	var s float64
	for _, v := range u {
		s += v * v
	}
	return math.Sqrt(s)
}

// ModelUncertainty returns the model component of an energy band from a
// validation: the relative bias b of the hindcast's mean device power at a
// station and its standard error se,
//
//	u_model = sqrt(b^2 + se^2)
//
// The bias is not corrected in the raw figures, so its size counts as an
// error of the P50 together with the uncertainty of its estimate; adding a
// known but uncorrected bias to the uncertainty in quadrature is one of the
// treatments discussed for uncorrected systematic errors (JCGM 100:2008
// "GUM" F.2.4.5; quoted from memory), common practice in screening
// assessments. NaN when either is NaN.
func ModelUncertainty(bias, se float64) float64 { return combinedUncertainty(bias, se) }

// exceedanceEnergy returns the energy exceeded with probability prob
// (0.9 for P90) for a normal error of relative standard deviation u about
// the central estimate p50:
//
//	P_x = P50 * (1 - z_x * u),   z_x = Phi^-1(prob)
//
// (z_90 = 1.2816, z_99 = 2.3263; Phi^-1 from gonum's distuv.UnitNormal).
// Common practice in energy-yield assessment (quoted from memory). NaN when
// z u >= 1: the normal model then gives no positive energy and the figure
// is not published.
func exceedanceEnergy(p50, u, prob float64) float64 {
	f := 1 - distuv.UnitNormal.Quantile(prob)*u
	if !(f > 0) {
		return math.NaN()
	}
	return p50 * f
}
