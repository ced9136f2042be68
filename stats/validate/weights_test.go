package validate

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// BilinearWeights and WeightedMean against testdata/validate/weights_ref.json,
// made by testdata/validate/make_weights.py with Debian's python3-scipy
// 1.10.1 (RegularGridInterpolator, linear) and python3-numpy 1.24.2
// (numpy.average; the angle of the weighted resultant for directions).
func TestWeightsAgainstScipy(t *testing.T) {
	b, err := os.ReadFile("../../testdata/validate/weights_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Bilinear []struct {
			A, B float64
			W    []float64
		}
		Mean, Circular []struct {
			X, W []float64
			Mean float64
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Bilinear) < 5 || len(ref.Mean) < 3 || len(ref.Circular) < 3 {
		t.Fatalf("reference incomplete: %+v", ref)
	}
	for _, c := range ref.Bilinear {
		got := BilinearWeights(c.A, c.B)
		for k := range got {
			if math.Abs(got[k]-c.W[k]) > 1e-12 {
				t.Errorf("BilinearWeights(%v, %v) = %v, scipy %v", c.A, c.B, got, c.W)
				break
			}
		}
	}
	for _, c := range ref.Mean {
		if got := WeightedMean(c.X, c.W, false); math.Abs(got-c.Mean) > 1e-12*math.Abs(c.Mean) {
			t.Errorf("WeightedMean(%v, %v) = %v, numpy %v", c.X, c.W, got, c.Mean)
		}
	}
	for _, c := range ref.Circular {
		got := WeightedMean(c.X, c.W, true)
		if d := math.Abs(WrapDeg(got - c.Mean)); d > 1e-9 || got < 0 || got >= 360 {
			t.Errorf("circular WeightedMean(%v, %v) = %v, numpy %v", c.X, c.W, got, c.Mean)
		}
	}
	// a missing value or no weight gives no mean (common practice: no
	// value is made up)
	if !math.IsNaN(WeightedMean([]float64{1, math.NaN()}, []float64{1, 1}, false)) || !math.IsNaN(WeightedMean(nil, nil, true)) {
		t.Error("a missing value or an empty set gave a mean")
	}
}
