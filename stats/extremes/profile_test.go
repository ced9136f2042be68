package extremes

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

type evdRef struct {
	cas                  string
	T, level, lower, upp float64
}

// loadEvd reads testdata/extremes/evd_profile_refs.csv, made by
// make_evd_profile_refs.R with R's evd package (fgev/fpot, profile, confint).
func loadEvd(t *testing.T) []evdRef {
	t.Helper()
	fh, err := os.Open(filepath.Join("..", "..", "testdata", "extremes", "evd_profile_refs.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	var out []evdRef
	sc := bufio.NewScanner(fh)
	for sc.Scan() {
		l := sc.Text()
		if strings.HasPrefix(l, "#") || strings.HasPrefix(l, "case") {
			continue
		}
		f := strings.Split(l, ",")
		var v [4]float64
		for i := range v {
			v[i], err = strconv.ParseFloat(strings.TrimSpace(f[i+1]), 64)
			if err != nil {
				t.Fatal(err)
			}
		}
		out = append(out, evdRef{strings.TrimSpace(f[0]), v[0], v[1], v[2], v[3]})
	}
	if len(out) != 4 {
		t.Fatalf("%d reference rows", len(out))
	}
	return out
}

// TestProfileIntervalsAgainstEvd checks the profile-likelihood intervals of
// return levels against R's evd 2.3.6.1 (confint of profile of fgev / fpot):
// Port Pirie annual maxima (Coles 2001, section 3.4.1) and the rainfall
// exceedances of 30 mm (Coles 2001, section 4.4.1). evd interpolates the
// profile deviance on a grid (mesh 0.002 m and level/2000 mm), hence the
// tolerances of 2e-3 m and 0.05 mm.
func TestProfileIntervalsAgainstEvd(t *testing.T) {
	pp := readColumn(t, "portpirie.csv", 1)
	rain := readColumn(t, "rain_exceedances.csv", 0)
	gf, err := FitGEV(pp)
	if err != nil {
		t.Fatal(err)
	}
	lambda := 152 / (17531.0 / 365)
	pf, err := FitGPD(rain, 30, lambda)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range loadEvd(t) {
		var lv, lo, hi, tol float64
		switch r.cas {
		case "portpirie_gev":
			lv, _ = gf.GEV.ReturnLevel(r.T)
			lo, hi = gf.ProfileGEV(r.T, pp, 0)
			tol = 2e-3
		case "rain_gpd":
			lv, _ = pf.GPD.ReturnLevel(r.T, lambda)
			lo, hi = pf.ProfileGPD(r.T, rain, 0)
			tol = 0.05
		}
		t.Logf("%s T=%g: level %.5f [%.5f, %.5f]; evd %.5f [%.5f, %.5f]", r.cas, r.T, lv, lo, hi, r.level, r.lower, r.upp)
		near(t, r.cas+" level", lv, r.level, tol)
		near(t, r.cas+" profile lower", lo, r.lower, tol)
		near(t, r.cas+" profile upper", hi, r.upp, tol)
	}
}

// cubicCrossing recovers the crossing of chi2Crit95 by a known cubic from
// its value and slope at one point; the roots are numpy.roots (Debian's
// python3-numpy) of 0.3 t^3 + t^2 - 3.841458820694124 and of
// -0.05 t^3 + 0.8 t^2 - 3.841458820694124 (the root on the side of h);
// a quadratic gives z975 standard errors.
func TestCubicCrossing(t *testing.T) {
	for _, c := range []struct{ a, b, h, want float64 }{
		{1, 0.3, 1, 1.6095270882401682},
		{1, 0.3, 2.5, 1.6095270882401682},
		{0.8, -0.05, 1.5, 2.374587991024917},
		{0.8, -0.05, -1.5, -2.0624110557466233},
		{1 / (0.7 * 0.7), 0, z975 * 0.7, z975 * 0.7},
	} {
		d, dd := c.a*c.h*c.h+c.b*c.h*c.h*c.h, 2*c.a*c.h+3*c.b*c.h*c.h
		got, ok := cubicCrossing(c.h, d, dd)
		if !ok || math.Abs(got-c.want) > 1e-10*math.Abs(c.want) {
			t.Errorf("cubic %g t^2 + %g t^3 from h = %g: crossing %v (ok %v), want %v", c.a, c.b, c.h, got, ok, c.want)
		}
	}
	// A profile that falls on that side has no crossing there.
	if _, ok := cubicCrossing(1, 0.5, -0.2); ok {
		t.Error("crossing found on a falling cubic")
	}
}

// minimise1D finds the minimum of exp(x) - 2x at ln 2 (elementary), from
// either side and with or without a curvature to start from, also when f is
// +Inf beyond x = 1.5 (the search backs away from it).
func TestMinimise1D(t *testing.T) {
	f := func(p, g []float64) float64 {
		x := p[0]
		if x > 1.5 {
			return math.Inf(1)
		}
		if g != nil {
			g[0] = math.Exp(x) - 2
		}
		return math.Exp(x) - 2*x
	}
	for _, c := range []struct{ x0, curv float64 }{{0, math.NaN()}, {1.4, math.NaN()}, {-3, 2}, {1.2, 0.01}} {
		x, fx, h, ok := minimise1D(f, c.x0, f([]float64{c.x0}, nil), 1e-10, c.curv)
		if !ok || math.Abs(x-math.Ln2) > 1e-9 || fx != f([]float64{x}, nil) || math.Abs(h-2) > 1e-3 {
			t.Errorf("from %g (curvature %g): x %v f %v curvature %v ok %v; want ln 2, curvature 2", c.x0, c.curv, x, fx, h, ok)
		}
	}
}

// TestGPDProfileEndsOnTheDeviance checks each end of ProfileGPD (found from
// the Lagrange conditions, lagrangeEnd, where they hold) by the definition
// of the interval (Coles 2001, section 2.6.6): the profile deviance there,
// 2 [nll_p(x) - nllMax] with nll_p maximised over the shape by a
// golden-section search independent of the code under test, equals
// chi2_1(0.95); a point 1e-4 inside the end has a smaller deviance. Data:
// the rainfall excesses of Coles (2001), threshold 30 mm.
func TestGPDProfileEndsOnTheDeviance(t *testing.T) {
	rain := readColumn(t, "rain_exceedances.csv", 0)
	lambda := 152 / (17531.0 / 365)
	pf, err := FitGPD(rain, 30, lambda)
	if err != nil {
		t.Fatal(err)
	}
	var y []float64
	for _, v := range rain {
		if v > 30 {
			y = append(y, v-30)
		}
	}
	dev := func(x, T float64) float64 {
		s := math.Log(lambda * T)
		_, v := goldenMin(func(xi float64) float64 {
			a := (math.Exp(xi*s) - 1) / xi
			return gpdNegLogLik([]float64{math.Log((x - 30) / a), xi}, nil, y)
		}, -0.9, 2.0, 200)
		return 2 * (v + pf.LogLik)
	}
	for _, T := range []float64{10, 50, 100} {
		lv, _ := pf.GPD.ReturnLevel(T, lambda)
		lo, hi := pf.ProfileGPD(T, rain, 0)
		checkEndsOnDeviance(t, T, lv, lo, hi, dev)
	}
}

// goldenMin minimises f over [lo, hi] by iters golden-section steps
// (Kiefer 1953), independent of the code under test, and returns the
// midpoint of the last bracket and f there.
func goldenMin(f func(float64) float64, lo, hi float64, iters int) (float64, float64) {
	r := (math.Sqrt(5) - 1) / 2
	for k := 0; k < iters; k++ {
		c, d := hi-r*(hi-lo), lo+r*(hi-lo)
		if f(c) < f(d) {
			hi = d
		} else {
			lo = c
		}
	}
	x := 0.5 * (lo + hi)
	return x, f(x)
}

// checkEndsOnDeviance checks the ends lo, hi of the interval of the level
// lv for period T by the interval's definition: the profile deviance dev
// equals chi2_1(0.95) at each end, to 1e-6, and is smaller 1e-4 inside it.
func checkEndsOnDeviance(t *testing.T, T, lv, lo, hi float64, dev func(x, T float64) float64) {
	t.Helper()
	for _, e := range []struct {
		name  string
		x, in float64
	}{{"lower", lo, lo + 1e-4*(lv-lo)}, {"upper", hi, hi - 1e-4*(hi-lv)}} {
		d := dev(e.x, T)
		if math.Abs(d-chi2Crit95) > 1e-6 {
			t.Errorf("T=%g %s end %.8f: deviance %.9f, want %.9f", T, e.name, e.x, d, chi2Crit95)
		}
		if din := dev(e.in, T); !(din < d) {
			t.Errorf("T=%g %s end %.8f: deviance inside %.9f not below %.9f", T, e.name, e.x, din, d)
		}
	}
}

// TestGEVProfileEndsOnTheDeviance is TestGPDProfileEndsOnTheDeviance for
// ProfileGEV on the Port Pirie annual maxima (Coles 2001, section 3.4.1):
// the profile deviance at each end, nll_p maximised over (log Scale, Shape)
// by nested golden-section searches, equals chi2_1(0.95), and is smaller
// 1e-4 inside the end.
func TestGEVProfileEndsOnTheDeviance(t *testing.T) {
	pp := readColumn(t, "portpirie.csv", 1)
	gf, err := FitGEV(pp)
	if err != nil {
		t.Fatal(err)
	}
	golden := func(f func(float64) float64, lo, hi float64) (float64, float64) { return goldenMin(f, lo, hi, 80) }
	dev := func(z, T float64) float64 {
		s := -math.Log(-math.Log1p(-1 / T))
		_, v := golden(func(xi float64) float64 {
			a := (math.Exp(xi*s) - 1) / xi
			_, v := golden(func(phi float64) float64 {
				return gevNegLogLik([]float64{z - math.Exp(phi)*a, phi, xi}, nil, pp)
			}, math.Log(0.05), math.Log(1))
			return v
		}, -0.6, 0.6)
		return 2 * (v + gf.LogLik)
	}
	for _, T := range []float64{10, 100} {
		lv, _ := gf.GEV.ReturnLevel(T)
		lo, hi := gf.ProfileGEV(T, pp, 0)
		checkEndsOnDeviance(t, T, lv, lo, hi, dev)
	}
}
