package seastate

import (
	"encoding/json"
	"math"
	"math/rand"
	"os"
	"testing"
)

// The table against the exact solve (solveKh, checked against scipy brentq in
// reference_test.go) at 16 points inside every interval, at both ends of
// every interval and at random (f, h) pairs: the relative error of G(y) and of
// the group velocity stays below CgTableMaxRelErr over the whole range.
func TestCgTableErrorBound(t *testing.T) {
	worst, worstY := 0.0, 0.0
	check := func(y float64) {
		if y <= 0 || y >= deepKh {
			return
		}
		exact := groupRatioExact(y)
		if e := math.Abs(groupRatio(y)/exact - 1); e > worst {
			worst, worstY = e, y
		}
	}
	for i := 0; i < cgTabN; i++ {
		for j := 0; j <= 16; j++ {
			check((float64(i) + float64(j)/16) * cgTabStep)
		}
		check((float64(i) + 1e-9) * cgTabStep)
		check((float64(i+1) - 1e-9) * cgTabStep)
	}
	t.Logf("worst relative error of G(y) over the table: %.3g at y = %.6g", worst, worstY)
	if worst > CgTableMaxRelErr {
		t.Errorf("table error %.3g at y = %g above the stated bound %g", worst, worstY, CgTableMaxRelErr)
	}
	rng := rand.New(rand.NewSource(16))
	worst = 0
	for n := 0; n < 200000; n++ {
		f := math.Exp(rng.Float64()*math.Log(2/0.01)) * 0.01  // 0.01 .. 2 Hz
		h := math.Exp(rng.Float64()*math.Log(6000/0.1)) * 0.1 // 0.1 .. 6000 m
		exact := GroupVelocity(f, h, 9.81)
		if e := math.Abs(GroupVelocityFast(f, h, 9.81)/exact - 1); e > worst {
			worst = e
		}
		te := 1 / f
		d := NewBulkDepth(h, 9.81)
		c := Consts{Rho: 1025, G: 9.81}
		jx := BulkPowerFinite(1.7, te, h, c)
		if e := math.Abs(d.Power(1.7, te, c)/jx - 1); e > worst {
			worst = e
		}
	}
	t.Logf("worst relative error of cg and J at random (f, h): %.3g", worst)
	if worst > CgTableMaxRelErr {
		t.Errorf("GroupVelocityFast / BulkDepth.Power error %.3g above the stated bound %g", worst, CgTableMaxRelErr)
	}
}

// The special cases are those of GroupVelocity and BulkPowerFinite.
func TestCgTableSpecialCases(t *testing.T) {
	c := Consts{Rho: 1025, G: 9.81}
	for _, h := range []float64{math.Inf(1), math.NaN(), 0, -3} {
		if got, want := GroupVelocityFast(0.1, h, 9.81), GroupVelocity(0.1, h, 9.81); got != want {
			t.Errorf("deep h=%v: %v, exact %v", h, got, want)
		}
		if got, want := NewBulkDepth(h, 9.81).Power(2, 9, c), BulkPowerDeep(2, 9, c); got != want {
			t.Errorf("deep h=%v: J %v, deep-water %v", h, got, want)
		}
	}
	for _, te := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if j := NewBulkDepth(30, 9.81).Power(2, te, c); !math.IsNaN(j) {
			t.Errorf("te=%v: J %v, want NaN", te, j)
		}
	}
	if v := GroupVelocityFast(-1, 10, 9.81); !math.IsNaN(v) {
		t.Errorf("f<0: %v, want NaN", v)
	}
	// f = 0 in finite depth is the shallow-water limit sqrt(g h) (y = 0 node).
	relClose(t, "cg(f=0)", GroupVelocityFast(0, 10, 9.81), math.Sqrt(9.81*10), 1e-12, "cg -> sqrt(g h) as kh -> 0")
	// Beyond the table (kh >= 19): deep water, exactly as GroupVelocity.
	relClose(t, "cg beyond the table", NewBulkDepth(5000, 9.81).Power(1, 5, c), BulkPowerFinite(1, 5, 5000, c), 1e-15, "BulkPowerFinite")
}

// The table against scipy: testdata/seastate/cgtable_reference.json, made by
// testdata/seastate/make_cgtable_reference.py with Debian's python3-scipy
// 1.10.1 (brentq root of omega^2 = g k tanh(kh), cg = n omega / k) at points a
// quarter, a half and three quarters into the table's intervals and at
// random y in [0, 19).
func TestCgTableScipy(t *testing.T) {
	raw, err := os.ReadFile("../../testdata/seastate/cgtable_reference.json")
	if err != nil {
		t.Fatalf("%v (regenerate with /usr/bin/python3 testdata/seastate/make_cgtable_reference.py)", err)
	}
	var ref struct {
		Scipy  string
		G      float64
		Points []struct {
			F  float64 `json:"f_hz"`
			H  float64 `json:"h_m"`
			Cg float64 `json:"cg"`
		}
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Points) < 2000 {
		t.Fatalf("only %d reference points", len(ref.Points))
	}
	worst := 0.0
	for _, p := range ref.Points {
		relClose(t, "GroupVelocityFast", GroupVelocityFast(p.F, p.H, ref.G), p.Cg, CgTableMaxRelErr, "scipy "+ref.Scipy+" brentq")
		if e := math.Abs(GroupVelocityFast(p.F, p.H, ref.G)/p.Cg - 1); e > worst {
			worst = e
		}
	}
	t.Logf("%d scipy points, worst relative error %.3g", len(ref.Points), worst)
}
