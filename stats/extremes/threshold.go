package extremes

import "math"

// LadderQuantiles are the quantiles of a cell's Hm0 at which the threshold
// diagnostics are evaluated (common practice: a ladder through the upper
// percentiles around the usual 0.99 choice).
var LadderQuantiles = []float64{0.95, 0.96, 0.97, 0.98, 0.99, 0.995}

// ThresholdRow is one rung of the threshold diagnostics of a cell: the mean
// residual life and the GPD shape and modified scale of the storm peaks above
// one threshold. Above a threshold where the GPD holds, the mean excess is
// linear in u and the shape and modified scale are constant (Coles 2001,
// sections 4.3.1 and 4.3.4); a user picks the lowest threshold beyond which
// they are stable within their intervals.
type ThresholdRow struct {
	Quantile  float64 // the quantile of Hm0 that gave the threshold
	Threshold float64 // m
	N         int     // storm peaks above the threshold
	// MeanExcess is the mean of x - u over the peaks x > u, with the 95%
	// interval MeanExcess -+ 1.96 s/sqrt(N), s the sample standard deviation
	// of the excesses (Coles 2001, section 4.3.1, mean residual life plot).
	MeanExcess, MeanExcessLo, MeanExcessHi float64
	// Shape is the GPD maximum-likelihood shape with its 95% delta-method interval.
	Shape, ShapeLo, ShapeHi float64
	// ModScale is the modified scale sigma* = sigma - xi u, with variance
	// grad' V grad, grad = (1, -u), V the covariance of (sigma, xi) (Coles 2001,
	// section 4.3.4), and its 95% interval.
	ModScale, ModScaleLo, ModScaleHi float64
}

// ThresholdDiagnostics evaluates each threshold (with its quantile label) on
// the declustered storm peaks of c. Fields are NaN where there are too few
// peaks (mean excess: fewer than 2; fit: fewer than 3, or a fit that did not
// converge or has no covariance). A known fit (Analyse's GPDFit of the same
// collector) is used for the rung whose threshold it has and whose peak count
// it matches instead of fitting the same excesses again: a GPD fit does not
// depend on the rate it is given.
func ThresholdDiagnostics(c *Collector, quantiles, thresholds []float64, known ...GPDFit) []ThresholdRow {
	peaks := c.Peaks()
	out := make([]ThresholdRow, 0, len(thresholds))
	nan := math.NaN()
	for i, u := range thresholds {
		r := ThresholdRow{Quantile: quantiles[i], Threshold: u, MeanExcess: nan, MeanExcessLo: nan, MeanExcessHi: nan,
			Shape: nan, ShapeLo: nan, ShapeHi: nan, ModScale: nan, ModScaleLo: nan, ModScaleHi: nan}
		var x []float64
		var s1 float64
		for _, p := range peaks {
			if p.Hm0 > u {
				x = append(x, p.Hm0)
				s1 += p.Hm0 - u
			}
		}
		r.N = len(x)
		if r.N >= 2 && !math.IsNaN(u) {
			m := s1 / float64(r.N)
			var ss float64
			for _, v := range x {
				ss += (v - u - m) * (v - u - m)
			}
			half := z975 * math.Sqrt(ss/float64(r.N-1)/float64(r.N))
			r.MeanExcess, r.MeanExcessLo, r.MeanExcessHi = m, m-half, m+half
		}
		if r.N >= 3 {
			f, err := reuseOrFitGPD(x, u, known)
			if err == nil && f.Converged && f.InfoOK {
				hs := z975 * f.StdErr[1]
				r.Shape, r.ShapeLo, r.ShapeHi = f.Shape, f.Shape-hs, f.Shape+hs
				ms := f.Scale - f.Shape*u
				v := f.Cov[0][0] - 2*u*f.Cov[0][1] + u*u*f.Cov[1][1]
				hm := z975 * math.Sqrt(v)
				r.ModScale, r.ModScaleLo, r.ModScaleHi = ms, ms-hm, ms+hm
			}
		}
		out = append(out, r)
	}
	return out
}

// reuseOrFitGPD returns the known fit with threshold u and len(x) peaks, else
// FitGPD(x, u, 1).
func reuseOrFitGPD(x []float64, u float64, known []GPDFit) (GPDFit, error) {
	for _, k := range known {
		if k.Threshold == u && k.N == len(x) {
			return k, nil
		}
	}
	return FitGPD(x, u, 1)
}
