package seastate

import (
	"fmt"
	"math"
	"sort"
)

// Params holds every sea-state parameter computed from one spectrum.
//
// The moments are m_n = sum_i sum_j f_i^n S_ij df_i dtheta_j (IEC TS
// 62600-101; DNV-RP-C205 sec. 3.5), in M order m_-2, m_-1, m0, m1, m2.
type Params struct {
	M              [5]float64 // m_-2 (m^2 s^2), m_-1 (m^2 s), m0 (m^2), m1 (m^2/s), m2 (m^2/s^2)
	Hm0            float64    // spectral significant wave height 4 sqrt(m0), m
	Te             float64    // energy period m_-1/m0, s
	Tm01           float64    // mean period m0/m1, s
	Tm02           float64    // zero-crossing period sqrt(m0/m2), s
	Tp             float64    // peak period, parabolic refinement of the discrete peak, s
	TpDiscrete     float64    // 1 / frequency of the largest bin of the 1-D spectrum, s
	Eps0           float64    // spectral width sqrt(m0 m_-2 / m_-1^2 - 1), -
	J              float64    // omnidirectional wave power rho g sum cg S df dtheta, W/m
	JThetaMax      float64    // maximum over theta of the directionally resolved power, W/m (NaN for 1-D)
	DirMaxPowerDeg float64    // direction of JThetaMax, deg nautical "from" in [0, 360) (NaN for 1-D)
	Directionality float64    // JThetaMax / J in [0, 1] (NaN for 1-D or J = 0)
	MeanDirDeg     float64    // mean wave direction from the first-order directional moments, deg nautical "from" in [0, 360) (NaN for 1-D or no energy); see MeanDirection
	BadBins        int        // densities that were negative, NaN or infinite; they were treated as 0
	Valid          bool       // m0 finite and > 0: every parameter is defined
}

// Kernel computes Params for the spectra of one cell. It holds the group
// velocity of every frequency at the cell's depth, computed once, and scratch
// space, so Params does not allocate. A Kernel is not safe for concurrent use:
// give each worker (or each cell) its own.
type Kernel struct {
	l      *Layout
	c      Consts
	depth  float64
	nf, nd int
	cg     []float64    // m/s per frequency, caller's order
	mw     [5][]float64 // f_i^n df_i for n = -2..2
	pw     []float64    // rho g cg_i df_i
	e      []float64    // scratch: E_i = sum_j S_ij dtheta_j
	a      []float64    // scratch: power travelling from direction j, W/m
	ed     []float64    // scratch: variance coming from direction j, sum_i S_ij df_i (m^2/rad)

	// directional sweep, see dirMax
	arcB   []float64 // start of arc k, deg
	arcCos []float64 // cos, sin of arc start; arc k ends where arc k+1 starts
	arcSin []float64
	dirCos []float64 // per direction, caller's order
	dirSin []float64
	arc0   []int32 // directions active on arc 0
	togOff []int32 // toggles entering arc k: togJ[togOff[k]:togOff[k+1]]
	togJ   []int32
	togSgn []float64
}

// NewKernel prepares the computation for one cell of depth depth (m) with
// constants c. A depth that is NaN, +Inf or <= 0 means deep water. The group
// velocity table is cg_i = GroupVelocity(f_i, depth, c.G).
func NewKernel(l *Layout, depth float64, c Consts) *Kernel {
	if l == nil {
		panic("seastate: NewKernel called with a nil Layout")
	}
	nf, nd := l.NF(), l.ND()
	k := &Kernel{l: l, c: c, depth: depth, nf: nf, nd: nd,
		cg: make([]float64, nf), pw: make([]float64, nf), e: make([]float64, nf)}
	for n := range k.mw {
		k.mw[n] = make([]float64, nf)
	}
	for i, f := range l.freq {
		k.cg[i] = GroupVelocity(f, depth, c.G)
		k.pw[i] = c.Rho * c.G * k.cg[i] * l.df[i]
		k.mw[0][i] = l.df[i] / (f * f)
		k.mw[1][i] = l.df[i] / f
		k.mw[2][i] = l.df[i]
		k.mw[3][i] = l.df[i] * f
		k.mw[4][i] = l.df[i] * f * f
	}
	if nd > 0 {
		k.a = make([]float64, nd)
		k.ed = make([]float64, nd)
		k.prepareArcs()
	}
	return k
}

// SetDepth changes the kernel's depth (m; NaN, +Inf or <= 0: deep water),
// recomputing the group velocity table cg_i = GroupVelocity(f_i, depth, g)
// only when the depth differs, for depth that varies in time.
func (k *Kernel) SetDepth(depth float64) {
	if depth == k.depth || isDeep(depth) && isDeep(k.depth) {
		return
	}
	k.depth = depth
	for i, f := range k.l.freq {
		k.cg[i] = GroupVelocity(f, depth, k.c.G)
		k.pw[i] = k.c.Rho * k.c.G * k.cg[i] * k.l.df[i]
	}
}

// Layout returns the layout the kernel was built for.
func (k *Kernel) Layout() *Layout { return k.l }

// Depth returns the depth the kernel was built for, as given.
func (k *Kernel) Depth() float64 { return k.depth }

// Deep reports whether the kernel uses deep-water group velocities.
func (k *Kernel) Deep() bool { return isDeep(k.depth) }

// GroupVelocities returns a copy of the cg table (m/s), caller's frequency order.
func (k *Kernel) GroupVelocities() []float64 { return append([]float64(nil), k.cg...) }

// prepareArcs splits the circle at theta_j +- 90 deg, the angles where a
// direction starts or stops counting towards J_theta, and records for each
// arc which directions are active, as toggles from the previous arc.
func (k *Kernel) prepareArcs() {
	l := k.l
	nd := k.nd
	k.dirCos = make([]float64, nd)
	k.dirSin = make([]float64, nd)
	var bs []float64
	for j, d := range l.dir {
		r := d * math.Pi / 180
		k.dirCos[j], k.dirSin[j] = math.Cos(r), math.Sin(r)
		bs = append(bs, normDeg(d-90), normDeg(d+90))
	}
	sort.Float64s(bs)
	uniq := bs[:1]
	for _, b := range bs[1:] {
		if b-uniq[len(uniq)-1] > 1e-9 {
			uniq = append(uniq, b)
		}
	}
	if len(uniq) > 1 && uniq[0]+360-uniq[len(uniq)-1] <= 1e-9 {
		uniq = uniq[:len(uniq)-1]
	}
	na := len(uniq)
	k.arcB = uniq
	k.arcCos = make([]float64, na+1)
	k.arcSin = make([]float64, na+1)
	for a := 0; a <= na; a++ {
		r := uniq[a%na] * math.Pi / 180
		k.arcCos[a], k.arcSin[a] = math.Cos(r), math.Sin(r)
	}
	active := func(a int) []bool {
		end := uniq[(a+1)%na]
		if a == na-1 {
			end += 360
		}
		mid := 0.5 * (uniq[a] + end) * math.Pi / 180
		s := make([]bool, nd)
		for j := range s {
			s[j] = math.Cos(mid)*k.dirCos[j]+math.Sin(mid)*k.dirSin[j] > 0
		}
		return s
	}
	prev := active(0)
	for j, on := range prev {
		if on {
			k.arc0 = append(k.arc0, int32(j))
		}
	}
	k.togOff = make([]int32, na+1)
	for a := 1; a < na; a++ {
		k.togOff[a] = int32(len(k.togJ))
		cur := active(a)
		for j := range cur {
			if cur[j] != prev[j] {
				k.togJ = append(k.togJ, int32(j))
				if cur[j] {
					k.togSgn = append(k.togSgn, 1)
				} else {
					k.togSgn = append(k.togSgn, -1)
				}
			}
		}
		prev = cur
	}
	k.togOff[na] = int32(len(k.togJ))
}

// Params computes all parameters of one spectrum s and stores them in out.
//
// s holds densities in m^2/Hz/rad for a 2-D layout, flat index i*ND + j for
// frequency i and direction j in the layout's original order, or in m^2/Hz
// for a 1-D layout. Negative, NaN and infinite densities are clipped to 0
// and counted in out.BadBins (clip-and-flag); the caller decides whether a
// cell with bad bins is reported. If m0 is not finite and positive, out.Valid
// is false; when m0 is exactly 0 (a calm or empty spectrum) Hm0, J and
// JThetaMax are set to 0 and the periods to NaN, when nothing usable remains
// every value is NaN. Params panics if len(s) differs from the layout's Len,
// which is a programming error. It does not allocate.
//
// Formulas (IEC TS 62600-101; DNV-RP-C205 sec. 3.5):
//
//	E_i   = sum_j S_ij dtheta_j                  (1-D spectrum, m^2/Hz)
//	m_n   = sum_i f_i^n E_i df_i,  n = -2..2
//	Hm0   = 4 sqrt(m0),  Te = m_-1/m0,  Tm01 = m0/m1,  Tm02 = sqrt(m0/m2)
//	eps0  = sqrt(m0 m_-2 / m_-1^2 - 1)           (clamped at 0 against rounding)
//	J     = rho g sum_i sum_j cg_i S_ij df_i dtheta_j
//	J(theta) = rho g sum_ij cg_i S_ij df_i dtheta_j cos(theta - theta_j) delta_ij,
//	           delta_ij = 1 if cos(theta - theta_j) >= 0, else 0
//	JThetaMax = max over all theta of J(theta),  Directionality = JThetaMax / J
//	MeanDirDeg = atan2(sum_ij sin(theta_j) S_ij df_i dtheta_j, sum_ij cos(theta_j) S_ij df_i dtheta_j)
//	             (see MeanDirection)
//
// The maximum of J(theta) is exact over the whole circle, not only at the
// spectral directions: see dirMax. TpDiscrete is 1/f of the largest E_i (the
// lowest such frequency on ties); Tp is 1/f at the vertex of the parabola
// through the peak bin and its two neighbours (see parabolicPeak), or
// TpDiscrete when the peak is an end bin.
func (k *Kernel) Params(s []float64, out *Params) {
	if len(s) != k.l.Len() {
		panic(fmt.Sprintf("seastate: spectrum has %d values, layout needs %d (%d frequencies x %d directions)", len(s), k.l.Len(), k.nf, k.nd))
	}
	const big = math.MaxFloat64
	bad := 0
	e := k.e
	var jSum float64
	if k.nd == 0 {
		for i, v := range s {
			if !(v >= 0 && v <= big) {
				bad++
				v = 0
			}
			e[i] = v
			jSum += k.pw[i] * v
		}
	} else {
		nd := k.nd
		a, ed := k.a, k.ed
		dth := k.l.dth
		for j := range a {
			a[j], ed[j] = 0, 0
		}
		df := k.mw[2]
		for i := 0; i < k.nf; i++ {
			row := s[i*nd : i*nd+nd]
			w, dfi := k.pw[i], df[i]
			var sum float64
			for j, v := range row {
				if !(v >= 0 && v <= big) {
					bad++
					continue
				}
				sum += v * dth[j]
				a[j] += v * w
				ed[j] += v * dfi
			}
			e[i] = sum
		}
		for j := range a {
			a[j] *= dth[j]
			jSum += a[j]
		}
	}
	out.BadBins = bad

	var m [5]float64
	for i, v := range e {
		m[0] += k.mw[0][i] * v
		m[1] += k.mw[1][i] * v
		m[2] += k.mw[2][i] * v
		m[3] += k.mw[3][i] * v
		m[4] += k.mw[4][i] * v
	}
	out.M = m
	nan := math.NaN()
	m0 := m[2]
	if !(m0 > 0) || m0 > big || !(jSum <= big) {
		out.Valid = false
		out.Hm0, out.Te, out.Tm01, out.Tm02, out.Tp, out.TpDiscrete, out.Eps0 = nan, nan, nan, nan, nan, nan, nan
		out.J, out.JThetaMax, out.DirMaxPowerDeg, out.Directionality, out.MeanDirDeg = nan, nan, nan, nan, nan
		if m0 == 0 && bad < len(s) {
			out.Hm0, out.J = 0, 0
			if k.nd > 0 {
				out.JThetaMax = 0
			}
		}
		return
	}
	out.Valid = true
	out.Hm0 = 4 * math.Sqrt(m0)
	out.Te = m[1] / m0
	out.Tm01 = m0 / m[3]
	out.Tm02 = math.Sqrt(m0 / m[4])
	r := m0*m[0]/(m[1]*m[1]) - 1
	if r < 0 {
		r = 0
	}
	out.Eps0 = math.Sqrt(r)
	out.J = jSum
	out.TpDiscrete, out.Tp = k.peak()
	if k.nd == 0 {
		out.JThetaMax, out.DirMaxPowerDeg, out.Directionality, out.MeanDirDeg = nan, nan, nan, nan
		return
	}
	out.MeanDirDeg = MeanDirection(k.ed, k.l.dth, k.dirSin, k.dirCos)
	out.JThetaMax, out.DirMaxPowerDeg = k.dirMax()
	if jSum > 0 {
		d := out.JThetaMax / jSum
		if d > 1 { // rounding guard: J(theta) <= J
			d = 1
		}
		out.Directionality = d
	} else {
		out.Directionality = nan
	}
}

// MeanDirection returns the mean wave direction of a directional spectrum
// from its first-order directional moments, in degrees nautical "from" in
// [0, 360):
//
//	a1 = sum_i sum_j cos(theta_j) S_ij df_i dtheta_j
//	b1 = sum_i sum_j sin(theta_j) S_ij df_i dtheta_j
//	theta_mean = atan2(b1, a1)
//
// given ed[j] = sum_i S_ij df_i (the variance coming from direction j per
// radian), the direction widths dth (rad) and the sines and cosines of the
// directions theta_j (nautical "from", clockwise from north; the mean keeps
// that convention). This is the energy-weighted mean direction of the
// first-order Fourier coefficients of the directional distribution (Kuik, van
// Vledder and Holthuijsen 1988, J. Phys. Oceanogr. 18, 1020-1034, eq. for
// theta_0 with the coefficients integrated over frequency; quoted from
// memory, and the form used by spectral wave models for their mean
// direction: common practice). NaN when a1 = b1 = 0 (no energy, or a
// perfectly symmetric spread with no preferred direction).
func MeanDirection(ed, dth, sin, cos []float64) float64 {
	var a1, b1 float64
	for j, v := range ed {
		w := v * dth[j]
		a1 += w * cos[j]
		b1 += w * sin[j]
	}
	if a1 == 0 && b1 == 0 {
		return math.NaN()
	}
	return normDeg(math.Atan2(b1, a1) * 180 / math.Pi)
}

// peak returns the discrete and the parabolic peak period of k.e.
func (k *Kernel) peak() (discrete, refined float64) {
	ord := k.l.fOrder
	freq := k.l.freq
	e := k.e
	best := 0
	for r := 1; r < len(ord); r++ {
		if e[ord[r]] > e[ord[best]] {
			best = r
		}
	}
	fp := freq[ord[best]]
	discrete = 1 / fp
	if best == 0 || best == len(ord)-1 {
		return discrete, discrete
	}
	a, b, c := ord[best-1], ord[best], ord[best+1]
	fv := parabolicPeak(freq[a], e[a], freq[b], e[b], freq[c], e[c])
	return discrete, 1 / fv
}

// parabolicPeak returns the abscissa of the vertex of the parabola through
// (x1,y1), (x2,y2), (x3,y3), x1 < x2 < x3, y2 >= y1, y2 >= y3 (Press, Teukolsky,
// Vetterling & Flannery, Numerical Recipes, 3rd ed. 2007, sec. 10.3, eq.
// 10.3.1, quoted from memory; the tests check it against numpy.polyfit):
//
//	x = x2 - 1/2 [(x2-x1)^2 (y2-y3) - (x2-x3)^2 (y2-y1)] / [(x2-x1)(y2-y3) - (x2-x3)(y2-y1)]
//
// A flat triple (zero denominator) returns x2; the result is kept in [x1, x3].
func parabolicPeak(x1, y1, x2, y2, x3, y3 float64) float64 {
	p := (x2 - x1) * (y2 - y3)
	q := (x2 - x3) * (y2 - y1)
	den := p - q
	if den == 0 {
		return x2
	}
	x := x2 - 0.5*((x2-x1)*p-(x2-x3)*q)/den
	if !(x >= x1) {
		x = x1
	} else if x > x3 {
		x = x3
	}
	return x
}

// dirMax returns the maximum over theta of
//
//	J(theta) = sum_j A_j max(cos(theta - theta_j), 0)
//
// and its direction in degrees, where A_j = k.a[j] is the power coming from
// direction j. Between consecutive breakpoints theta_j +- 90 deg the active
// set is fixed and J(theta) = C cos theta + D sin theta with
// (C, D) = sum_active A_j (cos theta_j, sin theta_j), a sinusoid whose maximum
// sqrt(C^2 + D^2) lies at atan2(D, C). So the maximum over the circle is the
// largest of the values at the breakpoints and of sqrt(C^2 + D^2) on the arcs
// that contain their own atan2(D, C) (every arc spans at most 180 deg, so the
// test is two cross products). The active set moves from arc to arc by the
// precomputed toggles. Ties go to the first candidate in increasing angle
// from the smallest breakpoint.
func (k *Kernel) dirMax() (float64, float64) {
	a := k.a
	var c, d float64
	for _, j := range k.arc0 {
		c += a[j] * k.dirCos[j]
		d += a[j] * k.dirSin[j]
	}
	best := -1.0
	bestArc := -1
	interior := false
	var bc, bd float64
	na := len(k.arcB)
	for arc := 0; arc < na; arc++ {
		if arc > 0 {
			for t := k.togOff[arc]; t < k.togOff[arc+1]; t++ {
				j := k.togJ[t]
				w := k.togSgn[t] * a[j]
				c += w * k.dirCos[j]
				d += w * k.dirSin[j]
			}
		}
		cs, ss := k.arcCos[arc], k.arcSin[arc]
		if v := c*cs + d*ss; v > best {
			best, bestArc, interior = v, arc, false
		}
		ce, se := k.arcCos[arc+1], k.arcSin[arc+1]
		if cs*d-ss*c > 0 && c*se-d*ce > 0 {
			if v := math.Sqrt(c*c + d*d); v > best {
				best, bestArc, interior, bc, bd = v, arc, true, c, d
			}
		}
	}
	if best < 0 {
		best = 0
	}
	if interior {
		return best, normDeg(math.Atan2(bd, bc) * 180 / math.Pi)
	}
	return best, k.arcB[bestArc]
}

// AllMissing reports whether every bin of a spectrum is missing (NaN): the
// step is then a missing step. A spectrum with some bins missing is used,
// the missing bins counting as 0 (and in bad_bins).
func AllMissing(s []float64) bool {
	for _, v := range s {
		if v == v {
			return false
		}
	}
	return true
}
