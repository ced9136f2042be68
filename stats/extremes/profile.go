package extremes

import "math"

// chi2Crit95 is the 0.95 quantile of the chi-squared distribution with one
// degree of freedom (1.959963984540054^2), the deviance drop bounding a 95%
// profile-likelihood interval (Coles 2001, section 2.6.5, eq. 2.17 with k = 1).
const chi2Crit95 = z975 * z975

// profileFit is the inner maximisation of a profile likelihood at one fixed
// return level: it returns the smallest negative log-likelihood over the other
// parameters and where it was reached (start of the next search).
type profileFit func(level float64, start []float64) (nll float64, at []float64, ok bool)

// ProfileGEV returns the 95% profile-likelihood interval of the T-year return
// level of a GEV fit. The likelihood is re-parameterised by the return level,
//
//	Loc = z_T - Scale ((-log(1 - 1/T))^(-Shape) - 1)/Shape     (Coles 2001, eq. 3.10),
//
// maximised over (Scale, Shape) at each fixed z_T, and the interval is
// {z_T : 2 [l_max - l_p(z_T)] <= chi2_1(0.95)} (Coles 2001, sections 2.6.6
// and 3.3.3). The lower end is never below zero (Hm0 is not negative): if the
// deviance stays below the critical value down to 0, lo = 0. hi is +Inf when
// the deviance does not reach the critical value within 50 delta-method
// standard errors (or 20 scales) above the level, or below limit when limit
// is positive (Analyse passes 3 times the record's largest Hm0): the data do
// not bound it within plausible values.
// NaN without a converged fit or for T <= 1.
func (f GEVFit) ProfileGEV(T float64, z []float64, limit float64) (lo, hi float64) {
	nan := math.NaN()
	zt, _ := f.GEV.ReturnLevel(T)
	if !f.Converged || math.IsNaN(zt) {
		return nan, nan
	}
	zs := finiteSorted(z)
	s := -math.Log(-math.Log1p(-1 / T))
	nllMax := -f.LogLik
	inner := func(level float64, start []float64) (float64, []float64, bool) {
		// Parameters (log Scale, Shape); Loc follows from the level.
		x0 := []float64{start[0], start[1]}
		nll := func(p, g []float64) float64 {
			a, da := expShapeTerm(p[1], s)
			sig := math.Exp(p[0])
			q := []float64{level - sig*a, p[0], p[1]}
			var gg [3]float64
			var v float64
			if g != nil {
				v = gevNegLogLik(q, gg[:], zs)
				// dLoc/dlogScale = -sig a, dLoc/dShape = -sig da.
				g[0] = gg[1] - gg[0]*sig*a
				g[1] = gg[2] - gg[0]*sig*da
			} else {
				v = gevNegLogLik(q, nil, zs)
			}
			return v
		}
		// A larger scale always reaches the support (1 + Shape y > 0 for all data).
		for k := 0; k < 60 && math.IsInf(nll(x0, nil), 1); k++ {
			x0[0] += 0.25
		}
		if math.IsInf(nll(x0, nil), 1) {
			return math.Inf(1), start, false
		}
		xo, v, conv, err := minimise(nll, x0, 1e-7*float64(len(zs)))
		return v, xo, conv && err == nil
	}
	step := f.StdErr[0]
	if sd := deltaSD(f, T); sd > 0 && !math.IsNaN(sd) {
		step = sd
	}
	if !(step > 0) {
		step = 0.1 * f.Scale
	}
	start := []float64{math.Log(f.Scale), f.Shape}
	lo = profileEnd(inner, zt, -step, 0, nllMax, start)
	hi = profileEnd(inner, zt, step, searchLimit(zt+math.Max(50*step, 20*f.Scale), limit, zt), nllMax, start)
	return lo, hi
}

// ProfileGPD returns the 95% profile-likelihood interval of the T-year return
// level of a GPD fit with the exceedance rate lambda held fixed (Coles 2001,
// section 4.3.3): the scale is re-parameterised by the level,
//
//	Scale = (x_T - u) Shape / ((lambda T)^Shape - 1)           (Coles 2001, eq. 4.12),
//
// the likelihood maximised over Shape at each fixed x_T, and the interval is
// where the deviance stays within chi2_1(0.95). Because Scale > 0, the lower
// end always lies above the threshold u. hi is +Inf when the data do not bound
// it (see ProfileGEV, also for limit). NaN without a converged fit or for lambda T < 1.
func (f GPDFit) ProfileGPD(T float64, peaks []float64, limit float64) (lo, hi float64) {
	nan := math.NaN()
	xt, _ := f.GPD.ReturnLevel(T, f.PeaksPerYear)
	if !f.Converged || math.IsNaN(xt) || !(f.PeaksPerYear*T > 1) {
		return nan, nan
	}
	var y []float64
	for _, v := range peaks {
		if v > f.Threshold {
			y = append(y, v-f.Threshold)
		}
	}
	s := math.Log(f.PeaksPerYear * T)
	u := f.Threshold
	inner := func(level float64, start []float64) (float64, []float64, bool) {
		if !(level > u) {
			return math.Inf(1), start, false
		}
		x0 := []float64{start[0]}
		nll := func(p, g []float64) float64 {
			a, da := expShapeTerm(p[0], s)
			phi := math.Log(level-u) - math.Log(a)
			q := []float64{phi, p[0]}
			if g == nil {
				return gpdNegLogLik(q, nil, y)
			}
			var gg [2]float64
			v := gpdNegLogLik(q, gg[:], y)
			g[0] = gg[1] - gg[0]*da/a
			return v
		}
		// Too negative a shape puts data outside the bounded support; move it up.
		for k := 0; k < 40 && math.IsInf(nll(x0, nil), 1); k++ {
			x0[0] += 0.05
		}
		if math.IsInf(nll(x0, nil), 1) {
			return math.Inf(1), start, false
		}
		xo, v, conv, err := minimise(nll, x0, 1e-7*float64(len(y)))
		return v, xo, conv && err == nil
	}
	step := math.NaN()
	if _, l, h := f.ReturnLevel(T); h > l {
		step = (h - l) / (2 * z975)
	}
	if !(step > 0) {
		step = 0.1 * f.Scale
	}
	lo = profileEnd(inner, xt, -step, u, -f.LogLik, []float64{f.Shape})
	hi = profileEnd(inner, xt, step, searchLimit(xt+math.Max(50*step, 20*f.Scale), limit, xt), -f.LogLik, []float64{f.Shape})
	return lo, hi
}

// searchLimit is the highest level the upper-end search visits: the default
// reach, lowered to limit when limit is positive and above the level.
func searchLimit(reach, limit, level float64) float64 {
	if limit > level && limit < reach {
		return limit
	}
	return reach
}

// deltaSD is the delta-method standard error of the GEV T-year level.
func deltaSD(f GEVFit, T float64) float64 {
	z, lo, _ := f.ReturnLevel(T)
	return (z - lo) / z975
}

// profileEnd walks from the level in steps of step (sign gives the side) until
// the profile deviance 2 (nll_p - nllMax) exceeds chi2Crit95, then bisects to
// 1e-7 of the bracket. bound is the last admissible level on that side (0 or
// the threshold below, the search limit above): if the deviance stays below
// the critical value up to it, the lower end is bound and the upper end +Inf.
// Each inner fit starts from the optimum of the nearest level already
// evaluated, so the search follows one branch of the profile.
func profileEnd(inner profileFit, level, step, bound, nllMax float64, start []float64) float64 {
	dev := func(x float64, st []float64) (float64, []float64) {
		v, at, _ := inner(x, st)
		return 2 * (v - nllMax), at
	}
	inside, insideAt := level, start
	var outside float64
	found := false
	for k := 1; k <= 200; k++ {
		// Unit steps up to 8, then growing by 30% a step.
		x := level + step*float64(k)
		if k > 8 {
			x = level + step*(8+(math.Pow(1.3, float64(k-8))-1)/0.3)
		}
		if (step < 0 && x <= bound) || (step > 0 && x >= bound) {
			x = bound
			if step < 0 && x == bound {
				// At 0 (GEV) or the threshold (GPD) the deviance is evaluated just inside.
				x = bound + 1e-9*math.Max(1, math.Abs(level))
			}
			d, _ := dev(x, insideAt)
			if d < chi2Crit95 {
				if step > 0 {
					return math.Inf(1)
				}
				return bound
			}
			outside, found = x, true
			break
		}
		d, at := dev(x, insideAt)
		if d >= chi2Crit95 {
			outside, found = x, true
			break
		}
		inside, insideAt = x, at
	}
	if !found {
		if step > 0 {
			return math.Inf(1)
		}
		return bound
	}
	// Illinois (modified regula falsi) on g(x) = deviance - chi2Crit95, with
	// bisection whenever the outer value is not finite; to 1e-7 of the
	// level (far below the interval's own uncertainty).
	a, b := inside, outside
	ga := -chi2Crit95 // the deviance is 0 at the level itself
	if a != level {
		d, _ := dev(a, insideAt)
		ga = d - chi2Crit95
	}
	db, _ := dev(b, insideAt)
	gb := db - chi2Crit95
	tol := 1e-7 * math.Max(1, math.Abs(level))
	side := 0
	for i := 0; i < 100 && math.Abs(b-a) > tol; i++ {
		m := 0.5 * (a + b)
		if !math.IsInf(gb, 0) && !math.IsNaN(gb) && gb != ga {
			m = b - gb*(b-a)/(gb-ga)
			// Keep the new point well inside the bracket.
			lo, hi := math.Min(a, b), math.Max(a, b)
			w := hi - lo
			m = math.Max(lo+0.01*w, math.Min(hi-0.01*w, m))
		}
		d, at := dev(m, insideAt)
		gm := d - chi2Crit95
		if gm < 0 {
			a, ga, insideAt = m, gm, at
			if side == -1 {
				gb /= 2
			}
			side = -1
		} else {
			b, gb = m, gm
			if side == 1 {
				ga /= 2
			}
			side = 1
		}
		if math.Abs(gm) < 1e-9 {
			return m
		}
	}
	return 0.5 * (a + b)
}
