package climate

import (
	"math"
	"math/big"
	"math/bits"
)

// Exact merges. Every sum in a CellState is an integer: each value is first
// rounded to a fixed quantum (below), time weights are whole minutes, and
// sums of weight x value and weight x value^2 are kept in 64- or 128-bit
// unsigned integers. Integer addition is associative, so the state of a
// record split anywhere and merged equals, bit for bit, the state of the
// whole record, and the results do not depend on the order of the merges.
// The variance is then computed exactly from the integer sums with math/big
// (n S2 - S1^2, no cancellation), which is what compensated summation
// approximates. The price is the quantisation of each value, stated here:
const (
	qJ   = 16      // J quantum 1/16 W/m
	qH   = 1 << 20 // Hm0 quantum 2^-20 m (about 1 micrometre)
	qT   = 1 << 20 // Te/Tp quantum 2^-20 s
	qDir = 1 << 28 // direction cosines and sines quantum 2^-28
	qP   = 1 << 16 // device power quantum 2^-16 kW

	maxJ  = 1 << 26 // W/m: values at or above are invalid (no sea state comes near)
	maxH  = 64      // m
	maxT  = 64      // s
	maxW  = 1 << 20 // minutes: longest accepted step (about 728 days)
	noTim = math.MinInt64
)

// MaxSeaPeriodS is the bound of any wave period, s: a Te or Tp at or above it
// is not a sea state (ScreenStep leaves such a value out as unusable).
const MaxSeaPeriodS = maxT

// With these bounds a weight x value product is below 2^50 and the unsigned
// 64-bit sums of them cannot overflow for records shorter than 2^34 minutes
// (32 000 years); squares go to 128-bit sums.

// u128 is an unsigned 128-bit integer.
type u128 struct{ hi, lo uint64 }

func (a *u128) addMul(x, y uint64) {
	hi, lo := bits.Mul64(x, y)
	var c uint64
	a.lo, c = bits.Add64(a.lo, lo, 0)
	a.hi += hi + c
}

func (a *u128) add(b u128) {
	var c uint64
	a.lo, c = bits.Add64(a.lo, b.lo, 0)
	a.hi += b.hi + c
}

func (a u128) big() *big.Int {
	z := new(big.Int).SetUint64(a.hi)
	z.Lsh(z, 64)
	return z.Or(z, new(big.Int).SetUint64(a.lo))
}

func (a u128) bigFloat() *big.Float { return new(big.Float).SetPrec(128).SetInt(a.big()) }
