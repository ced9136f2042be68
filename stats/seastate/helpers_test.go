package seastate

import (
	"encoding/json"
	"math"
	"os"
	"sync"
	"testing"
)

// relClose fails the test when got and want differ by more than tol relative
// to |want| (absolute when want is 0). source names where want comes from.
func relClose(t *testing.T, what string, got, want, tol float64, source string) {
	t.Helper()
	d := math.Abs(got - want)
	if want != 0 {
		d /= math.Abs(want)
	}
	if !(d <= tol) {
		t.Errorf("%s = %.15g, want %.15g (rel. diff %.3g > %.3g; reference: %s)", what, got, want, d, tol, source)
	}
}

// reference is testdata/seastate/reference.json, written by
// testdata/seastate/make_reference.py with Debian's python3-scipy 1.10.1 and
// python3-numpy 1.24.2 (the versions are also recorded inside the file).
type reference struct {
	Scipy, Numpy string
	Rho, G       float64
	Dispersion   []struct {
		F  float64 `json:"f_hz"`
		H  float64 `json:"h_m"`
		K  float64 `json:"k"`
		Cg float64 `json:"cg"`
	}
	Jonswap []struct {
		Gamma      float64
		TeOverTp   float64 `json:"te_over_tp"`
		Tm01OverTp float64 `json:"tm01_over_tp"`
		Tm02OverTp float64 `json:"tm02_over_tp"`
		Eps0       float64
	}
	JonswapValues struct {
		Freq           []float64 `json:"freq_hz"`
		Hm0, Tp, Gamma float64
		S              []float64 `json:"s_m2_per_hz"`
	} `json:"jonswap_values"`
	Cos2s []struct {
		S, Integral, Directionality float64
	}
	Parabola []struct {
		X, Y   []float64
		Vertex float64
	}
	Bulk []struct {
		Hm0, Te float64
		H       any     `json:"h_m"`
		J       float64 `json:"j_w_per_m"`
	}
	Spectrum struct {
		Depth          float64   `json:"depth_m"`
		Freq           []float64 `json:"freq_hz"`
		Dir            []float64 `json:"dir_deg"`
		S              []float64 `json:"s_m2_per_hz_per_rad"`
		Moments        []float64
		Hm0, Te        float64
		Tm01, Tm02     float64
		Eps0           float64
		TpDiscrete     float64 `json:"tp_discrete"`
		TpParabolic    float64 `json:"tp_parabolic"`
		J              float64 `json:"j_w_per_m"`
		JThetaMax      float64 `json:"jtheta_max_w_per_m"`
		DirMax         float64 `json:"dir_max_deg"`
		Directionality float64
		E1D            []float64 `json:"e_1d_m2_per_hz"`
		J1D            float64   `json:"j_1d_w_per_m"`
	}
}

var (
	refOnce sync.Once
	refData reference
	refErr  error
)

const refPath = "../../testdata/seastate/reference.json"

func loadReference(t *testing.T) *reference {
	t.Helper()
	refOnce.Do(func() {
		b, err := os.ReadFile(refPath)
		if err != nil {
			refErr = err
			return
		}
		refErr = json.Unmarshal(b, &refData)
	})
	if refErr != nil {
		t.Fatalf("reading %s: %v (regenerate with /usr/bin/python3 testdata/seastate/make_reference.py)", refPath, refErr)
	}
	return &refData
}

// logFreqs returns n frequencies f0 * r^i.
func logFreqs(f0, r float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = f0 * math.Pow(r, float64(i))
	}
	return f
}

// uniformDirs returns n directions start + i*360/n degrees.
func uniformDirs(start float64, n int) []float64 {
	d := make([]float64, n)
	for i := range d {
		d[i] = start + float64(i)*360/float64(n)
	}
	return d
}

// outer returns the flat 2-D density e_i * d_j (index i*len(d)+j).
func outer(e, d []float64) []float64 {
	s := make([]float64, 0, len(e)*len(d))
	for _, ei := range e {
		for _, dj := range d {
			s = append(s, ei*dj)
		}
	}
	return s
}
