package pipelines

import (
	"fmt"
	"math"
	"runtime/debug"

	"swellgrid/grid"
	"swellgrid/ingest"
)

// The memory budget. run.memory_limit is what a run or a merge may hold, in
// every stage; the process takes a fixed overhead beyond it (the Go
// runtime, the NetCDF-C and HDF5 libraries and their file metadata, the
// executable; BENCHMARKS.md gives the figure measured, about 100 MB), and
// ProcessOverhead is the allowance `cluster slurm` adds to a job's request.
// Counted against the limit:
//
//	cache    the NetCDF-4 chunk cache, per role variable (a sixteenth of the
//	         limit each, 1 MiB .. 512 MiB; C memory, outside Go's heap)
//	fixed    the catalog's per-cell and per-step arrays, the contour
//	         columns over the grid, and the table writers (one row group
//	         of each table held, one being encoded)
//	pass     per cell of a pass: its state (climate.Config.CellMemory) and
//	         the read buffers of its share of the blocks in flight
//	chunk    per cell of a fit chunk: its results until they are written
//
// Go's heap may grow beyond its live data before the collector runs; the
// plan keeps the live data within goShare of what Go may use (the limit
// less the cache), and Options.LimitProcess sets Go's soft memory limit
// (runtime/debug.SetMemoryLimit) to that, so that the collector runs before
// the limit is passed.

// ProcessOverhead is the memory a process takes beyond run.memory_limit:
// the stated fixed overhead (BENCHMARKS.md, memory section) rounded up.
const ProcessOverhead = 128 << 20

// goShare is the share of Go's memory the plan fills with live data.
const goShare = 0.7

// blocksInFlight is the number of read blocks alive at once: two in the
// reader's channel, one the workers feed, one the reader fills, and the
// reader's raw slab.
const blocksInFlight = 5

// memPlan is how a run spends run.memory_limit.
type memPlan struct {
	limit     int64
	cache     int64   // chunk cache, all variables
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
			values += e.layout.Len()
		} else {
			values++
		}
	}
	perCell = float64(m.State) + float64(blocksInFlight*e.spec.Run.BlockSteps*values*8)
	if e.spectral {
		perCell += float64(e.layout.Len())*16 + 2048 // the cell's spectral kernel
	}
	ncols := len(e.cellsColumns())
	perResult = float64(m.Result) + float64(2*ncols*8+64)
	g := e.cat.Grid
	n := int64(g.NCells())
	// The table writers hold a row group of every table and encode one
	// (rowGroupRows: 2 MiB of values each), or the whole tables if smaller.
	writers := min(int64(len(longSchemas)+1+2)*(2<<20), int64(3*float64(n)*perResult))
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
func planMemory(limit int64, nvars int, perCell, perResult float64, fixed int64, cells, nx int) (*memPlan, error) {
	p := &memPlan{limit: limit, cache: int64(nvars) * chunkCachePerVar(limit), fixed: fixed, perCell: perCell, perResult: perResult}
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
func neededLimit(nvars int, perCell, perResult float64, fixed int64, cells, nx, minCells int) int64 {
	ok := func(l int64) bool {
		p, err := planMemory(l, nvars, perCell, perResult, fixed, cells, 0)
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
	limit, err := ParseSize(e.spec.Run.MemoryLimit)
	if err != nil {
		return nil, err
	}
	perCell, perResult, fixed := e.memoryModel()
	nx := 0
	if e.cat.Grid.Kind != grid.Points {
		nx = e.cat.Grid.NX
	}
	nvars := len(e.cat.Vars)
	p, err := planMemory(limit, nvars, perCell, perResult, fixed, hi-lo, nx)
	if err != nil {
		need := neededLimit(nvars, perCell, perResult, fixed, hi-lo, nx, 1)
		return nil, fmt.Errorf("run.memory_limit %s is too small for even one pass of one cell: this record (%d cells, %d steps, %d years) needs at least %s (chunk cache %s, tables and catalog %s, %s per cell); set run.memory_limit or --memory-limit to %s or more",
			e.spec.Run.MemoryLimit, e.cat.Grid.NCells(), e.cat.Steps, e.recordYears(), mib(need), mib(p.cache), mib(fixed), kib(perCell), mib(need))
	}
	return p, nil
}

// applyToProcess sets Go's soft memory limit to what the plan lets Go use
// (the limit less the chunk cache), so that the collector runs before the
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
	limit, err := ParseSize(e.spec.Run.MemoryLimit)
	if err != nil {
		return nil, err
	}
	_, perResult, fixed := e.memoryModel()
	state := float64(e.ccfg.CellMemory(e.recordYears(), 0).State)
	per := state + perResult
	// a merge reads no blocks, but opens the catalog (chunk cache set)
	p, err := planMemory(limit, len(e.cat.Vars), per, 1, fixed, e.cat.Grid.NCells(), 0)
	if err != nil || p.passCells < 1 {
		need := neededLimit(len(e.cat.Vars), per, 1, fixed, e.cat.Grid.NCells(), 0, 2)
		return nil, fmt.Errorf("merge: run.memory_limit %s is too small to merge even one cell at a time (%s per cell, tables and catalog %s); give --memory-limit %s or more",
			e.spec.Run.MemoryLimit, kib(per), mib(fixed), mib(need))
	}
	p.fitChunk = min(4096, p.passCells)
	p.perCell, p.perResult = state, perResult
	return p, nil
}
