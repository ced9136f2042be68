// Package validate compares a modelled series with a measured one, pair by
// pair: the error statistics of a hindcast against a station's record (bias,
// RMSE, scatter index, correlation, regression slopes, quantiles for Q-Q
// plots, circular statistics for directions), over the whole record and over
// subsets of it (calendar months, seasons, the storm tail).
//
// It works on plain slices of paired values already matched in time. It must
// not know about NetCDF, files, grids, stations, time axes or tables: the
// co-location and matching are done by its caller (pipelines/validation/validate.go).
package validate

import (
	"math"
	"sort"
)

// Stats are the error statistics of paired values (model m_i, measured o_i),
// over the N pairs where both are finite. A statistic that cannot be formed
// (no pair, a zero denominator) is NaN.
type Stats struct {
	N         int
	MeanObs   float64 // mean of o
	MeanModel float64 // mean of m
	// Bias = mean(m - o); RMSE = sqrt(mean((m - o)^2)).
	Bias, RMSE float64
	// ScatterIndex = RMSE / mean(o).
	ScatterIndex float64
	// R is Pearson's correlation coefficient.
	R float64
	// SlopeOrigin is the least-squares slope of m = b o through the origin.
	SlopeOrigin float64
	// SlopeSymmetric is sqrt(sum m^2 / sum o^2).
	SlopeSymmetric float64
}

// finitePairs returns the indices where both m and o are finite.
func finitePairs(m, o []float64) []int {
	var idx []int
	for i := range o {
		if i < len(m) && isFinite(m[i]) && isFinite(o[i]) {
			idx = append(idx, i)
		}
	}
	return idx
}

func isFinite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Paired returns the error statistics of model m against measured o (same
// length; pairs with a NaN or infinite side are left out). Definitions
// (common practice in wave-model validation; e.g. Bryant, Hesser and Jensen
// 2016, "Evaluation statistics computed for the Wave Information Studies
// (WIS)", ERDC/CHL CHETN-I-91, US Army Engineer Research and Development
// Center, quoted from memory):
//
//	bias          = (1/N) sum (m_i - o_i)
//	RMSE          = sqrt((1/N) sum (m_i - o_i)^2)
//	scatter index = RMSE / mean(o)                (as defined in issue 18; some
//	                authors use the bias-corrected RMSE instead)
//	r             = sum (m_i - mean m)(o_i - mean o) /
//	                sqrt(sum (m_i - mean m)^2 sum (o_i - mean o)^2)   (Pearson)
//	slope_origin  = sum m_i o_i / sum o_i^2       (least squares of m = b o)
//	slope_sym     = sqrt(sum m_i^2 / sum o_i^2)   (the "symmetric slope" of
//	                the WIS note above: exchanging model and measurement gives
//	                its reciprocal, unlike slope_origin)
//
// Sums use compensated (Neumaier) summation of the pairs in order.
func Paired(m, o []float64) Stats {
	idx := finitePairs(m, o)
	s := Stats{N: len(idx)}
	nan := math.NaN()
	if s.N == 0 {
		return Stats{MeanObs: nan, MeanModel: nan, Bias: nan, RMSE: nan, ScatterIndex: nan, R: nan, SlopeOrigin: nan, SlopeSymmetric: nan}
	}
	n := float64(s.N)
	var so, sm, sd, sd2 kahan
	for _, i := range idx {
		so.add(o[i])
		sm.add(m[i])
		d := m[i] - o[i]
		sd.add(d)
		sd2.add(d * d)
	}
	s.MeanObs, s.MeanModel = so.sum()/n, sm.sum()/n
	s.Bias = sd.sum() / n
	s.RMSE = math.Sqrt(sd2.sum() / n)
	s.ScatterIndex = ratio(s.RMSE, s.MeanObs)
	var smo, soo, smm, cmo, coo, cmm kahan
	for _, i := range idx {
		smo.add(m[i] * o[i])
		soo.add(o[i] * o[i])
		smm.add(m[i] * m[i])
		dm, do := m[i]-s.MeanModel, o[i]-s.MeanObs
		cmo.add(dm * do)
		coo.add(do * do)
		cmm.add(dm * dm)
	}
	s.R = ratio(cmo.sum(), math.Sqrt(coo.sum()*cmm.sum()))
	s.SlopeOrigin = ratio(smo.sum(), soo.sum())
	s.SlopeSymmetric = math.Sqrt(ratio(smm.sum(), soo.sum()))
	return s
}

func ratio(a, b float64) float64 {
	if b == 0 || math.IsNaN(b) {
		return math.NaN()
	}
	return a / b
}

// kahan is Neumaier's compensated sum (Neumaier 1974, "Rundungsfehleranalyse
// einiger Verfahren zur Summation endlicher Summen", ZAMM 54).
type kahan struct{ s, c float64 }

func (k *kahan) add(x float64) {
	t := k.s + x
	if math.Abs(k.s) >= math.Abs(x) {
		k.c += (k.s - t) + x
	} else {
		k.c += (x - t) + k.s
	}
	k.s = t
}

func (k *kahan) sum() float64 { return k.s + k.c }

// Circular returns the statistics of directions in degrees (model m,
// measured o; pairs with a non-finite side left out): N, the circular means
// of each side, the circular bias and the circular RMSE. The other fields
// are NaN. With d_i = wrap(m_i - o_i) the difference wrapped to
// [-180, 180) degrees:
//
//	circular mean of x = atan2(sum sin x_i, sum cos x_i), in [0, 360)
//	circular bias      = atan2(sum sin d_i, sum cos d_i), in [-180, 180)
//	circular RMSE      = sqrt((1/N) sum d_i^2)
//
// (Mardia and Jupp 2000, Directional Statistics, sec. 2.2.1 for the mean
// direction; the RMSE of wrapped differences is common practice.) The mean
// of a side whose resultant length is zero is NaN.
func Circular(m, o []float64) Stats {
	nan := math.NaN()
	idx := finitePairs(m, o)
	s := Stats{N: len(idx), ScatterIndex: nan, R: nan, SlopeOrigin: nan, SlopeSymmetric: nan}
	if s.N == 0 {
		s.MeanObs, s.MeanModel, s.Bias, s.RMSE = nan, nan, nan, nan
		return s
	}
	mm := make([]float64, len(idx))
	oo := make([]float64, len(idx))
	dd := make([]float64, len(idx))
	var d2 kahan
	for k, i := range idx {
		mm[k], oo[k] = m[i], o[i]
		dd[k] = WrapDeg(m[i] - o[i])
		d2.add(dd[k] * dd[k])
	}
	s.MeanModel = math.Mod(CircularMeanDeg(mm)+360, 360)
	s.MeanObs = math.Mod(CircularMeanDeg(oo)+360, 360)
	s.Bias = WrapDeg(CircularMeanDeg(dd))
	s.RMSE = math.Sqrt(d2.sum() / float64(len(idx)))
	return s
}

// WrapDeg wraps an angle difference to [-180, 180) degrees.
func WrapDeg(d float64) float64 {
	d = math.Mod(d+180, 360)
	if d < 0 {
		d += 360
	}
	return d - 180
}

// CircularMeanDeg is the mean direction atan2(sum sin x, sum cos x) of
// angles in degrees (Mardia and Jupp 2000, sec. 2.2.1), in (-180, 180]; NaN
// for no angle or a zero resultant.
func CircularMeanDeg(x []float64) float64 {
	var s, c kahan
	for _, v := range x {
		r := v * math.Pi / 180
		s.add(math.Sin(r))
		c.add(math.Cos(r))
	}
	if len(x) == 0 || math.Hypot(s.sum(), c.sum()) < 1e-12*float64(len(x)) {
		return math.NaN()
	}
	return math.Atan2(s.sum(), c.sum()) * 180 / math.Pi
}

// Quantile returns the p-quantile (0 <= p <= 1) of the finite values of x by
// linear interpolation between order statistics, Hyndman and Fan (1996,
// "Sample quantiles in statistical packages", Am. Stat. 50(4)) definition 7:
// with the n sorted values x_(1..n) and h = (n - 1) p, Q = x_(floor h) +
// (h - floor h)(x_(floor h + 1) - x_(floor h)) (0-based). It is numpy's
// default ("linear") and R's type 7. NaN when x has no finite value.
func Quantile(x []float64, p float64) float64 {
	return Quantiles(x, []float64{p})[0]
}

// Quantiles is Quantile for several probabilities, sorting x once.
func Quantiles(x []float64, ps []float64) []float64 {
	v := make([]float64, 0, len(x))
	for _, a := range x {
		if isFinite(a) {
			v = append(v, a)
		}
	}
	sort.Float64s(v)
	out := make([]float64, len(ps))
	for k, p := range ps {
		out[k] = sortedQuantile(v, p)
	}
	return out
}

func sortedQuantile(v []float64, p float64) float64 {
	n := len(v)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := float64(n-1) * p
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return v[n-1]
	}
	return v[lo] + (h-float64(lo))*(v[lo+1]-v[lo])
}

// QQPercentiles are the percentiles of a Q-Q comparison: 1, 2, ..., 99.
func QQPercentiles() []float64 {
	p := make([]float64, 99)
	for i := range p {
		p[i] = float64(i + 1)
	}
	return p
}

// QQ returns the quantiles at QQPercentiles of each side, over the pairs
// where both sides are finite (so both come from the same times).
func QQ(m, o []float64) (model, obs []float64) {
	idx := finitePairs(m, o)
	mm := make([]float64, len(idx))
	oo := make([]float64, len(idx))
	for k, i := range idx {
		mm[k], oo[k] = m[i], o[i]
	}
	ps := QQPercentiles()
	for i := range ps {
		ps[i] /= 100
	}
	return Quantiles(mm, ps), Quantiles(oo, ps)
}

// BilinearWeights are the weights of the four cells around a point at the
// fractional position (a, b), 0 <= a, b <= 1, between the centres of a
// regular grid, in the order (x0, y0), (x1, y0), (x0, y1), (x1, y1):
//
//	w = (1 - a)(1 - b), a (1 - b), (1 - a) b, a b
//
// (bilinear interpolation; common practice). They sum to 1.
func BilinearWeights(a, b float64) [4]float64 {
	return [4]float64{(1 - a) * (1 - b), a * (1 - b), (1 - a) * b, a * b}
}

// WeightedMean is the weighted mean of x, sum(w x) / sum(w), or for angles
// in degrees (circular) the weighted mean direction atan2(sum w sin x,
// sum w cos x) in [0, 360) (Mardia and Jupp 2000, sec. 2.2.1, with
// weights); NaN when a value is missing (NaN) or the weights sum to 0. The
// sums run in the order given.
func WeightedMean(x, w []float64, circular bool) float64 {
	var sx, sy, sw float64
	for i, v := range x {
		if math.IsNaN(v) {
			return math.NaN()
		}
		if circular {
			sx += w[i] * math.Cos(v*math.Pi/180)
			sy += w[i] * math.Sin(v*math.Pi/180)
		} else {
			sx += w[i] * v
		}
		sw += w[i]
	}
	switch {
	case sw == 0:
		return math.NaN()
	case circular:
		return math.Mod(math.Atan2(sy, sx)*180/math.Pi+360, 360)
	}
	return sx / sw
}
