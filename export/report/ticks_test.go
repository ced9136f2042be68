package report

import (
	"math"
	"slices"
	"strconv"
	"testing"

	"gonum.org/v1/plot"
)

// Map ticks are labelled with the decimals their values need (issue 33's
// example: ticks at 54.25, 54.45, 54.65 °N were labelled "54, 54, 55").
// The labels are checked by reading them back: each names its tick's value.
// Labelling a tick with its value is common practice, not a standard.
func TestTickPrecision(t *testing.T) {
	for _, c := range []struct {
		vals []float64
		want []string
	}{
		{[]float64{54.25, 54.45, 54.65}, []string{"54.25", "54.45", "54.65"}},
		{[]float64{54, 55, 56}, []string{"54", "55", "56"}},
		{[]float64{-0.5, 0, 0.5}, []string{"-0.5", "0.0", "0.5"}},
		{[]float64{10.1, 10.2, 10.3}, []string{"10.1", "10.2", "10.3"}},
		{[]float64{-3.9, -3.85, -3.8}, []string{"-3.90", "-3.85", "-3.80"}},
	} {
		if got := tickLabels(c.vals); !slices.Equal(got, c.want) {
			t.Errorf("ticks %v: labels %q, want %q", c.vals, got, c.want)
		}
	}
	// The axes' tickers over small and large domains: labelled ticks read
	// back as their values, and no two labels are equal.
	for _, r := range [][2]float64{{54.2, 54.7}, {54.18, 54.71}, {-4.02, -3.81}, {20, 31}, {-179.5, -170.2}, {0.001, 0.004}} {
		for name, ts := range map[string][]plot.Tick{"lat": degTicks{}.Ticks(r[0], r[1]), "lon": lonTicks{}.Ticks(r[0], r[1])} {
			seen := map[string]bool{}
			n := 0
			for _, tk := range ts {
				if tk.Label == "" {
					continue
				}
				n++
				v, err := strconv.ParseFloat(tk.Label, 64)
				if err != nil || math.Abs(v-tk.Value) > 1e-9 {
					t.Errorf("%s axis %v: tick %v labelled %q", name, r, tk.Value, tk.Label)
				}
				if seen[tk.Label] {
					t.Errorf("%s axis %v: label %q twice", name, r, tk.Label)
				}
				seen[tk.Label] = true
			}
			if n < 2 {
				t.Errorf("%s axis %v: %d labelled ticks", name, r, n)
			}
		}
	}
}

// The exceedance figure's log axis of percentages labels its decades with
// their values (0.01 %, 0.1 %, 1 %, 10 %, 100 %).
func TestPercentLogTicks(t *testing.T) {
	var labels []string
	for _, tk := range (percentLogTicks{}).Ticks(0.01, 100) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	if want := []string{"0.01", "0.1", "1", "10", "100"}; !slices.Equal(labels, want) {
		t.Errorf("labels %q, want %q", labels, want)
	}
}
