package seastate

import (
	"math"
	"testing"
)

// BenchmarkWavenumber measures one solve of the linear dispersion relation
// (the finite-depth bulk power solves one per step) over periods 3-20 s.
func BenchmarkWavenumber(b *testing.B) {
	var fs [16]float64
	for i := range fs {
		fs[i] = 1 / (3 + float64(i)*17/15)
	}
	for _, h := range []float64{8, 40, 200} {
		b.Run("h"+itoa(int(h))+"m", func(b *testing.B) {
			var sum float64
			for i := 0; i < b.N; i++ {
				sum += Wavenumber(fs[i&15], h, 9.81)
			}
			if math.IsNaN(sum) || sum <= 0 {
				b.Fatal("bad wavenumbers")
			}
		})
	}
}

// BenchmarkGroupVelocity measures one group velocity (dispersion solve
// included), as the bulk power and the kernel set-up use it.
func BenchmarkGroupVelocity(b *testing.B) {
	var sum float64
	for i := 0; i < b.N; i++ {
		sum += GroupVelocity(1/(4+float64(i&15)), 40, 9.81)
	}
	if math.IsNaN(sum) || sum <= 0 {
		b.Fatal("bad group velocities")
	}
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	s := ""
	for ; n > 0; n /= 10 {
		s = string(rune('0'+n%10)) + s
	}
	return s
}

// BenchmarkBulkDepthPower measures the finite-depth bulk power of one step
// with the group velocity from the table (the stream stage's bulk path).
func BenchmarkBulkDepthPower(b *testing.B) {
	d := NewBulkDepth(40, 9.81)
	c := Consts{Rho: 1025, G: 9.81}
	var sum float64
	for i := 0; i < b.N; i++ {
		sum += d.Power(2, 4+float64(i&15), c)
	}
	if math.IsNaN(sum) || sum <= 0 {
		b.Fatal("bad powers")
	}
}
