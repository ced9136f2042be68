package ingest

import (
	"math"

	"swellgrid/grid"
)

// cook unpacks one raw stored value (VarInfo.unpack) and, for direction
// roles, converts "to" to "from" and wraps into [0, 360); ok is false for a
// missing value. It is the per-value work of every scatter path.
func (vi *VarInfo) cook(raw float64, dirRole bool) (x float64, ok bool) {
	x = vi.unpack(raw)
	if x != x {
		return x, false
	}
	if dirRole {
		if vi.DirTo {
			x += 180
		}
		x = math.Mod(x, 360)
		if x < 0 {
			x += 360
		}
	}
	return x, true
}

// scatterFast is gather's scatter for the common storage layouts, with the
// odometer replaced by plain nested loops: (time, y, x) on grids, and
// (time, station[, frequency[, direction]]) on point sets, where the slab is
// already in canonical order. It writes exactly what the generic loop writes
// and returns ok = false for any other layout.
func scatterFast(vi *VarInfo, g *grid.Grid, invX, invY []int, start, count []uint64, c0, c1 int, buf, dst []float64, per int) (valid int, ok bool) {
	ax := vi.axes
	dirRole := vi.Role == Dir || vi.Role == DirPeak
	nc := c1 - c0
	switch {
	case g.Kind != grid.Points && per == 1 && len(ax) == 3 && ax[0] == axT && ax[1] == axY && ax[2] == axX:
		nt, ny, nx := int(count[0]), int(count[1]), int(count[2])
		y0 := int(start[1])
		i := 0
		for t := 0; t < nt; t++ {
			out := dst[t*nc : (t+1)*nc]
			for jy := 0; jy < ny; jy++ {
				row := invY[jy+y0]*g.NX - c0
				src := buf[i : i+nx]
				i += nx
				for fx, raw := range src {
					k := row + invX[fx]
					if k < 0 || k >= nc {
						continue
					}
					x, good := vi.cook(raw, dirRole)
					if good {
						valid++
					}
					out[k] = x
				}
			}
		}
		return valid, true
	case g.Kind == grid.Points && len(ax) >= 2 && len(ax) <= 4 && ax[0] == axT && ax[1] == axP &&
		int(start[1]) == c0 && int(count[1]) == nc && trailing(ax, count) == per:
		if len(ax) >= 3 && ax[2] != axF || len(ax) == 4 && ax[3] != axD {
			return 0, false
		}
		n := int(count[0]) * nc * per
		for i, raw := range buf[:n] {
			x, good := vi.cook(raw, dirRole)
			if good {
				valid++
			}
			dst[i] = x
		}
		return valid, true
	}
	return 0, false
}

// trailing is the number of values per (time, station) of a slab.
func trailing(ax []axis, count []uint64) int {
	n := 1
	for k := 2; k < len(ax); k++ {
		n *= int(count[k])
	}
	return n
}
