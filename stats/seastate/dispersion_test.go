package seastate

import (
	"math"
	"testing"
)

// Shore Protection Manual (U.S. Army Corps of Engineers, 1984), Appendix C,
// Table C-1 (functions of d/L0 for linear waves). The rows below are quoted
// from memory, four significant figures as printed; check them against a
// printed copy before relying on them.
func TestLinearWaveTableSPM(t *testing.T) {
	const g = 9.81
	rows := []struct{ dOverL0, dOverL, tanhKh float64 }{
		{0.1, 0.1410, 0.7093},
		{0.5, 0.5018, 0.9964},
	}
	for _, r := range rows {
		T := 10.0
		l0 := g * T * T / (2 * math.Pi)
		h := r.dOverL0 * l0
		k := Wavenumber(1/T, h, g)
		dOverL := h * k / (2 * math.Pi)
		if math.Abs(dOverL-r.dOverL) > 0.00006 {
			t.Errorf("d/L0 = %v: d/L = %.5f, table %.4f (SPM 1984 Table C-1, from memory)", r.dOverL0, dOverL, r.dOverL)
		}
		if th := math.Tanh(k * h); math.Abs(th-r.tanhKh) > 0.00006 {
			t.Errorf("d/L0 = %v: tanh(kh) = %.5f, table %.4f (SPM 1984 Table C-1, from memory)", r.dOverL0, th, r.tanhKh)
		}
	}
}

// Deep-water wavelength L0 = g T^2 / (2 pi) = 1.56 T^2 m (SPM 1984 eq. 2-8 and
// Table C-3; "1.56 T^2" is common practice in metric units).
func TestDeepWaterWavelength(t *testing.T) {
	for _, T := range []float64{4, 8, 10, 16} {
		L := 2 * math.Pi / Wavenumber(1/T, math.Inf(1), 9.81)
		relClose(t, "L0/T^2", L/(T*T), 1.5613, 1e-4, "SPM 1984: L0 = 1.56 T^2 (g = 9.81)")
	}
}

// Deep-water limit cg = c/2 = g/(2 omega) and shallow-water limit cg = sqrt(g h)
// (linear wave theory, Dean & Dalrymple 1991 ch. 3; common practice).
func TestGroupVelocityLimits(t *testing.T) {
	const g = 9.81
	for _, f := range []float64{0.05, 0.1, 0.3, 1} {
		w := 2 * math.Pi * f
		want := g / (2 * w)
		for _, h := range []float64{math.Inf(1), math.NaN(), 0, -5} {
			relClose(t, "cg deep (flag)", GroupVelocity(f, h, g), want, 0, "cg = g/(2 omega)")
		}
		// kh >= 19 is deep to double precision
		h := 19.5 / (w * w / g)
		relClose(t, "cg at kh = 19.5", GroupVelocity(f, h, g), want, 1e-15, "cg -> c/2 as kh -> inf")
		c := w / Wavenumber(f, h, g)
		relClose(t, "cg/c at kh = 19.5", GroupVelocity(f, h, g)/c, 0.5, 1e-15, "n -> 1/2")
	}
	for _, h := range []float64{0.01, 0.1, 1} {
		f := 1e-4
		kh := Wavenumber(f, h, g) * h
		// cg/sqrt(gh) = 1 - (kh)^2 + O(kh^4) for small kh (series of n c; derived)
		relClose(t, "cg shallow", GroupVelocity(f, h, g), math.Sqrt(g*h), 1.5*kh*kh+1e-15, "cg -> sqrt(g h) as kh -> 0")
		relClose(t, "cg at f = 0", GroupVelocity(0, h, g), math.Sqrt(g*h), 0, "cg(f = 0) = sqrt(g h)")
	}
}

// The root satisfies the dispersion relation to rounding over a wide sweep,
// and cg matches the textbook sinh form n = (1 + 2kh/sinh 2kh)/2 (Dean &
// Dalrymple 1991, eq. 4.71; SPM 1984 eq. 2-36).
func TestDispersionResidualAndSinhForm(t *testing.T) {
	const eps = 0x1p-52
	const g = 9.81
	for _, h := range []float64{1e-3, 0.3, 1, 7, 30, 120, 800, 5000} {
		for _, f := range []float64{1e-4, 0.003, 0.02, 0.05, 0.08, 0.13, 0.2, 0.35, 0.6, 1, 2.5, 10} {
			w := 2 * math.Pi * f
			k := Wavenumber(f, h, g)
			res := math.Abs(w*w-g*k*math.Tanh(k*h)) / (w * w)
			if res > 4*eps {
				t.Errorf("f=%v h=%v: |w^2 - g k tanh kh| / w^2 = %.3g, want <= 4 eps (rounding of the check itself)", f, h, res)
			}
			kh := k * h
			n := 0.5
			if kh < 300 {
				n = 0.5 * (1 + 2*kh/math.Sinh(2*kh))
			}
			relClose(t, "cg vs sinh form", GroupVelocity(f, h, g), n*w/k, 2e-14, "Dean & Dalrymple 1991 eq. 4.71")
		}
	}
}

func TestDispersionEdgeCases(t *testing.T) {
	const g = 9.81
	if k := Wavenumber(0, 10, g); k != 0 {
		t.Errorf("Wavenumber(f=0) = %v, want 0", k)
	}
	for _, f := range []float64{-1, math.NaN(), math.Inf(1)} {
		if !math.IsNaN(Wavenumber(f, 10, g)) || !math.IsNaN(GroupVelocity(f, 10, g)) {
			t.Errorf("f = %v: want NaN", f)
		}
	}
	// no overflow at huge frequency and depth
	if k := Wavenumber(1e6, 1e6, g); math.IsInf(k, 0) || math.IsNaN(k) {
		t.Errorf("Wavenumber(1e6 Hz, 1e6 m) = %v", k)
	}
	if cg := GroupVelocity(1e-9, 1e-9, g); math.IsNaN(cg) || math.IsInf(cg, 0) {
		t.Errorf("GroupVelocity(1e-9, 1e-9) = %v", cg)
	}
}
