package grid

import "testing"

// Canonical order: rows of ascending latitude, columns of ascending longitude
// in [-180, 180), whatever the stored order (swellgrid's own convention).
func TestRegularCanonicalOrder(t *testing.T) {
	g, err := NewRegular([]float64{350, 355, 0, 5}, []float64{60, 55, 50})
	if err != nil {
		t.Fatal(err)
	}
	wantLon := []float64{-10, -5, 0, 5}
	for ix, w := range wantLon {
		if g.Lon[ix] != w {
			t.Errorf("lon[%d] = %v, want %v", ix, g.Lon[ix], w)
		}
	}
	if g.Lat[0] != 50 || g.Lat[g.NX*2] != 60 {
		t.Errorf("lat rows not ascending: %v", g.Lat)
	}
	if g.YFile[0] != 2 || g.XFile[0] != 0 || g.XFile[2] != 2 {
		t.Errorf("file index maps: x %v y %v", g.XFile, g.YFile)
	}
	if _, err := NewRegular([]float64{0, 360}, []float64{1}); err == nil {
		t.Error("duplicate longitude after normalisation accepted")
	}
	if _, err := NewRegular([]float64{0, 1}, []float64{1, 3, 2}); err == nil {
		t.Error("non-monotonic latitude accepted")
	}
}

func TestNormLon(t *testing.T) {
	for in, want := range map[float64]float64{180: -180, -180: -180, 359.5: -0.5, -190: 170, 720: 0} {
		if got := NormLon(in); got != want {
			t.Errorf("NormLon(%v) = %v, want %v", in, got, want)
		}
	}
}
