package ingest

import (
	"math"
	"testing"
)

// Unit factors follow the SI definitions (common practice): 1 cm = 0.01 m,
// 1 rad = 180/pi degree, omega = 2 pi f so S(f) = 2 pi S(omega).
func TestConversionFactor(t *testing.T) {
	cases := []struct {
		u    string
		q    Quantity
		want float64
	}{
		{"m", Length, 1}, {"cm", Length, 0.01}, {"metres", Length, 1},
		{"s", Period, 1}, {"seconds", Period, 1},
		{"degree", Angle, 1}, {"degrees_true", Angle, 1}, {"rad", Angle, 180 / math.Pi},
		{"Hz", Frequency, 1}, {"s-1", Frequency, 1}, {"1/s", Frequency, 1}, {"rad s-1", Frequency, 1 / (2 * math.Pi)},
		{"m2 s rad-1", Density2D, 1}, {"m^2/Hz/rad", Density2D, 1}, {"m2 s degree-1", Density2D, 180 / math.Pi},
		{"m**2 s deg-1", Density2D, 180 / math.Pi}, {"m2 s rad-2", Density2D, 2 * math.Pi},
		{"m2 s", Density1D, 1}, {"m2/Hz", Density1D, 1}, {"m2 s rad-1", Density1D, 2 * math.Pi}, {"cm2 s", Density1D, 1e-4},
	}
	for _, c := range cases {
		got, err := ConversionFactor(c.u, c.q)
		if err != nil {
			t.Errorf("%q: %v", c.u, err)
			continue
		}
		if math.Abs(got-c.want) > 1e-12*math.Abs(c.want) {
			t.Errorf("%q as %v: factor %v, want %v", c.u, c.q, got, c.want)
		}
	}
	for _, c := range []struct {
		u string
		q Quantity
	}{{"kg", Length}, {"m s-1", Length}, {"Hz", Period}, {"m", Angle}, {"m2", Density1D}, {"furlong", Length}, {"", Length}} {
		if _, err := ConversionFactor(c.u, c.q); err == nil {
			t.Errorf("%q accepted as %v", c.u, c.q)
		}
	}
}
