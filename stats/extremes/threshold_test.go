package extremes

import (
	"bufio"
	"fmt"
	"os"
	"strconv"
	"strings"
	"testing"
)

// TestThresholdDiagnosticsAgainstEvd checks the mean residual life and the
// shape / modified-scale stability values against R's evd 2.3.6.1
// (evd_threshold_refs.csv, made by make_evd_threshold_refs.R: mean excess as
// in mrlplot, fpot fits at each threshold as in tcplot) on the rainfall
// exceedances of Coles (2001), section 4.4.1, fed as storm peaks five days apart.
func TestThresholdDiagnosticsAgainstEvd(t *testing.T) {
	c := rainCollector(t)
	fh, err := os.Open("../../testdata/extremes/evd_threshold_refs.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	var ref [][]float64
	sc := bufio.NewScanner(fh)
	for sc.Scan() {
		l := sc.Text()
		if strings.HasPrefix(l, "#") || strings.HasPrefix(l, "threshold") {
			continue
		}
		var row []float64
		for _, f := range strings.Split(l, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil {
				t.Fatal(err)
			}
			row = append(row, v)
		}
		ref = append(ref, row)
	}
	if len(ref) != 5 {
		t.Fatalf("%d reference rows", len(ref))
	}
	var us, qs []float64
	for _, r := range ref {
		us, qs = append(us, r[0]), append(qs, 0)
	}
	got := ThresholdDiagnostics(c, qs, us)
	for i, r := range ref {
		g := got[i]
		if g.N != int(r[1]) {
			t.Errorf("u=%g: %d peaks, evd %g", r[0], g.N, r[1])
		}
		vals := []float64{g.MeanExcess, g.MeanExcessLo, g.MeanExcessHi, g.Shape, g.ShapeLo, g.ShapeHi, g.ModScale, g.ModScaleLo, g.ModScaleHi}
		names := []string{"mean excess", "lo", "hi", "shape", "shape lo", "shape hi", "modified scale", "lo", "hi"}
		for k, v := range vals {
			// Optimiser and numerical-Hessian differences: 2e-3 absolute on shapes,
			// 2e-3 relative on scales (the covariance is a finite-difference Hessian in both).
			tol := 1e-9 * (1 + abs(r[k+2]))
			if k >= 3 {
				tol = 2e-3 * (1 + abs(r[k+2]))
			}
			near(t, "u="+strconv.FormatFloat(r[0], 'g', -1, 64)+" "+names[k], v, r[k+2], tol)
		}
	}
	t.Logf("u=50: shape %.4f [%.4f, %.4f] modified scale %.3f [%.3f, %.3f]", got[4].Shape, got[4].ShapeLo, got[4].ShapeHi, got[4].ModScale, got[4].ModScaleLo, got[4].ModScaleHi)
}

// rainCollector holds the rainfall exceedances of Coles (2001, section
// 4.4.1) as storm peaks: each value the middle of five daily steps.
func rainCollector(t *testing.T) *Collector {
	x := readColumn(t, "rain_exceedances.csv", 0)
	c := NewCollector(CollectorConfig{})
	h := 0.0
	for i, v := range x {
		for d := 0; d < 5; d++ {
			s := 1.0
			if d == 2 {
				s = v
			}
			c.Add(2000+i/40, (i%40)/4+1, h, 24, s, 8, 10) // 40 peaks a year: below MaxPeaksPerYear
			h += 24
		}
	}
	return c
}

// A known fit of the same excesses (at another rate, as Analyse's) gives the
// rung at its threshold exactly the row of a fresh fit, and it is the one
// used there: a known fit with another shape changes that rung only.
func TestThresholdDiagnosticsKnownFit(t *testing.T) {
	c := rainCollector(t)
	us, qs := []float64{30, 35, 40, 45}, []float64{0, 0, 0, 0}
	var px []float64
	for _, p := range c.Peaks() {
		if p.Hm0 > 40 {
			px = append(px, p.Hm0)
		}
	}
	known, err := FitGPD(px, 40, 3.7)
	if err != nil {
		t.Fatal(err)
	}
	plain := ThresholdDiagnostics(c, qs, us)
	with := ThresholdDiagnostics(c, qs, us, known)
	if a, b := fmt.Sprintf("%v", plain), fmt.Sprintf("%v", with); a != b {
		t.Errorf("with the known fit\n%s\nwithout\n%s", b, a)
	}
	known.Shape += 0.1
	for i, r := range ThresholdDiagnostics(c, qs, us, known) {
		if same := fmt.Sprintf("%v", r) == fmt.Sprintf("%v", plain[i]); same == (us[i] == 40) {
			t.Errorf("u=%g: row with an altered known fit %v, fresh %v", us[i], r, plain[i])
		}
	}
}
