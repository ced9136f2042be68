package seastate

import (
	"fmt"
	"math"
)

// SectorSplit says how the direction bins of a layout share the n equal
// direction sectors of a directional distribution: sector k is centred on
// k*360/n degrees (nautical "from") and spans [centre - 180/n,
// centre + 180/n). Each bin is taken to spread its power uniformly over the
// arc it represents (from half-way to its counter-clockwise neighbour to
// half-way to its clockwise neighbour, the arc whose width is the bin's
// dtheta, see NewLayout), and gives each sector the share of that arc lying
// in the sector. A single-direction spectrum gives everything to the sector
// holding its direction.
type SectorSplit struct {
	n    int
	off  []int32 // bin j's entries: sec[off[j]:off[j+1]], frac[...]
	sec  []int32
	frac []float64
}

// NewSectorSplit prepares the split of layout l's direction bins over n
// sectors (n >= 1). It fails for a 1-D layout, which has no directions.
func NewSectorSplit(l *Layout, n int) (*SectorSplit, error) {
	nd := l.ND()
	if nd == 0 {
		return nil, fmt.Errorf("seastate: a 1-D spectrum has no directions to split over sectors")
	}
	if n < 1 {
		return nil, fmt.Errorf("seastate: %d direction sectors; need at least 1", n)
	}
	sp := &SectorSplit{n: n, off: make([]int32, nd+1)}
	width := 360 / float64(n)
	lo := make([]float64, nd)
	hi := make([]float64, nd)
	if nd == 1 {
		lo[0], hi[0] = l.dir[0], l.dir[0]
	} else {
		for r, j := range l.dOrder {
			prev := l.dir[l.dOrder[(r+nd-1)%nd]]
			next := l.dir[l.dOrder[(r+1)%nd]]
			lo[j] = l.dir[j] - 0.5*math.Mod(l.dir[j]-prev+360, 360)
			hi[j] = l.dir[j] + 0.5*math.Mod(next-l.dir[j]+360, 360)
		}
	}
	for j := 0; j < nd; j++ {
		sp.off[j] = int32(len(sp.sec))
		a, b := lo[j], hi[j]
		if b-a <= 0 { // a single direction: its sector takes all
			k := int(math.Floor((normDeg(a)+width/2)/width)) % n
			sp.sec, sp.frac = append(sp.sec, int32(k)), append(sp.frac, 1)
			continue
		}
		// the arc [a, b) against every sector [c - w/2, c + w/2) shifted by
		// -360, 0, +360 degrees (a lies in (-360, 360), b - a <= 360)
		for k := 0; k < n; k++ {
			var ov float64
			for _, shift := range []float64{-360, 0, 360} {
				s0 := float64(k)*width - width/2 + shift
				s1 := s0 + width
				ov += math.Max(0, math.Min(b, s1)-math.Max(a, s0))
			}
			if ov > 0 {
				sp.sec = append(sp.sec, int32(k))
				sp.frac = append(sp.frac, ov/(b-a))
			}
		}
	}
	sp.off[nd] = int32(len(sp.sec))
	return sp, nil
}

// N is the number of sectors.
func (sp *SectorSplit) N() int { return sp.n }

// SectorPowers fills out (length sp.N()) with the wave power arriving from
// each direction sector for the spectrum of the last Params call (which
// must have been Valid), W/m:
//
//	A_j = rho g sum_i cg(f_i, h) S_ij df_i dtheta_j      (energy flux from bin j)
//	P_k = sum_j share_jk A_j                              (share_jk: SectorSplit)
//
// so that sum_k P_k = J = rho g sum_ij cg_i S_ij df_i dtheta_j, the
// omnidirectional power (IEC TS 62600-101, the wave energy flux per unit
// crest length resolved by direction of travel; DNV-RP-C205 sec. 3.5 for the
// spectral moments; the split of a bin over sectors by arc overlap is common
// practice for re-binning directional spectra). The layout of sp must be the
// kernel's.
func (k *Kernel) SectorPowers(sp *SectorSplit, out []float64) {
	if len(out) != sp.n || len(sp.off) != k.nd+1 {
		panic(fmt.Sprintf("seastate: SectorPowers: %d outputs for %d sectors, split for %d directions, kernel has %d", len(out), sp.n, len(sp.off)-1, k.nd))
	}
	clear(out)
	for j, a := range k.a {
		for e := sp.off[j]; e < sp.off[j+1]; e++ {
			out[sp.sec[e]] += sp.frac[e] * a
		}
	}
}
