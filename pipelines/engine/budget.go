package engine

import (
	"fmt"
	"math"
	"runtime/debug"

	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/products"
)

// The memory budget. run.memory_limit is what a run or a merge may hold, in
// every stage; the process takes a fixed overhead beyond it (the Go
// runtime, the NetCDF-C and HDF5 libraries and their file metadata, the
// executable; BENCHMARKS.md gives the figure measured, 100-112 MiB), and
// ProcessOverhead is the allowance `cluster slurm` adds to a job's request.
// Counted against the limit:
//
//	cache    the NetCDF-4 chunk cache, per role variable (a sixteenth of the
//	         limit each, 1 MiB .. 512 MiB; C memory, outside Go's heap),
//	         not counted for a variable whose chunks are larger (HDF5
//	         caches no chunk larger than the cache)
//	decode   HDF5's buffers while it decompresses a chunk: decodeCopies
//	         times the largest filtered chunk of a role variable (C
//	         memory; the one reader decodes one chunk at a time)
//	fixed    the catalog's per-cell and per-step arrays, the contour
//	         columns over the grid, and the table writers (one row group
//	         of each table held, one being encoded)
//	pass     per cell of a pass: its state (climate.Config.CellMemory) and
//	         the read buffers of its share of the blocks in flight
//	chunk    per cell of a fit chunk: its results until they are written
//
// Go's heap may grow beyond its live data before the collector runs; the
// plan keeps the live data within goShare of what Go may use (the limit
// less the cache and decode), and Options.LimitProcess sets Go's soft memory limit
// (runtime/debug.SetMemoryLimit) to that, so that the collector runs before
// the limit is passed.
//
// Chunks matter because HDF5 decompresses a chunk whole to read any part of
// it: a month of a variable on a 200 x 200 grid in one chunk would be 40 MB
// of float32 however few steps and cells a block asks for. C memory freed
// by HDF5 is given back to the system (ingest.SetChunkCache sets glibc's
// allocator so), or the per-thread malloc arenas would keep what the model
// no longer counts.

// ProcessOverhead is the memory a process takes beyond run.memory_limit:
// the stated fixed overhead (BENCHMARKS.md, memory section) rounded up.
const ProcessOverhead = 128 << 20

// goShare is the share of Go's memory the plan fills with live data.
const goShare = 0.7

// blocksInFlight is the number of read blocks alive at once: two in the
// reader's channel, one the workers feed, one the reader fills, and the
// reader's raw slab.
const blocksInFlight = 5

// decodeCopies is the number of chunk-sized buffers HDF5 holds at once
// while it reads a filtered chunk: with shuffle and deflate (the common
// NetCDF-4 pair) the deflate filter inflates the compressed bytes into one
// buffer, and the shuffle filter unshuffles that into another before the
// first is freed (H5Z filter pipeline; the compressed input, smaller than
// the chunk, is freed before the shuffle). BENCHMARKS.md (memory) gives
// the figures measured.
const decodeCopies = 2

// chunkModel is what reading the role variables costs in C memory under a
// limit: a chunk cache for each variable, and the buffers of a chunk being
// decompressed.
type chunkModel struct {
	// chunks holds, per role variable, its largest filtered chunk
	// decompressed (bytes; 0 when its chunks are unfiltered, or it has none).
	chunks []int64
}

// chunkModelOf is the chunk model of the catalog's role variables.
func chunkModelOf(cat *ingest.Catalog) chunkModel {
	filtered := cat.FilteredChunks()
	var m chunkModel
	for r := range cat.Vars { // order does not matter: the model sums and takes the largest
		m.chunks = append(m.chunks, filtered[r])
	}
	return m
}

// cacheBytes is the chunk cache counted under limit: chunkCachePerVar for
// each role variable whose chunks the cache can hold (HDF5 does not cache a
// chunk larger than the cache; such a variable's cache stays empty).
func (m chunkModel) cacheBytes(limit int64) int64 {
	per := chunkCachePerVar(limit)
	var n int64
	for _, c := range m.chunks {
		if c <= per {
			n += per
		}
	}
	return n
}

// decodeBytes is the memory HDF5 takes while it decompresses the largest
// filtered chunk: decodeCopies chunk-sized buffers.
func (m chunkModel) decodeBytes() int64 {
	var big int64
	for _, c := range m.chunks {
		big = max(big, c)
	}
	return decodeCopies * big
}

// cMemory is the C memory of reading under limit: the chunk caches and the
// decompression buffers.
func (m chunkModel) cMemory(limit int64) int64 { return m.cacheBytes(limit) + m.decodeBytes() }

// memPlan is how a run spends run.memory_limit.
type memPlan struct {
	limit     int64
	cache     int64   // C memory of reading: chunk caches and decompression (chunkModel.cMemory)
	fixed     int64   // catalog arrays, contour columns, table writers
	perCell   float64 // a cell of a pass
	perResult float64 // a cell of a fit chunk
	passCells int     // cells per pass (at most)
	fitChunk  int     // cells fitted and written at a time
}

// chunkCachePerVar is the NetCDF chunk cache per variable under limit: a
// sixteenth of the budget (1 MiB .. 512 MiB), enough for a month of a
// variable on a large grid at the default budget, so each chunk is
// decompressed once; a small budget reads chunks again rather than pass it.
func chunkCachePerVar(limit int64) int64 { return min(max(limit/16, 1<<20), 512<<20) }

// memoryModel gives the per-cell and fixed parts of the plan (limit aside).
func (e *engine) memoryModel() (perCell, perResult float64, fixed int64) {
	years := e.recordYears()
	m := e.ccfg.CellMemory(years, 0)
	values := 0 // values per cell per step read
	for r, v := range e.cat.Vars {
		if v == nil {
			continue
		}
		if r == ingest.Spectrum2D || r == ingest.Spectrum1D {
			values += e.cat.MaxBins() // the largest spectrum of any file
		} else {
			values++
		}
	}
	perCell = float64(m.State) + e.corrStateBytes() + float64(blocksInFlight*e.spec.Exec.BlockSteps*values*8)
	if e.spectral {
		for _, l := range e.layouts {
			perCell += float64(l.Len())*16 + 2048 // the cell's spectral kernel for each set of axes
		}
	}
	ncols := len(e.cellsColumns())
	perResult = float64(m.Result) + float64(2*ncols*8+64)
	g := e.cat.Grid
	n := int64(g.NCells())
	// The table writers hold a row group of every table and encode
	// sinkEncoders at a time, 2 row groups' worth each (tables.RowGroupRows: 2 MiB
	// of values), or the whole tables if smaller.
	writers := min(int64(len(longSchemas)+1+2*sinkEncoders)*(2<<20), int64(3*float64(n)*perResult))
	fixed = n*48 + int64(e.cat.Steps)*48 + // lon, lat, depth, mask, ids; times
		int64(len(e.spec.Contours.Columns))*n*8 + writers
	return perCell, perResult, fixed
}

// recordYears is the number of years in which the record has steps.
func (e *engine) recordYears() int {
	n := 0
	for _, s := range e.recordSpans() {
		n += s[1]/12 - s[0]/12 + 1
	}
	return max(n, 1)
}

// planMemory splits the budget limit for cells cells (rows of nx cells read
// best whole; nx 0 for a point set).
func planMemory(limit int64, cm chunkModel, perCell, perResult float64, fixed int64, cells, nx int) (*memPlan, error) {
	p := &memPlan{limit: limit, cache: cm.cMemory(limit), fixed: fixed, perCell: perCell, perResult: perResult}
	live := goShare*float64(limit-p.cache) - float64(fixed)
	if live <= 0 {
		return p, errTooSmall
	}
	// Results are written a chunk at a time: up to a fifth of the live
	// share, at most 4096 cells, never more than the cells.
	p.fitChunk = min(4096, max(1, cells), int(0.2*live/perResult))
	p.passCells = int((live - float64(p.fitChunk)*perResult) / perCell)
	if p.fitChunk < 1 || p.passCells < 1 {
		return p, errTooSmall
	}
	if nx > 0 && p.passCells >= nx {
		p.passCells = p.passCells / nx * nx // whole rows
	}
	p.passCells = min(p.passCells, max(cells, 1))
	return p, nil
}

var errTooSmall = fmt.Errorf("too small")

// neededLimit is the smallest limit (to the MiB) at which planMemory finds
// room for minCells cells in one pass.
func neededLimit(cm chunkModel, perCell, perResult float64, fixed int64, cells, nx, minCells int) int64 {
	ok := func(l int64) bool {
		p, err := planMemory(l, cm, perCell, perResult, fixed, cells, 0)
		return err == nil && p.passCells >= minCells
	}
	hi := int64(64 << 20)
	for !ok(hi) {
		if hi > 1<<50 {
			return hi
		}
		hi *= 2
	}
	lo := int64(1 << 20)
	for hi-lo > 1<<20 {
		mid := (lo + hi) / 2 / (1 << 20) * (1 << 20)
		if mid <= lo {
			break
		}
		if ok(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}

// planBudget is the memory plan of cells lo..hi-1 under the spec's limit, or
// the refusal that names the limit one pass needs.
func (e *engine) planBudget(lo, hi int) (*memPlan, error) {
	limit := e.spec.Exec.MemoryBytes
	perCell, perResult, fixed := e.memoryModel()
	nx := 0
	if e.cat.Grid.Kind != grid.Points {
		nx = e.cat.Grid.NX
	}
	cm := chunkModelOf(e.cat)
	p, err := planMemory(limit, cm, perCell, perResult, fixed, hi-lo, nx)
	if err != nil {
		need := neededLimit(cm, perCell, perResult, fixed, hi-lo, nx, 1)
		return nil, fmt.Errorf("run.memory_limit %s is too small for even one pass of one cell: this record (%d cells, %d steps, %d years) needs at least %s (chunk cache %s, decompressing a chunk %s, tables and catalog %s, %s per cell); set run.memory_limit or --memory-limit to %s or more",
			e.spec.Exec.MemoryText, e.cat.Grid.NCells(), e.cat.Steps, e.recordYears(), mib(need), mib(cm.cacheBytes(limit)), mib(cm.decodeBytes()), mib(fixed), kib(perCell), mib(need))
	}
	return p, nil
}

// productBytesPerCell is what the end products (the report's maps and
// pages, atlas.nc, atlas.gpkg), built after the passes from the whole
// cells table, hold per cell of the grid at their peak, beyond the
// process overhead. They are not streamed, so their memory grows with the
// grid and not with the limit. Measured (peak RSS, /usr/bin/time -v, on a
// loaded machine; RSS does not depend on the load) with `swellgrid report
// --atlas`: 321 MB on a 200 x 200 grid (1 month) and 90 MB on the 12-cell
// testdata/regular_packed.nc, where the process overhead is all:
// (321 - 90) MB / 40000 cells = 5.8 kB a cell, rounded up to 6 KiB.
const productBytesPerCell = 6 << 10

// productLimit is the smallest memory limit under which the end products
// of a grid of cells cells are built (productBytesPerCell a cell), 0 when
// the spec builds none.
func productLimit(cells int, p products.Products) int64 {
	if !p.Report && !p.NetCDF && !p.GeoPackage {
		return 0
	}
	return int64(cells) * productBytesPerCell
}

// checkProductBudget refuses, before computing, a limit below what the end
// products of a grid of cells cells need (productBytesPerCell a cell) when
// the spec builds any: the smallest limit a run accepts is the larger of
// what one pass needs (planBudget) and this.
func checkProductBudget(limit int64, limitText string, cells int, p products.Products) error {
	need := productLimit(cells, p)
	if limit >= need {
		return nil
	}
	return fmt.Errorf("run.memory_limit %s is too small for the end products of this grid: the report, atlas.nc and atlas.gpkg are built from the whole cells table and hold about %s a cell, %s for %d cells; set run.memory_limit or --memory-limit to %s or more, or switch them off ([output] report, netcdf and geopackage = false) and build them later with `swellgrid report --atlas DIR` where the memory is",
		limitText, kib(productBytesPerCell), mib(need), cells, mib(need))
}

// applyToProcess sets Go's soft memory limit to what the plan lets Go use
// (the limit less the C memory of reading), so that the collector runs before the
// process passes the budget.
func (p *memPlan) applyToProcess() {
	debug.SetMemoryLimit(p.limit - p.cache)
}

func mib(b int64) string { return fmt.Sprintf("%d MiB", int64(math.Ceil(float64(b)/(1<<20)))) }

func kib(b float64) string { return fmt.Sprintf("%.1f KiB", b/1024) }

// planMergeBudget is the memory plan of a merge: it reads the shards' states
// a chunk at a time and holds the chunk's states and results only (no read
// buffers, no chunk cache beyond the catalog's).
func (e *engine) planMergeBudget() (*memPlan, error) {
	limit := e.spec.Exec.MemoryBytes
	_, perResult, fixed := e.memoryModel()
	state := float64(e.ccfg.CellMemory(e.recordYears(), 0).State) + e.corrStateBytes()
	per := state + perResult
	// a merge reads no blocks (no chunk is decompressed), but opens the
	// catalog (chunk cache set)
	cm := chunkModel{chunks: make([]int64, len(e.cat.Vars))}
	p, err := planMemory(limit, cm, per, 1, fixed, e.cat.Grid.NCells(), 0)
	if err != nil || p.passCells < 1 {
		need := neededLimit(cm, per, 1, fixed, e.cat.Grid.NCells(), 0, 2)
		return nil, fmt.Errorf("merge: run.memory_limit %s is too small to merge even one cell at a time (%s per cell, tables and catalog %s); give --memory-limit %s or more",
			e.spec.Exec.MemoryText, kib(per), mib(fixed), mib(need))
	}
	p.fitChunk = min(4096, p.passCells)
	p.perCell, p.perResult = state, perResult
	return p, nil
}
