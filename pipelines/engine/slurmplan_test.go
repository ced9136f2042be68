package engine

import (
	"fmt"
	"math"
	"strings"
	"swellgrid/pipelines/products"
	"testing"
)

// The planner's arithmetic against a hand computation (the memory model of
// budget.go, with round numbers for a model grid of 1000 x 1000 cells):
// 4 role variables, 100 000 bytes per cell of a pass, 200 000 per cell of a
// fit chunk, 10 MiB fixed.
//
// --mem 1152 MiB: budget 1152 - 128 = 1024 MiB = 1 073 741 824 bytes.
// chunk cache 4 x 1 GiB / 16 = 268 435 456; Go's live share
// 0.7 x (1 073 741 824 - 268 435 456) - 10 485 760 = 553 228 697.6;
// fit chunk floor(0.2 x 553 228 697.6 / 200 000) = 553 cells;
// one pass floor((553 228 697.6 - 553 x 200 000) / 100 000) = 4426 cells
// = 4 whole rows; shards ceil(1000 / 4) = 250 of 4 rows (4000 cells).
//
// --shards 250: a shard of 4000 cells in one pass needs a live share x with
// x - floor(x / 10^6) x 200 000 >= 4000 x 100 000, least x = 499.8e6 (fit
// chunk 499); the limit L with 0.7 x 0.75 L - 10 485 760 = 499.8e6 is
// 971 972 876 bytes, 926.95 MiB: 927 MiB to the MiB (926 MiB gives 3994
// cells); the request 927 + 128 = 1055 MiB rounded up to 64 MiB: 1088 MiB,
// budget 960 MiB.
func TestSlurmPlanArithmetic(t *testing.T) {
	m := slurmModel{cells: 1000 * 1000, nx: 1000, ny: 1000, steps: 87660, years: 30, chunks: chunkModel{chunks: make([]int64, 4)}, structured: true,
		perCell: 100000, perResult: 200000, fixed: 10 << 20}
	p, err := planSlurm(m, 1152<<20, 0)
	if err != nil {
		t.Fatal(err)
	}
	if p.Shards != 250 || p.UnitsPerShard != 4 || p.CellsPerShard != 4000 || p.CellsPerPass != 4426 || p.BudgetBytes != 1<<30 || p.MemBytes != 1152<<20 {
		t.Errorf("--mem 1152M: %+v; want 250 shards of 4 rows (4000 cells), 4426 cells a pass, budget 1 GiB", p)
	}
	if p.CacheBytes != 268435456 {
		t.Errorf("chunk cache %d, want 268435456", p.CacheBytes)
	}
	q, err := planSlurm(m, 0, 250)
	if err != nil {
		t.Fatal(err)
	}
	if q.MemBytes != 1088<<20 || q.BudgetBytes != 960<<20 || q.CellsPerShard != 4000 || q.CellsPerPass < 4000 {
		t.Errorf("--shards 250: --mem %s, budget %s, %d cells a shard, %d a pass; want 1088M, 960M, 4000, >= 4000", SizeText(q.MemBytes), SizeText(q.BudgetBytes), q.CellsPerShard, q.CellsPerPass)
	}
	if n := neededLimit(chunkModel{chunks: make([]int64, 4)}, 100000, 200000, 10<<20, 4000, 0, 4000); n != 927<<20 {
		t.Errorf("least limit for 4000 cells in one pass: %d MiB, want 927", n>>20)
	}
	// Both given: 100 shards of 10 rows (10 000 cells) do not fit one pass
	// of 4426 cells: refused, naming 250 shards.
	if _, err := planSlurm(m, 1152<<20, 100); err == nil || !strings.Contains(err.Error(), "cannot fit") || !strings.Contains(err.Error(), "--shards 250 or more") {
		t.Errorf("--mem 1152M --shards 100: %v; want a refusal naming --shards 250", err)
	}
	// 250 and more fit.
	if p, err := planSlurm(m, 1152<<20, 300); err != nil || p.Shards != 300 {
		t.Errorf("--mem 1152M --shards 300: %v, %+v", err, p)
	}
	// A request that cannot hold one row (budget 72 MiB: live share
	// 0.7 x (72 - 4 x 4.5) MiB - 10 MiB = 27.8 MiB, 233 cells < 1000).
	if _, err := planSlurm(m, 200<<20, 0); err == nil || !strings.Contains(err.Error(), "cannot hold one row") {
		t.Errorf("--mem 200M: %v; want a refusal", err)
	}
	if _, err := planSlurm(m, 0, 1001); err == nil || !strings.Contains(err.Error(), "only 1000 rows") {
		t.Errorf("--shards 1001: %v; want a refusal", err)
	}
	if _, err := planSlurm(m, 0, 0); err == nil {
		t.Error("neither --mem nor --shards: no refusal")
	}
	// The merge job: the end products of 10^6 cells need 10^6 x 6 KiB =
	// 5859.375 MiB (productLimit), more than a task's 1 GiB budget, so the
	// merge asks its own: 5888 MiB (rounded up to 64 MiB) + 128 MiB for
	// the process = 6016 MiB. Without products it asks a task's.
	p.sizeMerge(productLimit(m.cells, products.Products{Report: true}))
	if p.MergeBudgetBytes != 5888<<20 || p.MergeMemBytes != 6016<<20 || !strings.Contains(p.Text(), "merge:    --mem 6016M = --memory-limit 5888M") {
		t.Errorf("merge of 10^6 cells with products: budget %s, --mem %s; want 5888M, 6016M, printed\n%s", SizeText(p.MergeBudgetBytes), SizeText(p.MergeMemBytes), p.Text())
	}
	p.sizeMerge(productLimit(m.cells, products.Products{}))
	if p.MergeBudgetBytes != p.BudgetBytes || p.MergeMemBytes != p.MemBytes || strings.Contains(p.Text(), "merge:") {
		t.Errorf("merge without products: budget %s, --mem %s; want a task's %s, %s", SizeText(p.MergeBudgetBytes), SizeText(p.MergeMemBytes), SizeText(p.BudgetBytes), SizeText(p.MemBytes))
	}
}

// The plan's read amplification against a hand count, on the model grid of
// TestSlurmPlanArithmetic (1000 x 1000, --mem 1152M: 250 shards of 4 rows):
//   - chunks of 10 rows: every 20 rows hold 5 shards, of which [8, 12)
//     straddles a chunk boundary and decompresses 2 chunks (20 rows), the
//     other 4 one chunk (10 rows each): 60 rows decompressed per 20 needed,
//     amplification 3.00; no shard count from 250 to 500 puts every
//     boundary on a multiple of 10 (that needs n to divide 100), so 250 stay,
//     and the note gives the nccopy -c that chunks the rows by 4;
//   - chunks of 3 rows: 333 shards put every boundary on a multiple of 3
//     (floor(1000 i / 333) = 3i for i < 333), amplification 1;
//   - chunks spanning the grid (1000 rows): each of the 250 shards
//     decompresses all 1000 rows, amplification 250, and the note gives the
//     nccopy -c that chunks the rows by 4 (the gcd of the boundaries 4i);
//     when the time chunk is as long as the rows' (time/1000), the rows'
//     dimension is still the one rechunked (it is found by name).
func TestSlurmPlanReadAmplification(t *testing.T) {
	m := slurmModel{cells: 1000 * 1000, nx: 1000, ny: 1000, steps: 87660, years: 30, chunks: chunkModel{chunks: make([]int64, 4)}, structured: true,
		perCell: 100000, perResult: 200000, fixed: 10 << 20, chunkVar: "hm0", chunkFile: "f.nc"}
	for _, c := range []struct {
		rows, shards int
		amp          float64
		note         string
		time         int // the time dimension's chunk length
	}{{10, 250, 3, "nccopy -c time/1,lat/4,lon/1000 IN.nc OUT.nc", 1}, {3, 333, 1, "", 1}, {1000, 250, 250, "nccopy -c time/1,lat/4,lon/1000 IN.nc OUT.nc", 1},
		{1000, 250, 250, "nccopy -c time/1000,lat/4,lon/1000 IN.nc OUT.nc", 1000}, {0, 250, 1, "", 1}} {
		m.chunkRows, m.chunkDim = c.rows, "lat"
		m.chunkShape = fmt.Sprintf("time/%d,lat/%d,lon/1000", c.time, c.rows)
		p, err := planSlurm(m, 1152<<20, 0)
		if err != nil {
			t.Fatal(err)
		}
		if p.Shards != c.shards || math.Abs(p.ReadAmplification-c.amp) > 1e-12 {
			t.Errorf("chunks of %d rows: %d shards, read amplification %.4f; want %d, %.2f", c.rows, p.Shards, p.ReadAmplification, c.shards, c.amp)
		}
		if c.note == "" && p.ChunkNote != "" || !strings.Contains(p.ChunkNote, c.note) {
			t.Errorf("chunks of %d rows: note %q, want one containing %q", c.rows, p.ChunkNote, c.note)
		}
		if txt := p.Text(); !strings.Contains(txt, fmt.Sprintf("read amplification %.2f", c.amp)) {
			t.Errorf("chunks of %d rows: the plan's text does not state the read amplification %.2f:\n%s", c.rows, c.amp, txt)
		}
	}
}

// The rechunk advice fits every file: one chunk per file and variable on a
// 50 x 50 grid of monthly 3-hourly files (248 steps in a 31-day month, 224
// in February), 4 shards of whole rows (boundaries 12, 25, 37: the gcd
// with 50 is 1). nccopy refuses a chunk longer than the file's time axis
// ("NetCDF: Bad chunk sizes" for time/248 on February, seen with nccopy
// 4.9.0), so the time chunk is the shortest file's 224 steps.
func TestSlurmPlanRechunkFitsShortestFile(t *testing.T) {
	m := slurmModel{cells: 2500, nx: 50, ny: 50, steps: 14608, years: 5, chunks: chunkModel{chunks: make([]int64, 4)}, structured: true,
		perCell: 100000, perResult: 200000, fixed: 10 << 20, chunkVar: "hm0", chunkFile: "f.nc",
		chunkRows: 50, chunkDim: "lat", chunkShape: "time/248,lat/50,lon/50", fileSteps: 248, minSteps: 224}
	m.blocks = blocksFor(m.ny, m.nx)
	p, err := planSlurm(m, 0, 4)
	if err != nil {
		t.Fatal(err)
	}
	want := "nccopy -c time/224,lat/1,lon/50 IN.nc OUT.nc"
	if !strings.Contains(p.ChunkNote, want) || p.ReadAmplification != 4 {
		t.Errorf("note %q, amplification %.2f; want a note containing %q, amplification 4", p.ChunkNote, p.ReadAmplification, want)
	}
}

// A plan that counts its shards and must advise rechunking takes, from the
// fewest that fit up to twice as many, the count whose boundaries share the
// largest divisor, so that the advised chunks are not tiny: on a 50 x 50 grid
// of one-row blocks whose chunks span the grid, 4 shards start at rows 12,
// 25, 37 (divisor 1: chunks of one row), 5 at 10, 20, 30, 40 (divisor 10),
// and 6 to 8 again share only 1 (counted by hand). Where a count puts every
// boundary on the existing tiles (chunks of 25 rows: 2 shards, at 25), that
// count is taken.
func TestSlurmPlanAdvisesWholeChunks(t *testing.T) {
	m := slurmModel{cells: 2500, nx: 50, ny: 50, structured: true, blocks: blocksFor(50, 50),
		chunkRows: 50, chunkDim: "lat", chunkShape: "time/248,lat/50,lon/50"}
	if n := alignedShards(m, 4); n != 5 {
		t.Fatalf("chunks spanning the grid, 4 shards needed: %d taken, want 5", n)
	}
	if got, want := rechunkSpec(m, 5), "time/248,lat/10,lon/50"; got != want {
		t.Errorf("advice for 5 shards %q, want %q", got, want)
	}
	if got, want := rechunkSpec(m, 4), "time/248,lat/1,lon/50"; got != want {
		t.Errorf("advice for 4 shards %q, want %q", got, want)
	}
	m.chunkRows, m.chunkShape = 25, "time/248,lat/25,lon/50"
	if n := alignedShards(m, 2); n != 2 || readAmplification(m, 2) != 1 {
		t.Errorf("chunks of 25 rows, 2 shards needed: %d taken (amplification %.2f), want 2 (1.00)", n, readAmplification(m, 2))
	}
	// 3 to 6 shards all cut the 25-row tiles (3 at 16, 4 at 12, 5 at 10,
	// 6 at 8): 5 shares the largest divisor, 10
	if n := alignedShards(m, 3); n != 5 || rechunkSpec(m, n) != "time/248,lat/10,lon/50" {
		t.Errorf("chunks of 25 rows, 3 shards needed: %d taken, advice %q; want 5, lat/10", n, rechunkSpec(m, n))
	}
}
