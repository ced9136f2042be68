package climate

import (
	"math"
)

// Directional distribution of wave power and occurrence ("rose").
//
// The circle of directions the waves come FROM (nautical convention,
// clockwise from north) is split into Config.DirectionSectors equal sectors,
// sector k centred on k*360/n degrees and spanning [centre - 180/n,
// centre + 180/n) clockwise, so that sector 0 is centred on north. Per
// sector the state keeps, as exact integers like every other sum (fixed.go):
//
//   - the minutes whose sea-state direction lies in the sector (occurrence);
//   - the sum of w * (power arriving from the sector), J quanta of 1/16 W/m.
//
// Bulk input (AddDirection): all of a step's J comes from the sector of its
// mean direction. Spectral input (AddDirectionalPower): the step's power is
// split over the sectors from its directional spectrum (see
// seastate.Kernel.SectorPowers) and the occurrence goes to the sector of the
// spectral mean direction.

// DefaultDirectionSectors is the default number of direction sectors
// (22.5 degrees each: the 16 points of the compass, common practice).
const DefaultDirectionSectors = 16

// MaxDirectionSectors caps the number of sectors (5 degrees each): finer
// sectors say more than a hindcast's directional resolution supports and
// grow every cell's state by 16 bytes a sector.
const MaxDirectionSectors = 72

// MinDirectionSectors is the fewest sectors accepted (the four quadrants).
const MinDirectionSectors = 4

// roseAcc is the per-cell directional accumulator.
type roseAcc struct {
	w  []uint64 // minutes with the step's direction in sector k (occurrence)
	j  []uint64 // sum of w * quantised power arriving from sector k
	wJ uint64   // minutes whose power was split over the sectors
}

func newRoseAcc(n int) roseAcc { return roseAcc{w: make([]uint64, n), j: make([]uint64, n)} }

func (r *roseAcc) clear() {
	clear(r.w)
	clear(r.j)
	r.wJ = 0
}

func (r *roseAcc) merge(o *roseAcc) {
	for k := range o.w {
		r.w[k] += o.w[k]
		r.j[k] += o.j[k]
	}
	r.wJ += o.wJ
}

func (r *roseAcc) copyFrom(o *roseAcc) {
	copy(r.w, o.w)
	copy(r.j, o.j)
	r.wJ = o.wJ
}

// DirectionSector returns the sector (0..n-1) holding direction d (degrees,
// any finite value): the k with d in [k*360/n - 180/n, k*360/n + 180/n)
// modulo 360.
func DirectionSector(d float64, n int) int {
	width := 360 / float64(n)
	k := int(math.Floor((math.Mod(d, 360) + 360 + width/2) / width))
	return k % n
}

// SectorEdges returns the centre and the clockwise start and end of sector
// k of n, degrees in [0, 360).
func SectorEdges(k, n int) (centre, from, to float64) {
	width := 360 / float64(n)
	centre = float64(k) * width
	from = math.Mod(centre-width/2+360, 360)
	to = math.Mod(centre+width/2, 360)
	return centre, from, to
}

func quantJ(j float64) uint64 { return uint64(int64(j*qJ + 0.5)) }

// AddDirection feeds the directional distribution of a bulk step: power j
// (W/m) coming from direction d (degrees nautical "from"); time fields as
// for AddAt, with which it is called for the same step. A step missing
// either value, or whose time is rejected, is left out of the distribution.
func (s *CellState) AddDirection(t *StepTime, j, d float64) {
	if t.bad || !(j >= 0 && j < maxJ) || !(d-d == 0 && math.Abs(d) < 1e9) {
		return
	}
	r := &s.rose
	k := DirectionSector(d, len(r.w))
	r.w[k] += t.w
	r.j[k] += t.w * quantJ(j)
	r.wJ += t.w
}

// AddDirectionalPower feeds the directional distribution of a spectral
// step: sectorJ[k] is the power (W/m) arriving from sector k
// (seastate.Kernel.SectorPowers with the same number of sectors) and meanDir
// the step's mean direction (degrees, NaN when it has none: then the step
// counts for power, not for occurrence). A step with a missing, negative or
// absurd sector power, or whose time is rejected, is left out.
func (s *CellState) AddDirectionalPower(t *StepTime, sectorJ []float64, meanDir float64) {
	r := &s.rose
	if t.bad || len(sectorJ) != len(r.j) {
		return
	}
	for _, v := range sectorJ {
		if !(v >= 0 && v < maxJ) {
			return
		}
	}
	for k, v := range sectorJ {
		r.j[k] += t.w * quantJ(v)
	}
	r.wJ += t.w
	if meanDir-meanDir == 0 && math.Abs(meanDir) < 1e9 {
		r.w[DirectionSector(meanDir, len(r.w))] += t.w
	}
}

// DirectionRow is one sector of a cell's directional distribution.
type DirectionRow struct {
	Sector          int
	CentreDeg       float64 // sector centre, deg nautical "from"
	FromDeg, ToDeg  float64 // clockwise start and end of the sector
	PowerShare      float64 // share of the record's wave energy arriving from the sector
	OccurrenceShare float64 // share of the time whose direction lies in the sector
	PowerMeanKWm    float64 // time-mean power arriving from the sector, kW/m (sectors sum to the mean power)
	Hours           float64 // time whose power was split over the sectors (every sector of the cell)
	OccurrenceHours float64 // time with the direction in the sector
}

// Directions returns the cell's directional distribution, one row per
// sector in sector order, or nil when no step had a power and a direction:
//
//	power_share_k      = sum_t w_t P_k,t / sum_k sum_t w_t P_k,t
//	occurrence_share_k = sum_{t: dir_t in k} w_t / sum_t w_t
//	power_mean_k       = sum_t w_t P_k,t / sum_t w_t
//
// with P_k,t the power arriving from sector k at step t (the step's J for
// the sector of its mean direction on bulk input) and w_t the step's
// minutes. A share is NaN when its denominator is 0 (calm record).
func (s *CellState) Directions() []DirectionRow {
	r := &s.rose
	if r.wJ == 0 {
		return nil
	}
	n := len(r.w)
	var sw, sj uint64
	for k := 0; k < n; k++ {
		sw += r.w[k]
		sj += r.j[k]
	}
	out := make([]DirectionRow, n)
	for k := range out {
		c, a, b := SectorEdges(k, n)
		row := DirectionRow{Sector: k, CentreDeg: c, FromDeg: a, ToDeg: b,
			PowerShare: math.NaN(), OccurrenceShare: math.NaN(),
			PowerMeanKWm: float64(r.j[k]) / qJ / float64(r.wJ) / 1000,
			Hours:        float64(r.wJ) / 60, OccurrenceHours: float64(r.w[k]) / 60}
		if sj > 0 {
			row.PowerShare = float64(r.j[k]) / float64(sj)
		}
		if sw > 0 {
			row.OccurrenceShare = float64(r.w[k]) / float64(sw)
		}
		out[k] = row
	}
	return out
}
