package extremes

import (
	"math/rand/v2"
	"testing"
)

// benchSamples draws fixed samples (seeded) for the benchmarks.
func benchSamples(n, m int, draw func(r *rand.Rand) float64) [][]float64 {
	r := rand.New(rand.NewPCG(42, 1))
	out := make([][]float64, m)
	for i := range out {
		out[i] = make([]float64, n)
		for j := range out[i] {
			out[i][j] = draw(r)
		}
	}
	return out
}

// BenchmarkFitGEV30: one GEV fit (ML, covariance) of 30 annual maxima.
// Target: < 200 us per fit (>= 5000 fits/s/core).
func BenchmarkFitGEV30(b *testing.B) {
	g := GEV{Loc: 6, Scale: 1.1, Shape: -0.05}
	s := benchSamples(30, 64, func(r *rand.Rand) float64 { return g.Quantile(openUnit(r)) })
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitGEV(s[i%len(s)]); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "fits/s")
}

// BenchmarkFitGPD: one GPD fit of 90 storm-peak excesses (30 years x 3 per year).
func BenchmarkFitGPD(b *testing.B) {
	g := GPD{Threshold: 0, Scale: 0.9, Shape: 0.05}
	s := benchSamples(90, 64, func(r *rand.Rand) float64 { return g.Quantile(openUnit(r)) })
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitGPD(s[i%len(s)], 0, 3); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "fits/s")
}

// BenchmarkProfileIntervals: the 95% profile-likelihood intervals of six
// return levels (1-100 years) of a GEV fit of 30 annual maxima and a GPD fit
// of 90 storm-peak excesses, the per-cell cost the default intervals add.
func BenchmarkProfileIntervals(b *testing.B) {
	g := GEV{Loc: 6, Scale: 1.1, Shape: -0.05}
	am := benchSamples(30, 16, func(r *rand.Rand) float64 { return g.Quantile(openUnit(r)) })
	p := GPD{Threshold: 0, Scale: 0.9, Shape: 0.05}
	pk := benchSamples(90, 16, func(r *rand.Rand) float64 { return p.Quantile(openUnit(r)) })
	var gf []GEVFit
	var pf []GPDFit
	for i := range am {
		f, _ := FitGEV(am[i])
		gf = append(gf, f)
		q, _ := FitGPD(pk[i], 0, 3)
		pf = append(pf, q)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		k := i % len(am)
		for _, T := range []float64{2, 5, 10, 25, 50, 100} {
			gf[k].ProfileGEV(T, am[k], 0)
			pf[k].ProfileGPD(T, pk[k], 0)
		}
	}
}
