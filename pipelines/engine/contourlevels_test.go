package engine

import (
	"math"
	"reflect"
	"strings"
	"testing"
)

// An all-null column was reported as having "no spread of values" (issue
// 33): the warning must say it has no values. A constant column has no
// spread; nulls and land cells do not count; the spec's levels are used as
// given.
func TestContourLevelsWarnings(t *testing.T) {
	nan := math.NaN()
	masked := []bool{false, false, true, false}
	for _, c := range []struct {
		name   string
		vals   []float64
		given  []float64
		levels []float64
		warn   string
	}{
		{"all null", []float64{nan, nan, nan, nan}, nil, nil, "no contours for x: the column has no values"},
		{"null on sea, a value on land", []float64{nan, nan, 3, nan}, nil, nil, "no contours for x: the column has no values"},
		{"constant", []float64{2.5, nan, 7, 2.5}, nil, nil, "no contours for x: the column has no spread of values (2.5 on every"},
		// NiceLevels(0, 1, 8): steps of 0.2 (8 or fewer levels), 0 to 1.
		{"range", []float64{0, nan, 9, 1}, nil, []float64{0, 0.2, 0.4, 0.6, 0.8, 1}, ""},
		{"given", []float64{nan, nan, nan, nan}, []float64{1, 2}, []float64{1, 2}, ""},
	} {
		levels, why := contourLevels("x", c.vals, masked, c.given)
		if !reflect.DeepEqual(levels, c.levels) {
			t.Errorf("%s: levels %v, want %v", c.name, levels, c.levels)
		}
		if (c.warn == "") != (why == "") || !strings.HasPrefix(why, c.warn) {
			t.Errorf("%s: warning %q, want one starting %q", c.name, why, c.warn)
		}
	}
}
