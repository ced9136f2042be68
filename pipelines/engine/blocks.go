package engine

import (
	"fmt"

	"swellgrid/grid"
)

// Cell blocks: every table's row groups end at the end of a block, and a
// shard's cells are whole blocks, so that the row groups of a shard's tables
// are row groups of the single run's tables and a merge assembles them
// without refitting (Merge). The blocks depend on the grid only, never on the
// memory budget, the passes or the shard count.

// blockCells is the most cells a block of several rows holds: about the
// row group length of cells.parquet (tables.RowGroupRows: at least 1024
// rows), so that the blocks add few row groups to it.
const blockCells = 1024

// minBlocks is the number of blocks of any grid with at least that many rows
// (points): a small grid is cut into single rows, so that its shard counts
// are not limited by the blocks.
const minBlocks = 32

// cellBlocks are the blocks of a grid: block k holds units
// k*rows .. min((k+1)*rows, units)-1, where a unit is a row of a structured
// grid (per cells each) or a point of a point set or mesh.
type cellBlocks struct {
	units, per, rows, n int
}

// blocksOf gives the blocks of g: max(1, min(blockCells/per,
// units/minBlocks)) units each.
func blocksOf(g *grid.Grid) cellBlocks {
	units, per := g.NCells(), 1
	if g.Structured() {
		units, per = g.NY, g.NX
	}
	return blocksFor(units, per)
}

func blocksFor(units, per int) cellBlocks {
	rows := max(1, min(blockCells/max(per, 1), units/minBlocks))
	return cellBlocks{units: units, per: per, rows: rows, n: max(1, (units+rows-1)/rows)}
}

// start is the first cell of block k (k >= n: the number of cells).
func (b cellBlocks) start(k int) int { return min(k*b.rows, b.units) * b.per }

// next is the first block boundary after cell c.
func (b cellBlocks) next(c int) int { return b.start(c/b.per/b.rows + 1) }

// shard is the cell range of shard i (1-based) of n: blocks
// B*(i-1)/n .. B*i/n-1 of the B blocks.
func (b cellBlocks) shard(i, n int) (int, int) {
	return b.start(b.n * (i - 1) / n), b.start(b.n * i / n)
}

// largestShard is the most cells a shard of n holds.
func (b cellBlocks) largestShard(n int) int {
	big := 0
	for i := 1; i <= n; i++ {
		c0, c1 := b.shard(i, n)
		big = max(big, c1-c0)
	}
	return big
}

// what names the blocks for a refusal: "rows" ("points") when a block is one
// unit, else "blocks of R rows".
func (b cellBlocks) what(unit string) string {
	if b.rows == 1 {
		return unit + "s"
	}
	return fmt.Sprintf("blocks of %d %ss (the tables' row groups)", b.rows, unit)
}
