package seastate

import (
	"math"
	"strings"
	"testing"
)

func TestLayoutWidths(t *testing.T) {
	// frequency widths follow numpy.gradient of the sorted frequencies
	// (values worked by hand: interior half-distances, end bins one-sided)
	l, err := NewLayout([]float64{0.3, 0.1, 0.2, 0.5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.15, 0.1, 0.1, 0.2} // caller's order: 0.3, 0.1, 0.2, 0.5
	for i, w := range l.FrequencyWidths() {
		relClose(t, "df", w, want[i], 1e-15, "numpy.gradient([0.1,0.2,0.3,0.5]) = [0.1,0.1,0.15,0.2]")
	}
	// uniform 24 directions: 15 deg each; any order, any offset
	l, err = NewLayout([]float64{0.1, 0.2}, []float64{345, 0, 15, 30, 330, 45, 60, 75, 90, 105, 120, 135, 150, 165, 180, 195, 210, 225, 240, 255, 270, 285, 300, 315})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range l.DirectionWidths() {
		relClose(t, "dtheta", w, 15*math.Pi/180, 1e-14, "360/24 deg (common practice)")
	}
	// irregular directions: widths are half the circular gaps and sum to 2 pi
	l, err = NewLayout([]float64{0.1, 0.2}, []float64{350, 10, 100, -90, 725})
	if err != nil {
		t.Fatal(err)
	}
	// normalised: 350, 10, 100, 270, 5 -> sorted 5, 10, 100, 270, 350
	wantDeg := []float64{(80 + 15) / 2.0, (5 + 90) / 2.0, (90 + 170) / 2.0, (170 + 80) / 2.0, (15 + 5) / 2.0}
	var sum float64
	for j, w := range l.DirectionWidths() {
		sum += w
		relClose(t, "dtheta irregular", w*180/math.Pi, wantDeg[j], 1e-13, "half circular gaps, worked by hand")
	}
	relClose(t, "sum dtheta", sum, 2*math.Pi, 1e-15, "full circle")
	// one direction gets the whole circle
	l, _ = NewLayout([]float64{0.1, 0.2}, []float64{42})
	relClose(t, "single direction width", l.DirectionWidths()[0], 2*math.Pi, 0, "full circle")
	if l.Len() != 2 || l.ND() != 1 || l.NF() != 2 {
		t.Errorf("Len/NF/ND = %d/%d/%d, want 2/2/1", l.Len(), l.NF(), l.ND())
	}
}

func TestLayoutErrors(t *testing.T) {
	cases := []struct {
		f, d []float64
		msg  string
	}{
		{[]float64{0.1}, nil, "at least 2 frequencies"},
		{[]float64{0.1, 0.1}, nil, "distinct"},
		{[]float64{0.1, 0}, nil, "finite and positive"},
		{[]float64{0.1, math.NaN()}, nil, "finite and positive"},
		{[]float64{0.1, 0.2}, []float64{0, 360}, "distinct modulo"},
		{[]float64{0.1, 0.2}, []float64{0, math.Inf(1)}, "finite"},
	}
	for _, c := range cases {
		_, err := NewLayout(c.f, c.d)
		if err == nil || !strings.Contains(err.Error(), strings.Fields(c.msg)[0]) {
			t.Errorf("NewLayout(%v, %v) error = %v, want one mentioning %q", c.f, c.d, err, c.msg)
		}
	}
}
