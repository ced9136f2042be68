package validate

import (
	"math"
	"math/rand/v2"
)

// RelativeBias returns the relative bias of the modelled mean over the
// measured mean,
//
//	b = sum m_i / sum o_i - 1
//
// over the pairs i where both are finite (the ratio of the two means of
// the same times minus one; common practice for the bias of a mean
// resource figure). NaN without a pair or when sum o_i is not positive.
func RelativeBias(m, o []float64) float64 {
	var sm, so float64
	n := 0
	for i := range o {
		if i < len(m) && isFinite(m[i]) && isFinite(o[i]) {
			sm += m[i]
			so += o[i]
			n++
		}
	}
	if n == 0 || !(so > 0) {
		return math.NaN()
	}
	return sm/so - 1
}

// BlockBootstrap is the circular block bootstrap of a series of pairs in
// time order (Politis and Romano 1992, "A circular block-resampling
// procedure for stationary data"; a variant of Kunsch's 1989 moving block
// bootstrap; both quoted from memory): a resample of the n pairs is made of
// ceil(n/Block) blocks of Block consecutive pairs, each starting at a
// position drawn uniformly from 0..n-1 and wrapping from the last pair to
// the first, cut to n pairs. Blocks keep the autocorrelation of the errors
// within Block pairs, which a resampling of single pairs (Block = 1) would
// destroy, understating the standard error of a mean of autocorrelated
// errors. Reps resamples are drawn from a PCG generator seeded with Seed
// (math/rand/v2), so that the result is reproducible.
type BlockBootstrap struct {
	Block, Reps int
	Seed        uint64
}

// RelativeBiasSE returns, for every series k (m[k] and o[k], paired at the
// same times as every other series), the relative bias RelativeBias(m[k],
// o[k]) and its standard error: the sample standard deviation (ddof 1) of
// the relative bias over the bootstrap's resamples,
//
//	se = sqrt( sum_r (b_r - mean(b))^2 / (R - 1) )
//
// (the bootstrap estimate of a standard error; Efron and Tibshirani 1993,
// "An Introduction to the Bootstrap", ch. 6; quoted from memory). Every
// series is resampled with the same blocks, so their errors keep their
// joint structure. A pair with a non-finite side is left out of the
// resample's sums (its position still counts in the blocks). NaN when
// there are fewer than two pairs or fewer than two resamples give a bias.
func (b BlockBootstrap) RelativeBiasSE(m, o [][]float64) (bias, se []float64) {
	bias, se = make([]float64, len(o)), make([]float64, len(o))
	n := 0
	for k := range o {
		bias[k] = RelativeBias(m[k], o[k])
		se[k] = math.NaN()
		n = max(n, len(o[k]))
	}
	if n < 2 || b.Reps < 2 {
		return bias, se
	}
	L := min(max(b.Block, 1), n)
	rng := rand.New(rand.NewPCG(b.Seed, 0x73776c6c))
	reps := make([][]float64, len(o))
	sm, so := make([]float64, len(o)), make([]float64, len(o))
	for r := 0; r < b.Reps; r++ {
		clear(sm)
		clear(so)
		for got := 0; got < n; {
			s := rng.IntN(n)
			for j := 0; j < L && got < n; j++ {
				i := (s + j) % n
				for k := range o {
					if i < len(o[k]) && i < len(m[k]) && isFinite(m[k][i]) && isFinite(o[k][i]) {
						sm[k] += m[k][i]
						so[k] += o[k][i]
					}
				}
				got++
			}
		}
		for k := range o {
			if so[k] > 0 {
				reps[k] = append(reps[k], sm[k]/so[k]-1)
			}
		}
	}
	for k := range o {
		se[k] = sampleSD(reps[k])
	}
	return bias, se
}

// sampleSD is the sample standard deviation (ddof 1, as numpy.std(x,
// ddof=1)), sqrt(sum (x - mean)^2 / (n - 1)); NaN below two values.
func sampleSD(x []float64) float64 {
	if len(x) < 2 {
		return math.NaN()
	}
	var s float64
	for _, v := range x {
		s += v
	}
	mean := s / float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - mean) * (v - mean)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}

// OriginSlope is the linear bias correction of a modelled quantity: the
// least-squares slope through the origin of measured on modelled,
//
//	b = sum(m_i o_i) / sum(m_i^2)
//
// over the pairs where both are finite (ordinary least squares without an
// intercept; common practice for a multiplicative model error), so that a
// corrected value is b m. It returns b and the number of pairs used; b is
// NaN with fewer than 2 pairs or when every modelled value is 0.
func OriginSlope(m, o []float64) (b float64, n int) {
	var mo, mm kahan
	for _, i := range finitePairs(m, o) {
		mo.add(m[i] * o[i])
		mm.add(m[i] * m[i])
		n++
	}
	if n < 2 || !(mm.sum() > 0) {
		return math.NaN(), n
	}
	return mo.sum() / mm.sum(), n
}
