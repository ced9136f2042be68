package report

import (
	"math"
	"strings"
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

// A map caption gives the column's unit after its range and isolines, and
// none for a dimensionless column (CF's canonical unit "1"): the caption of
// a ratio read "from 1.845 to 2.098 1" (issue 33).
func TestMapCaptionUnits(t *testing.T) {
	for _, c := range []struct {
		unit, colour, iso string
	}{
		{"1", "Colour from 1.845 to 2.098 (viridis);", "Isolines at 1.9, 2."},
		{"", "Colour from 1.845 to 2.098 (viridis);", "Isolines at 1.9, 2."},
		{"kW/m", "Colour from 1.845 to 2.098 kW/m (viridis);", "Isolines at 1.9, 2 kW/m."},
	} {
		got := mapCaption("x", "a column", c.unit, 1.845, 2.098, []float64{1.9, 2})
		if !strings.Contains(got, c.colour) || !strings.HasSuffix(got, c.iso) {
			t.Errorf("unit %q: caption %q, want %q and ending %q", c.unit, got, c.colour, c.iso)
		}
	}
}
