package validation

import (
	"math"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"testing"
)

// Validation across 180 degrees: a station beside the date line finds its
// four cells of a grid stored 0..360 with the weights it has 170 degrees
// west, whichever convention its longitude is given in; the distance to
// the nearest cell (haversine, periodic in longitude) does not see the
// date line.
func TestValidationPlacesAcrossDateLine(t *testing.T) {
	lat := []float64{-21, -19, -17, -15}
	pac, err := grid.NewRegular(dlAxis(172), lat)
	if err != nil {
		t.Fatal(err)
	}
	away, _ := grid.NewRegular(dlAxis(2), lat)
	masked := make([]bool, pac.NCells())
	wc, ww, why := bilinearCells(grid.Regular, 9, 4, away.Lon, away.Lat, masked, 10.7, -17.5)
	if why != "" {
		t.Fatal(why)
	}
	for _, lon := range []float64{180.7, -179.3} {
		c, w, why := bilinearCells(grid.Regular, 9, 4, pac.Lon, pac.Lat, masked, lon, -17.5)
		if why != "" {
			t.Fatalf("station at %v: %s", lon, why)
		}
		for k := range c {
			if c[k] != wc[k] || math.Abs(w[k]-ww[k]) > 1e-12 {
				t.Errorf("station at %v: cells %v weights %v, away %v %v", lon, c, w, wc, ww)
				break
			}
		}
	}
	// the haversine is periodic in longitude: across 180 as away from it
	if d, e := rundir.Haversine(179.5, -17, -179.5, -17), rundir.Haversine(9.5, -17, 10.5, -17); math.Abs(d-e) > 1e-9 || d > 107 {
		t.Errorf("haversine across 180: %v km, away %v km", d, e)
	}
}

// dlAxis is nine longitudes 2 degrees apart from x0.
func dlAxis(x0 float64) []float64 {
	a := make([]float64, 9)
	for i := range a {
		a[i] = x0 + 2*float64(i)
	}
	return a
}
