package extremes

import (
	"math/rand/v2"
	"testing"
)

// TestDeltaCoverage: over seeded samples from a known GEV, the 95% delta-method
// interval of the 100-year level should contain the true level in roughly 95% of
// cases, by the asymptotic normality of the MLE (Coles 2001, section 2.6.4).
// With few maxima the delta interval is known to under-cover because the
// likelihood of a long-period level is skewed (Coles 2001, section 3.3.3, which
// recommends the profile likelihood for this reason), so the accepted band is
// wider for 50 maxima than for 300; the observed shares are logged and quoted in
// the package notes.
func TestDeltaCoverage(t *testing.T) {
	cases := []struct {
		truth  GEV
		n      int
		reps   int
		lo, hi float64
	}{
		{GEV{Loc: 5, Scale: 1, Shape: -0.1}, 50, 1000, 0.80, 0.98},
		{GEV{Loc: 5, Scale: 1, Shape: 0.1}, 50, 1000, 0.80, 0.98},
		{GEV{Loc: 5, Scale: 1, Shape: 0.1}, 300, 400, 0.91, 0.985},
	}
	for _, c := range cases {
		want, _ := c.truth.ReturnLevel(100)
		r := rand.New(rand.NewPCG(2024, uint64(c.n)*1000+uint64(c.truth.Shape*100+50)))
		x := make([]float64, c.n)
		hit, used := 0, 0
		for k := 0; k < c.reps; k++ {
			for i := range x {
				x[i] = c.truth.Quantile(openUnit(r))
			}
			f, err := FitGEV(x)
			if err != nil || !f.Converged || !f.InfoOK {
				continue
			}
			used++
			if _, lo, hi := f.ReturnLevel(100); lo <= want && want <= hi {
				hit++
			}
		}
		share := float64(hit) / float64(used)
		t.Logf("shape %+.1f, %d maxima: true 100-y level %.3f inside the 95%% delta interval in %d of %d fits (%.1f%%)",
			c.truth.Shape, c.n, want, hit, used, 100*share)
		if used < c.reps*95/100 {
			t.Errorf("only %d of %d fits usable", used, c.reps)
		}
		if share < c.lo || share > c.hi {
			t.Errorf("coverage %.3f outside [%.2f, %.3f]", share, c.lo, c.hi)
		}
	}
}
