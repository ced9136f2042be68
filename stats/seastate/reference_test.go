package seastate

import (
	"math"
	"testing"
)

// All tests in this file compare with testdata/seastate/reference.json, made by
// testdata/seastate/make_reference.py with Debian python3-scipy 1.10.1 and
// python3-numpy 1.24.2 (scipy.optimize.brentq, scipy.integrate.quad,
// scipy.optimize.minimize_scalar, numpy.gradient, numpy.polyfit).

func TestDispersionAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	src := "scipy " + ref.Scipy + " brentq root of w^2 = g k tanh(kh)"
	for _, c := range ref.Dispersion {
		relClose(t, "Wavenumber", Wavenumber(c.F, c.H, ref.G), c.K, 1e-13, src)
		relClose(t, "GroupVelocity", GroupVelocity(c.F, c.H, ref.G), c.Cg, 1e-13, src)
	}
}

func TestJONSWAPMomentsAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	src := "scipy " + ref.Scipy + " integrate.quad of the JONSWAP shape"
	for _, c := range ref.Jonswap {
		te, t01, t02 := JONSWAPPeriodRatios(c.Gamma)
		relClose(t, "Te/Tp", te, c.TeOverTp, 1e-11, src)
		relClose(t, "Tm01/Tp", t01, c.Tm01OverTp, 1e-11, src)
		relClose(t, "Tm02/Tp", t02, c.Tm02OverTp, 1e-11, src)
	}
	v := ref.JonswapValues
	got := JONSWAP(v.Freq, v.Hm0, v.Tp, v.Gamma)
	for i := range got {
		relClose(t, "JONSWAP S(f)", got[i], v.S[i], 1e-11, src)
	}
}

func TestCosSpreadAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	src := "scipy " + ref.Scipy + " integrate.quad of G(s) cos^2s(phi/2) cos(phi) over |phi| <= pi/2"
	for _, c := range ref.Cos2s {
		relClose(t, "CosSpreadDirectionality", CosSpreadDirectionality(c.S), c.Directionality, 1e-11, src)
		// the python normalisation integrates to 1 (quad), so the same G(s) is used
		relClose(t, "python cos-2s integral", c.Integral, 1, 1e-12, "scipy quad over the circle")
	}
}

func TestParabolicPeakAgainstNumpyPolyfit(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Parabola {
		got := parabolicPeak(c.X[0], c.Y[0], c.X[1], c.Y[1], c.X[2], c.Y[2])
		relClose(t, "parabola vertex", got, c.Vertex, 1e-10, "numpy "+ref.Numpy+" polyfit degree 2")
	}
}

func TestBulkFiniteAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	c := Consts{Rho: ref.Rho, G: ref.G}
	for _, b := range ref.Bulk {
		h := math.Inf(1)
		if v, ok := b.H.(float64); ok {
			h = v
		}
		relClose(t, "BulkPowerFinite", BulkPowerFinite(b.Hm0, b.Te, h, c), b.J, 1e-13,
			"rho g Hm0^2 cg/16 with scipy "+ref.Scipy+" brentq cg")
	}
}

func TestSpectrumParamsAgainstNumpy(t *testing.T) {
	ref := loadReference(t)
	sp := ref.Spectrum
	src := "numpy " + ref.Numpy + " sums with numpy.gradient widths, scipy brentq cg"
	l, err := NewLayout(sp.Freq, sp.Dir)
	if err != nil {
		t.Fatal(err)
	}
	k := NewKernel(l, sp.Depth, Consts{Rho: ref.Rho, G: ref.G})
	var p Params
	k.Params(sp.S, &p)
	if !p.Valid || p.BadBins != 0 {
		t.Fatalf("Valid=%v BadBins=%d, want true, 0", p.Valid, p.BadBins)
	}
	for n := range p.M {
		relClose(t, "moment", p.M[n], sp.Moments[n], 1e-12, src)
	}
	relClose(t, "Hm0", p.Hm0, sp.Hm0, 1e-12, src)
	relClose(t, "Te", p.Te, sp.Te, 1e-12, src)
	relClose(t, "Tm01", p.Tm01, sp.Tm01, 1e-12, src)
	relClose(t, "Tm02", p.Tm02, sp.Tm02, 1e-12, src)
	relClose(t, "Eps0", p.Eps0, sp.Eps0, 1e-10, src)
	relClose(t, "TpDiscrete", p.TpDiscrete, sp.TpDiscrete, 1e-14, src)
	relClose(t, "Tp", p.Tp, sp.TpParabolic, 1e-9, "numpy.polyfit vertex through the peak bins")
	relClose(t, "J", p.J, sp.J, 1e-12, src)
	relClose(t, "JThetaMax", p.JThetaMax, sp.JThetaMax, 1e-10, "scipy minimize_scalar of J(theta) after a 0.01 deg scan")
	if d := math.Abs(p.DirMaxPowerDeg - sp.DirMax); d > 1e-5 {
		t.Errorf("DirMaxPowerDeg = %.9f, want %.9f (scipy minimize_scalar)", p.DirMaxPowerDeg, sp.DirMax)
	}
	relClose(t, "Directionality", p.Directionality, sp.Directionality, 1e-10, src)

	// the same spectrum integrated over direction, as a 1-D spectrum
	l1, err := NewLayout(sp.Freq, nil)
	if err != nil {
		t.Fatal(err)
	}
	var p1 Params
	NewKernel(l1, sp.Depth, Consts{Rho: ref.Rho, G: ref.G}).Params(sp.E1D, &p1)
	relClose(t, "1-D J", p1.J, sp.J1D, 1e-12, src)
	relClose(t, "1-D Hm0", p1.Hm0, sp.Hm0, 1e-12, src)
	if !math.IsNaN(p1.JThetaMax) || !math.IsNaN(p1.Directionality) || !math.IsNaN(p1.DirMaxPowerDeg) {
		t.Errorf("1-D spectrum: directional fields %v %v %v, want NaN", p1.JThetaMax, p1.DirMaxPowerDeg, p1.Directionality)
	}
}
