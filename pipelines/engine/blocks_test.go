package engine

import (
	"path/filepath"
	"testing"

	"github.com/apache/arrow/go/v17/parquet/file"

	"swellgrid/internal/runcheck"
)

// The blocks against a hand computation of max(1, min(1024/per,
// units/32)) units a block:
//   - 1000 x 1000: min(1, 31) = 1 row, 1000 blocks (the worked plan's
//     shards of whole rows are unchanged);
//   - 200 x 200: min(5, 6) = 5 rows, 40 blocks of 1000 cells;
//   - 50 x 50: min(20, 1) = 1 row, 50 blocks;
//   - 108 points: min(1024, 3) = 3 points, 36 blocks;
//   - 100 rows of 10 000 cells: min(0, 3) -> 1 row, 100 blocks.
func TestCellBlocksByHand(t *testing.T) {
	for _, c := range []struct{ units, per, rows, n int }{
		{1000, 1000, 1, 1000}, {200, 200, 5, 40}, {50, 50, 1, 50}, {108, 1, 3, 36}, {100, 10000, 1, 100},
	} {
		b := blocksFor(c.units, c.per)
		if b.rows != c.rows || b.n != c.n {
			t.Errorf("%d units of %d cells: %d blocks of %d units, want %d of %d", c.units, c.per, b.n, b.rows, c.n, c.rows)
		}
	}
	// 200 x 200: block boundaries every 1000 cells; the next after 999 is
	// 1000, after 1000 is 2000; the last block ends at the grid's end.
	b := blocksFor(200, 200)
	for _, c := range [][2]int{{0, 1000}, {999, 1000}, {1000, 2000}, {39999, 40000}} {
		if got := b.next(c[0]); got != c[1] {
			t.Errorf("200 x 200: next boundary after cell %d is %d, want %d", c[0], got, c[1])
		}
	}
	// 3 shards of its 40 blocks: blocks 0..12, 13..25, 26..39 (40 i / 3).
	for i, want := range [][2]int{{0, 13000}, {13000, 26000}, {26000, 40000}} {
		if c0, c1 := b.shard(i+1, 3); c0 != want[0] || c1 != want[1] {
			t.Errorf("200 x 200, shard %d/3: cells %d..%d, want %d..%d", i+1, c0, c1, want[0], want[1]-1)
		}
	}
}

// A single run's tables end a row group at every block: on the 6 x 5 bulk
// fixture (blocks of one 6-cell row) cells.parquet has 5 row groups of 6
// rows, where without the cuts it would have one of 30.
func TestSingleRunRowGroupsAtBlocks(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	out := filepath.Join(t.TempDir(), "run")
	clRun(t, clSpec(in, out), Options{})
	pf, err := file.OpenParquetFile(filepath.Join(out, "cells.parquet"), false)
	if err != nil {
		t.Fatal(err)
	}
	defer pf.Close()
	var rows []int64
	for g := 0; g < pf.NumRowGroups(); g++ {
		rows = append(rows, pf.RowGroup(g).NumRows())
	}
	if len(rows) != 5 {
		t.Fatalf("cells.parquet row groups %v, want 5 of 6 rows", rows)
	}
	for _, n := range rows {
		if n != 6 {
			t.Errorf("cells.parquet row groups %v, want 5 of 6 rows", rows)
			break
		}
	}
}
