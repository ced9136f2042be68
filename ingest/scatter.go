package ingest

import "math"

// cook unpacks one raw stored value (VarInfo.unpack) and, for direction
// roles, converts "to" to "from" and wraps into [0, 360); ok is false for a
// missing value. An infinite direction is passed on as it is (wrapping
// would make it NaN, a missing value), so that the state counts it as
// present but unusable. It is the per-value work of Block.Cook.
func (vi *VarInfo) cook(raw float64, dirRole bool) (x float64, ok bool) {
	x = vi.unpack(raw)
	if x != x {
		return x, false
	}
	if dirRole && x-x == 0 {
		if vi.DirTo {
			x += 180
		}
		if !(x >= 0 && x < 360) { // math.Mod returns x itself in [0, 360)
			x = math.Mod(x, 360)
			if x < 0 {
				x += 360
			}
		}
	}
	return x, true
}

// trailing is the number of values per (time, station) of a slab.
func trailing(ax []axis, count []uint64) int {
	n := 1
	for k := 2; k < len(ax); k++ {
		n *= int(count[k])
	}
	return n
}
