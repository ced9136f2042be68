package seastate

import (
	"math"
	"testing"
)

// BenchmarkParams29x24 measures all parameters of one 29 x 24 spectrum
// (target of issue 3: at most 2 microseconds per core).
func BenchmarkParams29x24(b *testing.B) {
	f := logFreqs(0.035, 1.1, 29)
	dirs := uniformDirs(7.5, 24)
	s := outer(JONSWAP(f, 2.2, 10.5, 3.3), CosSpread(dirs, 285, 8))
	l, err := NewLayout(f, dirs)
	if err != nil {
		b.Fatal(err)
	}
	k := NewKernel(l, 40, DefaultConsts)
	var p Params
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		k.Params(s, &p)
	}
	if !p.Valid {
		b.Fatal("invalid result")
	}
}

// BenchmarkBulkPower measures one bulk power step (target: at most 20 ns).
// The finite-depth case solves the dispersion relation for every step, as Te
// changes from step to step.
func BenchmarkBulkPower(b *testing.B) {
	hs := [8]float64{0.5, 1.2, 2.3, 3.1, 1.7, 4.4, 0.9, 2.8}
	te := [8]float64{5.1, 6.3, 7.7, 9.2, 10.4, 11.8, 13.5, 8.6}
	b.Run("deep", func(b *testing.B) {
		var sum float64
		for i := 0; i < b.N; i++ {
			sum += BulkPowerDeep(hs[i&7], te[i&7], DefaultConsts)
		}
		if math.IsNaN(sum) {
			b.Fatal("NaN")
		}
	})
	b.Run("finite40m", func(b *testing.B) {
		var sum float64
		for i := 0; i < b.N; i++ {
			sum += BulkPowerFinite(hs[i&7], te[i&7], 40, DefaultConsts)
		}
		if math.IsNaN(sum) {
			b.Fatal("NaN")
		}
	})
	b.Run("finite8m", func(b *testing.B) {
		var sum float64
		for i := 0; i < b.N; i++ {
			sum += BulkPowerFinite(hs[i&7], te[i&7], 8, DefaultConsts)
		}
		if math.IsNaN(sum) {
			b.Fatal("NaN")
		}
	})
}

// BenchmarkNewKernel29x24 measures the once-per-cell set-up (cg table and
// direction arcs).
func BenchmarkNewKernel29x24(b *testing.B) {
	l, _ := NewLayout(logFreqs(0.035, 1.1, 29), uniformDirs(7.5, 24))
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		NewKernel(l, 40, DefaultConsts)
	}
}
