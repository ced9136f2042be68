package climate

import (
	"bytes"
	"math"
	"testing"
)

// FuzzPowerMatrix fuzzes the power-matrix reader. Any input gives a device or
// an error; a device it returns must honour the documented contract of
// ReadPowerMatrixCSV and Device (IEC TS 62600-100 power matrix: mean power per
// Hm0 x Te bin): strictly increasing finite centres, rows x columns powers, and
// a lookup that gives a power in [0, rated] anywhere.
func FuzzPowerMatrix(f *testing.F) {
	f.Add([]byte("hm0\\te,5,7,9\n0.5,5,9,10\n1.5,40,70,75\n2.5,110,190,200\n"))
	f.Add([]byte("# comment\nh,6,8\n1,0,0\n2,0,1\n"))
	f.Add([]byte("h,6,8\n1,0\n2,0,1\n"))
	f.Add([]byte("h,6,8\n1,n/a,3\n2,0,1\n"))
	f.Add([]byte("h,6,NaN\n1,1,3\n2,0,1\n"))
	f.Add([]byte("\"h,6,8\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := ReadPowerMatrixCSV(bytes.NewReader(data), "fuzz")
		if err != nil {
			if d != nil {
				t.Fatal("device and error")
			}
			return
		}
		if len(d.PowerKW) != len(d.Hm0M)*len(d.TeS) || len(d.Hm0M) < 2 || len(d.TeS) < 2 {
			t.Fatalf("shape %d x %d with %d powers", len(d.Hm0M), len(d.TeS), len(d.PowerKW))
		}
		for _, lk := range []Lookup{BinLookup, Bilinear} {
			d.Lookup = lk
			for _, h := range []float64{-1, 0, d.Hm0M[0], (d.Hm0M[0] + d.Hm0M[1]) / 2, d.Hm0M[len(d.Hm0M)-1], 1e9, math.NaN()} {
				for _, te := range []float64{-1, 0, d.TeS[0], (d.TeS[0] + d.TeS[1]) / 2, d.TeS[len(d.TeS)-1], 1e9, math.NaN()} {
					p, _ := d.power(h, te)
					if !(p >= 0 && p <= d.RatedKW()) {
						t.Fatalf("%v lookup at (%v, %v): power %v outside [0, %v]", lk, h, te, p, d.RatedKW())
					}
				}
			}
		}
	})
}

// TestPowerNaNRegression is the crasher FuzzPowerMatrix found: a NaN Te
// (or Hm0) indexed the bin table at math.MinInt and panicked. A sea state
// with a missing value is outside the matrix: zero power (the documented
// contract of Device: outside the matrix the device produces nothing).
func TestPowerNaNRegression(t *testing.T) {
	d, err := ReadPowerMatrixCSV(bytes.NewReader([]byte("hm0\\te,5,7,9\n0.5,5,9,10\n1.5,40,70,75\n2.5,110,190,200\n")), "r")
	if err != nil {
		t.Fatal(err)
	}
	for _, lk := range []Lookup{BinLookup, Bilinear} {
		d.Lookup = lk
		for _, c := range [][2]float64{{0, math.NaN()}, {math.NaN(), 7}, {math.NaN(), math.NaN()}, {1.5, math.NaN()}} {
			if p, _ := d.power(c[0], c[1]); p != 0 {
				t.Errorf("%v: power(%v, %v) = %v, want 0", lk, c[0], c[1], p)
			}
		}
	}
}
