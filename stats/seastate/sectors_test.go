package seastate

import (
	"math"
	"testing"
)

// The sector powers of a spectrum add up to its omnidirectional J (energy
// conservation of the split), and with the direction bins on the sector
// centres each sector gets exactly its bin's flux rho g sum_i cg_i S_ij df_i
// dtheta_j (the formula of SectorPowers; IEC TS 62600-101).
func TestSectorPowersConserveAndAlign(t *testing.T) {
	freq := []float64{0.05, 0.07, 0.1, 0.14, 0.2}
	for _, c := range []struct {
		dirs []float64
		n    int
	}{
		{[]float64{0, 22.5, 45, 67.5, 90, 112.5, 135, 157.5, 180, 202.5, 225, 247.5, 270, 292.5, 315, 337.5}, 16},
		{[]float64{352.5, 7.5, 22.5, 37.5, 52.5, 67.5, 82.5, 97.5, 112.5, 127.5, 142.5, 157.5, 172.5, 187.5, 202.5, 217.5, 232.5, 247.5, 262.5, 277.5, 292.5, 307.5, 322.5, 337.5}, 16},
		{[]float64{10, 100, 190, 280, 300}, 8},
		{[]float64{42}, 16},
	} {
		l, err := NewLayout(freq, c.dirs)
		if err != nil {
			t.Fatal(err)
		}
		k := NewKernel(l, 30, DefaultConsts)
		sp, err := NewSectorSplit(l, c.n)
		if err != nil {
			t.Fatal(err)
		}
		s := make([]float64, l.Len())
		for i := range s {
			s[i] = 0.1 + float64((i*7919)%13)/10
		}
		var p Params
		k.Params(s, &p)
		out := make([]float64, c.n)
		k.SectorPowers(sp, out)
		var sum float64
		for _, v := range out {
			sum += v
		}
		if math.Abs(sum-p.J) > 1e-12*p.J {
			t.Errorf("%d directions over %d sectors: sectors sum to %.15g W/m, J = %.15g", len(c.dirs), c.n, sum, p.J)
		}
		if len(c.dirs) == c.n {
			for j := range c.dirs {
				want := 0.0
				for i := range freq {
					want += DefaultConsts.Rho * DefaultConsts.G * k.cg[i] * s[i*c.n+j] * l.df[i] * l.dth[j]
				}
				if math.Abs(out[j]-want) > 1e-12*want {
					t.Errorf("bin %d on sector centre %g: %g W/m, its flux %g", j, c.dirs[j], out[j], want)
				}
			}
		}
		if len(c.dirs) == 1 && out[2] != p.J { // 42 deg lies in sector 2 (33.75..56.25)
			t.Errorf("single direction 42 deg: sector 2 has %g of %g W/m", out[2], p.J)
		}
	}
}
