package engine

import "swellgrid/grid"

// Cell blocks: every table's row groups end at the end of a block, and a
// shard's cells are whole blocks, so that the row groups of a shard's tables
// are row groups of the single run's tables and a merge assembles them
// without refitting (Merge). The blocks depend on the grid only, never on the
// memory budget, the passes or the shard count.

// blockCells is the number of cells a block aims at on a large grid: few
// enough row groups that cells.parquet's footer stays small at 10^6 cells
// (about 250 blocks), many enough for hundreds of shards.
const blockCells = 4096

// minBlocks is the number of blocks of any grid with at least that many rows
// (points): the shard counts of a small grid are not limited by the blocks.
const minBlocks = 64

// cellBlocks are the blocks of a grid: block k holds units
// units*k/n .. units*(k+1)/n-1, where a unit is a row of a structured grid
// (per cells each) or a point of a point set or mesh.
type cellBlocks struct {
	units, per, n int
}

// blocksOf gives the blocks of g: min(units, max(minBlocks,
// ceil(cells/blockCells))) blocks of whole rows (points).
func blocksOf(g *grid.Grid) cellBlocks {
	units, per := g.NCells(), 1
	if g.Structured() {
		units, per = g.NY, g.NX
	}
	n := min(units, max(minBlocks, (g.NCells()+blockCells-1)/blockCells))
	return cellBlocks{units: units, per: per, n: max(n, 1)}
}

// start is the first cell of block k (k = n: the number of cells).
func (b cellBlocks) start(k int) int { return b.units * k / b.n * b.per }

// next is the first block boundary after cell c (the number of cells at most).
func (b cellBlocks) next(c int) int {
	// the block of c: the largest k with start(k) <= c
	k := (c/b.per*b.n + b.n - 1) / b.units
	for k > 0 && b.start(k) > c {
		k--
	}
	for k < b.n && b.start(k) <= c {
		k++
	}
	return b.start(k)
}
