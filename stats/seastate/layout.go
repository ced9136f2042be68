package seastate

import (
	"fmt"
	"math"
	"sort"
)

// Layout describes the bins of a spectrum: its frequencies (Hz) and, for a
// 2-D spectrum, its directions (degrees, nautical "from", clockwise from
// north), each with the width of the band it represents. Frequencies and
// directions may come in any order and with any spacing; the layout keeps the
// caller's order for indexing and sorts internally only to find neighbours.
type Layout struct {
	freq   []float64 // Hz, caller's order
	df     []float64 // Hz, bin width per frequency, caller's order
	fOrder []int     // indices of freq in ascending order
	dir    []float64 // deg in [0, 360), caller's order; nil for 1-D
	dth    []float64 // rad, bin width per direction, caller's order
	dOrder []int     // indices of dir in ascending order
}

// NewLayout builds a layout from frequencies in Hz and directions in degrees
// (nil or empty for a 1-D spectrum). Frequencies must be finite, positive and
// distinct; directions finite and distinct modulo 360.
//
// Bin widths, see FrequencyWidths and DirectionWidths: each frequency
// represents the band between the midpoints to its neighbours, and the end
// bins extend as far outwards as inwards:
//
//	df_i = (f_{i+1} - f_{i-1}) / 2 inside,  df_0 = f_1 - f_0,  df_last = f_last - f_{last-1}
//
// (the same as numpy.gradient of the sorted frequencies, which the reference
// script uses as its independent check). Directions are on a circle: each
// direction represents half the circular gap to each neighbour, so the widths
// sum to exactly 2 pi; a single direction gets the whole circle, 2 pi. A
// single frequency has no neighbour and is rejected.
func NewLayout(freqHz, dirDeg []float64) (*Layout, error) {
	nf := len(freqHz)
	if nf < 2 {
		return nil, fmt.Errorf("seastate: a spectrum needs at least 2 frequencies to define bin widths, got %d; check the frequency coordinate variable", nf)
	}
	l := &Layout{freq: append([]float64(nil), freqHz...)}
	for i, f := range l.freq {
		if !(f > 0) || math.IsInf(f, 0) {
			return nil, fmt.Errorf("seastate: frequency %d is %v Hz; frequencies must be finite and positive (convert periods or rad/s to Hz first)", i, f)
		}
	}
	l.fOrder = argsort(l.freq)
	for r := 1; r < nf; r++ {
		a, b := l.fOrder[r-1], l.fOrder[r]
		if l.freq[a] == l.freq[b] {
			return nil, fmt.Errorf("seastate: frequencies %d and %d are both %v Hz; frequencies must be distinct", a, b, l.freq[a])
		}
	}
	l.df = make([]float64, nf)
	for r, i := range l.fOrder {
		switch r {
		case 0:
			l.df[i] = l.freq[l.fOrder[1]] - l.freq[i]
		case nf - 1:
			l.df[i] = l.freq[i] - l.freq[l.fOrder[nf-2]]
		default:
			l.df[i] = 0.5 * (l.freq[l.fOrder[r+1]] - l.freq[l.fOrder[r-1]])
		}
	}
	nd := len(dirDeg)
	if nd == 0 {
		return l, nil
	}
	l.dir = make([]float64, nd)
	for j, d := range dirDeg {
		if math.IsNaN(d) || math.IsInf(d, 0) {
			return nil, fmt.Errorf("seastate: direction %d is %v deg; directions must be finite", j, d)
		}
		l.dir[j] = normDeg(d)
	}
	l.dOrder = argsort(l.dir)
	for r := 1; r < nd; r++ {
		a, b := l.dOrder[r-1], l.dOrder[r]
		if l.dir[a] == l.dir[b] {
			return nil, fmt.Errorf("seastate: directions %d and %d are both %v deg (modulo 360); directions must be distinct modulo 360", a, b, l.dir[a])
		}
	}
	l.dth = make([]float64, nd)
	if nd == 1 {
		l.dth[0] = 2 * math.Pi
		return l, nil
	}
	for r, j := range l.dOrder {
		prev := l.dir[l.dOrder[(r+nd-1)%nd]]
		next := l.dir[l.dOrder[(r+1)%nd]]
		gapPrev := math.Mod(l.dir[j]-prev+360, 360)
		gapNext := math.Mod(next-l.dir[j]+360, 360)
		l.dth[j] = 0.5 * (gapPrev + gapNext) * math.Pi / 180
	}
	return l, nil
}

// NF is the number of frequencies.
func (l *Layout) NF() int { return len(l.freq) }

// ND is the number of directions, 0 for a 1-D spectrum.
func (l *Layout) ND() int { return len(l.dir) }

// Len is the number of density values one spectrum has: NF*ND, or NF for 1-D.
func (l *Layout) Len() int {
	if len(l.dir) == 0 {
		return len(l.freq)
	}
	return len(l.freq) * len(l.dir)
}

// Frequencies returns a copy of the frequencies (Hz) in the caller's order.
func (l *Layout) Frequencies() []float64 { return append([]float64(nil), l.freq...) }

// FrequencyWidths returns a copy of the frequency bin widths (Hz), caller's order.
func (l *Layout) FrequencyWidths() []float64 { return append([]float64(nil), l.df...) }

// Directions returns a copy of the directions (deg in [0, 360), nautical
// "from"), caller's order; nil for a 1-D layout.
func (l *Layout) Directions() []float64 {
	if l.dir == nil {
		return nil
	}
	return append([]float64(nil), l.dir...)
}

// DirectionWidths returns a copy of the direction bin widths in radians,
// caller's order; nil for a 1-D layout.
func (l *Layout) DirectionWidths() []float64 {
	if l.dth == nil {
		return nil
	}
	return append([]float64(nil), l.dth...)
}

// normDeg maps an angle in degrees to [0, 360).
func normDeg(d float64) float64 {
	d = math.Mod(d, 360)
	if d < 0 {
		d += 360
	}
	if d >= 360 { // -tiny + 360 rounds to 360
		d = 0
	}
	return d
}

// argsort returns the indices of v in ascending order (stable, so equal
// values keep the caller's order and results are deterministic).
func argsort(v []float64) []int {
	idx := make([]int, len(v))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	return idx
}
