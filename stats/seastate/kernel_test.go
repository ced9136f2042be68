package seastate

import (
	"math"
	"strings"
	"testing"
)

func testSpectrum(t *testing.T) (*Layout, []float64, []float64, []float64) {
	t.Helper()
	f := logFreqs(0.035, 1.1, 29)
	dirs := uniformDirs(7.5, 24)
	s := outer(JONSWAP(f, 2.2, 10.5, 3.3), CosSpread(dirs, 285, 8))
	l, err := NewLayout(f, dirs)
	if err != nil {
		t.Fatal(err)
	}
	return l, f, dirs, s
}

// In deep water the spectral power equals the bulk formula exactly:
// rho g sum cg S df = rho g^2 m_-1 / (4 pi) = rho g^2 Hm0^2 Te / (64 pi)
// (IEC TS 62600-101; identity derived in BulkPowerDeep's doc comment).
func TestDeepSpectralPowerEqualsBulk(t *testing.T) {
	l, _, _, s := testSpectrum(t)
	var p Params
	NewKernel(l, math.Inf(1), DefaultConsts).Params(s, &p)
	relClose(t, "J deep", p.J, BulkPowerDeep(p.Hm0, p.Te, DefaultConsts), 1e-13, "J = rho g^2 Hm0^2 Te / (64 pi)")
	// power grows with the square of the wave height (common practice)
	s4 := make([]float64, len(s))
	for i := range s {
		s4[i] = 4 * s[i]
	}
	var p4 Params
	NewKernel(l, 30, DefaultConsts).Params(s4, &p4)
	var p1 Params
	NewKernel(l, 30, DefaultConsts).Params(s, &p1)
	relClose(t, "J(2 Hm0)/J(Hm0)", p4.J/p1.J, 4, 1e-14, "J ~ Hm0^2 (common practice)")
	relClose(t, "Hm0 doubled", p4.Hm0/p1.Hm0, 2, 1e-14, "Hm0 = 4 sqrt(m0)")
}

// Results do not depend on the order of frequencies and directions.
func TestParamsOrderInvariant(t *testing.T) {
	l, f, dirs, s := testSpectrum(t)
	var p Params
	NewKernel(l, 35, DefaultConsts).Params(s, &p)

	pf := []int{3, 0, 28, 5, 1, 27, 2, 4, 26, 6, 25, 7, 24, 8, 23, 9, 22, 10, 21, 11, 20, 12, 19, 13, 18, 14, 17, 15, 16}
	pd := []int{23, 0, 12, 1, 22, 2, 21, 3, 20, 4, 19, 5, 18, 6, 17, 7, 16, 8, 15, 9, 14, 10, 13, 11}
	f2 := make([]float64, 29)
	d2 := make([]float64, 24)
	s2 := make([]float64, len(s))
	for i, a := range pf {
		f2[i] = f[a]
		for j, b := range pd {
			d2[j] = dirs[b] - 360 // also shift by a full turn
			s2[i*24+j] = s[a*24+b]
		}
	}
	l2, err := NewLayout(f2, d2)
	if err != nil {
		t.Fatal(err)
	}
	var q Params
	NewKernel(l2, 35, DefaultConsts).Params(s2, &q)
	src := "same spectrum, permuted bins"
	for n := range p.M {
		relClose(t, "moment", q.M[n], p.M[n], 1e-13, src)
	}
	relClose(t, "J", q.J, p.J, 1e-13, src)
	relClose(t, "Tp", q.Tp, p.Tp, 1e-13, src)
	relClose(t, "JThetaMax", q.JThetaMax, p.JThetaMax, 1e-13, src)
	relClose(t, "DirMax", q.DirMaxPowerDeg, p.DirMaxPowerDeg, 1e-11, src)
}

// A spectrum from a single direction has directionality 1 (IEC TS
// 62600-101 definition: all power crosses the plane facing that direction).
func TestSingleDirectionDirectionality(t *testing.T) {
	f := logFreqs(0.04, 1.12, 20)
	e := JONSWAP(f, 1, 7, 1)
	// one-direction layout
	l1, _ := NewLayout(f, []float64{123})
	var p Params
	NewKernel(l1, 20, DefaultConsts).Params(e, &p)
	relClose(t, "Directionality (1 dir)", p.Directionality, 1, 1e-15, "definition")
	relClose(t, "DirMax (1 dir)", p.DirMaxPowerDeg, 123, 1e-12, "definition")
	// all energy in one bin of 24
	dirs := uniformDirs(0, 24)
	l, _ := NewLayout(f, dirs)
	d := make([]float64, 24)
	d[17] = 1 / l.DirectionWidths()[17]
	var q Params
	NewKernel(l, 20, DefaultConsts).Params(outer(e, d), &q)
	relClose(t, "Directionality (1 of 24)", q.Directionality, 1, 1e-15, "definition")
	relClose(t, "DirMax (1 of 24)", q.DirMaxPowerDeg, dirs[17], 1e-12, "definition")
	l0, _ := NewLayout(f, nil)
	var p0 Params
	NewKernel(l0, 20, DefaultConsts).Params(e, &p0)
	relClose(t, "J 2-D vs 1-D", q.J, p0.J, 1e-14, "same energy")
	// the one-direction layout spreads the density over 2 pi
	relClose(t, "J one-direction layout", p.J, 2*math.Pi*p0.J, 1e-14, "width 2 pi")
	// two opposing seas of equal power: J_theta max is half of J
	d[17], d[5] = 0.5/l.DirectionWidths()[17], 0.5/l.DirectionWidths()[5]
	NewKernel(l, 20, DefaultConsts).Params(outer(e, d), &q)
	relClose(t, "Directionality (opposing)", q.Directionality, 0.5, 1e-14, "cos clipped to the facing half-plane")
}

// JThetaMax is at least J(theta) at every spectral direction and at most J.
func TestJThetaMaxBounds(t *testing.T) {
	l, _, dirs, s := testSpectrum(t)
	k := NewKernel(l, 50, DefaultConsts)
	var p Params
	k.Params(s, &p)
	for _, th := range append(dirs, p.DirMaxPowerDeg) {
		var v float64
		for j, dj := range dirs {
			c := math.Cos((th - dj) * math.Pi / 180)
			if c > 0 {
				v += k.a[j] * c
			}
		}
		if v > p.JThetaMax*(1+1e-14) {
			t.Errorf("J(%v) = %v exceeds JThetaMax %v", th, v, p.JThetaMax)
		}
		if th == p.DirMaxPowerDeg {
			relClose(t, "J(DirMax)", v, p.JThetaMax, 1e-13, "definition of J(theta)")
		}
	}
	if !(p.JThetaMax <= p.J) || !(p.Directionality > 0 && p.Directionality <= 1) {
		t.Errorf("JThetaMax %v J %v Directionality %v", p.JThetaMax, p.J, p.Directionality)
	}
}

func TestBadBinsClippedAndCounted(t *testing.T) {
	l, _, _, s := testSpectrum(t)
	k := NewKernel(l, 30, DefaultConsts)
	bad := append([]float64(nil), s...)
	clean := append([]float64(nil), s...)
	for n, i := range []int{3, 100, 400, 695} {
		bad[i] = []float64{math.NaN(), -1e-3, math.Inf(1), math.Inf(-1)}[n]
		clean[i] = 0
	}
	var pb, pc Params
	k.Params(bad, &pb)
	k.Params(clean, &pc)
	if pb.BadBins != 4 || pc.BadBins != 0 {
		t.Errorf("BadBins = %d and %d, want 4 and 0", pb.BadBins, pc.BadBins)
	}
	pb.BadBins = 0
	if pb != pc {
		t.Errorf("bad bins not treated as 0:\n%+v\n%+v", pb, pc)
	}
	// calm spectrum: Hm0 = 0, J = 0, periods undefined
	zero := make([]float64, len(s))
	var pz Params
	k.Params(zero, &pz)
	if pz.Valid || pz.Hm0 != 0 || pz.J != 0 || pz.JThetaMax != 0 || !math.IsNaN(pz.Te) || !math.IsNaN(pz.Tp) {
		t.Errorf("zero spectrum: %+v", pz)
	}
	// all missing: everything NaN
	for i := range zero {
		zero[i] = math.NaN()
	}
	k.Params(zero, &pz)
	if pz.Valid || pz.BadBins != len(s) || !math.IsNaN(pz.Hm0) || !math.IsNaN(pz.J) {
		t.Errorf("all-NaN spectrum: %+v", pz)
	}
}

func TestParamsDoesNotAllocate(t *testing.T) {
	l, _, _, s := testSpectrum(t)
	k := NewKernel(l, 30, DefaultConsts)
	var p Params
	if n := testing.AllocsPerRun(100, func() { k.Params(s, &p) }); n != 0 {
		t.Errorf("Params allocates %v times per call, want 0", n)
	}
}

func TestParamsWrongLengthPanics(t *testing.T) {
	l, _, _, s := testSpectrum(t)
	k := NewKernel(l, 30, DefaultConsts)
	defer func() {
		r := recover()
		if r == nil || !strings.Contains(r.(string), "layout needs 696") {
			t.Errorf("recover() = %v, want a message naming the expected length", r)
		}
	}()
	var p Params
	k.Params(s[:10], &p)
}

func TestConstsValidate(t *testing.T) {
	if err := DefaultConsts.Validate(); err != nil {
		t.Error(err)
	}
	if err := (Consts{Rho: 0, G: 9.81}).Validate(); err == nil || !strings.Contains(err.Error(), "rho") {
		t.Errorf("rho = 0: %v", err)
	}
	if err := (Consts{Rho: 1025, G: math.NaN()}).Validate(); err == nil || !strings.Contains(err.Error(), "g =") {
		t.Errorf("g = NaN: %v", err)
	}
}

// The mean direction from the first-order moments (MeanDirection) of a
// spread symmetric about theta_m is theta_m, and of two equal systems from
// 270 and 0 degrees is 315, by symmetry (common practice); the direction of
// maximum directional power is a different quantity. A 1-D spectrum has none.
// The numpy check on an unequal two-peaked sea is in pipelines
// (testdata/spectral_badbins/make_fixture.py).
func TestMeanDirectionSymmetry(t *testing.T) {
	f := logFreqs(0.035, 1.1, 29)
	dirs := uniformDirs(0, 24)
	l, err := NewLayout(f, dirs)
	if err != nil {
		t.Fatal(err)
	}
	k := NewKernel(l, 40, DefaultConsts)
	var p Params
	k.Params(outer(JONSWAP(f, 2, 9, 3.3), CosSpread(dirs, 285, 8)), &p)
	if math.Abs(p.MeanDirDeg-285) > 1e-9 {
		t.Errorf("single system from 285: mean direction %.12f", p.MeanDirDeg)
	}
	sea := outer(JONSWAP(f, 2, 9, 3.3), CosSpread(dirs, 270, 8))
	swell := outer(JONSWAP(f, 2, 9, 3.3), CosSpread(dirs, 0, 8))
	for i := range sea {
		sea[i] += swell[i]
	}
	k.Params(sea, &p)
	if math.Abs(p.MeanDirDeg-315) > 1e-9 {
		t.Errorf("equal systems from 270 and 0: mean direction %.12f, want 315", p.MeanDirDeg)
	}
	l1, _ := NewLayout(f, nil)
	NewKernel(l1, 40, DefaultConsts).Params(JONSWAP(f, 2, 9, 3.3), &p)
	if !math.IsNaN(p.MeanDirDeg) {
		t.Errorf("1-D spectrum: mean direction %g, want NaN", p.MeanDirDeg)
	}
}
