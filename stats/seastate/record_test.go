package seastate

import (
	"math"
	"testing"
)

// Circular mean of directions on either side of north (Mardia and Jupp 2000,
// section 2.2: the mean of 350 and 10 degrees is 0, not 180); power weights
// pull it toward the stronger sea state. A 1-D record has no direction.
func TestRecordMeans(t *testing.T) {
	var r RecordMeans
	r.Add(&Params{Valid: true, J: 1000, Directionality: 0.8, DirMaxPowerDeg: 350, Eps0: 0.4})
	r.Add(&Params{Valid: true, J: 1000, Directionality: 0.6, DirMaxPowerDeg: 10, Eps0: 0.6, BadBins: 2})
	r.Add(&Params{Valid: false, BadBins: 1})
	if d := r.DirMaxPowerDeg(); math.Abs(d) > 1e-9 && math.Abs(d-360) > 1e-9 {
		t.Errorf("circular mean of 350 and 10 = %v, want 0", d)
	}
	if got := r.Directionality(); math.Abs(got-0.7) > 1e-12 {
		t.Errorf("directionality %v, want 0.7", got)
	}
	if got := r.WidthMean(); math.Abs(got-0.5) > 1e-12 {
		t.Errorf("width %v, want 0.5", got)
	}
	if r.BadBins != 3 {
		t.Errorf("bad bins %d", r.BadBins)
	}
	b, _ := r.MarshalBinary()
	var q RecordMeans
	if err := q.UnmarshalBinary(b); err != nil || q != r {
		t.Errorf("round trip: %v %+v", err, q)
	}
	var one RecordMeans
	one.Add(&Params{Valid: true, J: 5, Directionality: math.NaN(), DirMaxPowerDeg: math.NaN(), Eps0: 0.3})
	if !math.IsNaN(one.DirMaxPowerDeg()) || !math.IsNaN(one.Directionality()) {
		t.Error("1-D record reports a direction")
	}
}
