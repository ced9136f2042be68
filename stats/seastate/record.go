package seastate

import (
	"encoding/binary"
	"errors"
	"math"
)

// RecordMeans accumulates, over a record of spectra at one cell, the
// spectral quantities that the per-cell climate state does not keep: the
// mean spectral width, the power-weighted mean directionality coefficient and
// the power-weighted circular mean of the direction of maximum directional
// power. Its size is fixed. Steps must be added in time order; the sums are
// plain float64 additions, so a resumed record (unmarshal, then go on adding)
// gives the same bits as an uninterrupted one.
type RecordMeans struct {
	n                float64 // steps with a valid spectrum
	sumEps0          float64
	nEps0            float64
	sumJ, sumJD      float64 // sum J, sum J * directionality (2-D only)
	sumJSin, sumJCos float64
	BadBins          int64 // negative or non-finite densities seen (clipped to 0)
}

// Add takes one step's parameters.
func (r *RecordMeans) Add(p *Params) {
	r.BadBins += int64(p.BadBins)
	if !p.Valid {
		return
	}
	r.n++
	if !math.IsNaN(p.Eps0) {
		r.sumEps0 += p.Eps0
		r.nEps0++
	}
	if !math.IsNaN(p.Directionality) && !math.IsNaN(p.J) {
		r.sumJ += p.J
		r.sumJD += p.J * p.Directionality
		s, c := math.Sincos(p.DirMaxPowerDeg * math.Pi / 180)
		r.sumJSin += p.J * s
		r.sumJCos += p.J * c
	}
}

// WidthMean is the time mean of eps0 = sqrt(m0 m_-2 / m_-1^2 - 1) (NaN if none).
func (r *RecordMeans) WidthMean() float64 {
	if r.nEps0 == 0 {
		return math.NaN()
	}
	return r.sumEps0 / r.nEps0
}

// Directionality is the power-weighted mean of the directionality coefficient
// J_theta,max / J of the sea states (IEC TS 62600-101 defines the coefficient
// per sea state; weighting by J gives the share that a device facing each
// sea state's best direction would see): sum(J d) / sum(J). NaN for 1-D spectra.
func (r *RecordMeans) Directionality() float64 {
	if r.sumJ == 0 {
		return math.NaN()
	}
	return r.sumJD / r.sumJ
}

// DirMaxPowerDeg is the power-weighted circular mean of the direction of
// maximum directional power, atan2(sum J sin theta, sum J cos theta), in
// degrees nautical "from" in [0, 360) (circular mean: Mardia and Jupp 2000,
// Directional Statistics, section 2.2). NaN for 1-D spectra.
func (r *RecordMeans) DirMaxPowerDeg() float64 {
	if r.sumJ == 0 {
		return math.NaN()
	}
	d := math.Atan2(r.sumJSin, r.sumJCos) * 180 / math.Pi
	if d < 0 {
		d += 360
	}
	return d
}

// MarshalBinary encodes the sums (little-endian, fixed size).
func (r *RecordMeans) MarshalBinary() ([]byte, error) {
	b := make([]byte, 8*8)
	for i, v := range []float64{r.n, r.sumEps0, r.nEps0, r.sumJ, r.sumJD, r.sumJSin, r.sumJCos} {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
	}
	binary.LittleEndian.PutUint64(b[56:], uint64(r.BadBins))
	return b, nil
}

// UnmarshalBinary restores what MarshalBinary wrote.
func (r *RecordMeans) UnmarshalBinary(b []byte) error {
	if len(b) != 64 {
		return errors.New("seastate: RecordMeans: wrong encoded size")
	}
	f := func(i int) float64 { return math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:])) }
	r.n, r.sumEps0, r.nEps0, r.sumJ, r.sumJD, r.sumJSin, r.sumJCos = f(0), f(1), f(2), f(3), f(4), f(5), f(6)
	r.BadBins = int64(binary.LittleEndian.Uint64(b[56:]))
	return nil
}
