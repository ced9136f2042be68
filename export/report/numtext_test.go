package report

import (
	"math"
	"testing"

	"swellgrid/export/rundir"
)

// Tables print an integer column as the integer: the station table printed
// its matched count n = 10070 as 1.007e+04 (issue 33). Floats keep fmtNum's
// 4 significant digits; a null prints as a dash.
func TestColTextIntegers(t *testing.T) {
	n := &rundir.Column{Name: "n", Kind: rundir.Int, Int: []int64{10070, 7, 123456789, 0}, Valid: []bool{true, true, true, false}}
	for i, want := range []string{"10070", "7", "123456789", "–"} {
		if got := colText(n, i); got != want {
			t.Errorf("integer %d (valid %v): %q, want %q", n.Int[i], n.Valid[i], got, want)
		}
	}
	f := &rundir.Column{Name: "bias", Kind: rundir.Float, Float: []float64{0.123456, 2.0981, math.NaN()}}
	for i, want := range []string{"0.1235", "2.098", "–"} {
		if got := colText(f, i); got != want {
			t.Errorf("float %g: %q, want %q", f.Float[i], got, want)
		}
	}
}
