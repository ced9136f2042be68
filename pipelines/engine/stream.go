package engine

import (
	"context"
	"fmt"
	"io"
	"math"
	"sync"
	"time"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats/climate"
	"swellgrid/stats/extremes"
	"swellgrid/stats/seastate"
)

// cell is the streaming state of one cell: everything needed for its results,
// bounded in size by the number of years, never by the number of steps.
type cell struct {
	clim *climate.CellState
	col  *extremes.Collector
	// kerns holds the cell's spectral kernel for each set of spectral axes
	// of the record (Catalog.SpectralAxes), made when a block on that set
	// first comes (spectral runs only).
	kerns []*seastate.Kernel
	spec  *seastate.RecordMeans // spectral runs only
	corr  *cellCorr             // the bias-corrected state (biascorr.go; nil: none or out of reach)
}

// engine holds what every worker shares read-only during a pass.
type engine struct {
	cat  *ingest.Catalog
	spec *runspec.Resolved
	ccfg *climate.Config
	xcfg extremes.CollectorConfig
	// layouts and sectors are per set of spectral axes (Catalog.SpectralAxes,
	// which may change between files): each set's bins, and (2-D spectra)
	// how its direction bins share the rose's fixed sectors.
	layouts  []*seastate.Layout
	sectors  []*seastate.SectorSplit
	consts   seastate.Consts
	spectral bool
	// times is where the stream stage's time went, summed over passes.
	times streamTimes
	// spans are the record's year-month spans (recordSpans).
	spansOnce sync.Once
	spans     [][2]int
	// beyond is the first spectrum read whose Hm0 is beyond any sea.
	beyond notSea
	// model is the AEP bands' model component (loadModelErrors).
	model *modelErrors
	// corrCfg is the configuration of the bias-corrected states (nil: no
	// correction asked).
	corrCfg *climate.Config
	// spillTo and spillFrom are the scratch spill of the pass being read
	// (ingest.ReadRange.SpillTo, SpillFrom; spill.go).
	spillTo   []ingest.SpillOut
	spillFrom io.Reader
}

// streamTimes are the busy and waiting times of the stream stage's parts.
type streamTimes struct {
	read     ingest.ReadStats
	feedBusy time.Duration // summed over workers
	cookBusy time.Duration // unpacking raw blocks (Block.Cook), summed over workers
	idleWait time.Duration // the dispatcher waiting for the reader
	fileDone time.Duration // checkpoints after each file (workers idle)
}

// addStreamTimings adds the stream stage's busy and waiting times (seconds)
// to a run's timings: read_busy_s, read_wait_s (the reader blocked because
// the workers were busy), unpack_busy_s (the workers unpacking their cells
// of the raw blocks, summed over workers), feed_busy_s (the state update,
// summed over workers), feed_starved_s (the workers waiting for the reader)
// and checkpoint_s (the per-file callback, during which the workers are
// idle).
func (e *engine) addStreamTimings(m map[string]float64) {
	m["read_busy_s"] += e.times.read.Busy.Seconds()
	m["read_wait_s"] += e.times.read.Wait.Seconds()
	m["unpack_busy_s"] += e.times.cookBusy.Seconds()
	m["feed_busy_s"] += e.times.feedBusy.Seconds()
	m["feed_starved_s"] += e.times.idleWait.Seconds()
	m["checkpoint_s"] += e.times.fileDone.Seconds()
}

func newEngine(cat *ingest.Catalog, spec *runspec.Resolved, ccfg *climate.Config) (*engine, error) {
	e := &engine{cat: cat, spec: spec, ccfg: ccfg,
		consts: seastate.Consts{Rho: spec.Physics.Rho, G: spec.Physics.G},
		xcfg:   extremes.CollectorConfig{YearStartMonth: spec.Extremes.YearStartMonth, SeparationHours: spec.Extremes.SeparationH},
	}
	if cat.Spectral != nil && (cat.Vars[ingest.Spectrum2D] != nil || cat.Vars[ingest.Spectrum1D] != nil) {
		e.spectral = true
		for _, a := range cat.SpectralAxes {
			l, err := seastate.NewLayout(a.FreqHz, a.DirDeg)
			if err != nil {
				return nil, fmt.Errorf("spectral layout: %v", err)
			}
			var sp *seastate.SectorSplit
			if l.ND() > 0 {
				if sp, err = seastate.NewSectorSplit(l, ccfg.DirectionSectors); err != nil {
					return nil, fmt.Errorf("spectral layout: %v", err)
				}
			}
			e.layouts, e.sectors = append(e.layouts, l), append(e.sectors, sp)
		}
	}
	if err := e.loadModelErrors(); err != nil {
		return nil, err
	}
	if err := e.setupCorrection(); err != nil {
		return nil, err
	}
	return e, nil
}

func (e *engine) newCell(id int) *cell {
	c := &cell{clim: climate.NewCellState(e.ccfg), col: extremes.NewCollector(e.xcfg), corr: e.newCorr(id)}
	if e.spectral {
		c.kerns = make([]*seastate.Kernel, len(e.layouts))
		c.spec = &seastate.RecordMeans{}
	}
	return c
}

// kernel is cell c (id) 's kernel for the spectral axes set axes, made on
// first use: one per cell and set, whatever the number of blocks.
func (e *engine) kernel(c *cell, id, axes int) *seastate.Kernel {
	k := c.kerns[axes]
	if k == nil {
		k = seastate.NewKernel(e.layouts[axes], e.cat.Depth[id], e.consts)
		c.kerns[axes] = k
	}
	return k
}

// stepTime is the calendar information of one time step, shared by all cells.
type stepTime struct {
	year, month int
	hours       float64
	weightH     float64          // the time the step stands for, hours
	ct          climate.StepTime // the same, checked and in minutes, for climate.CellState.AddAt
}

// feed adds the block's steps of cells lo..hi-1 (canonical ids) to their
// states. It is the hot path: one call per worker per block.
func (e *engine) feed(b *ingest.Block, times []stepTime, cells []*cell, lo, hi int) {
	if !e.spectral {
		e.feedBulk(b, times, cells, lo, hi)
		return
	}
	nc := b.NC()
	var p seastate.Params
	per := b.NF * b.ND
	nan := math.NaN()
	depths := b.Bulk[ingest.Depth] // per step when depth varies in time, else nil
	sectors := e.sectors[b.Axes]   // the block's axes: those of its file
	var sectorJ []float64
	if sectors != nil {
		sectorJ = make([]float64, sectors.N())
	}
	for id := lo; id < hi; id++ {
		c := cells[id-b.C0]
		if c == nil {
			continue
		}
		k := id - b.C0
		kern := e.kernel(c, id, b.Axes)
		for t := 0; t < b.NT; t++ {
			st := &times[t]
			i := t*nc + k
			j, hm0, te, tp, dir := nan, nan, nan, nan, nan
			if depths != nil {
				kern.SetDepth(depths[i]) // depth varying in time: this step's
			}
			if s := b.Spec[i*per : (i+1)*per]; !seastate.AllMissing(s) {
				// missing (NaN) and non-finite bins are set to 0 and counted by the kernel
				kern.Params(s, &p)
				if p.Hm0 > maxSeaHm0M {
					e.beyond.note(b.Step0+t, id, p.Hm0) // refused at the end of the file (checkSea)
				}
				c.spec.Add(&p)
				if p.Valid {
					j, hm0, te, tp, dir = p.J, p.Hm0, p.Te, p.Tp, p.MeanDirDeg
				}
				if depths != nil && !(depths[i] > 0) {
					j = nan // a step whose depth is missing or <= 0 (dry) has no power
				}
			}
			// screened: unusable values counted and left out, here as in the state
			j, hm0, te, tp, dir = c.clim.AddAt(&st.ct, j, hm0, te, tp, dir)
			if sectorJ != nil && j == j { // j is valid only after a valid Params
				kern.SectorPowers(sectors, sectorJ)
				c.clim.AddDirectionalPower(&st.ct, sectorJ, dir)
			}
			c.col.Add(st.year, st.month, st.hours, st.weightH, hm0, te, tp)
		}
	}
}

// feedBulk is feed for bulk parameters, in two column-wise passes over the
// block: first Te and the finite-depth power of every step of cells lo..hi-1
// (seastate.BulkStep, group velocity from the G(y) table), row by row in the
// block's order; then each cell's state over its steps, with the time fields
// prepared once per block.
func (e *engine) feedBulk(b *ingest.Block, times []stepTime, cells []*cell, lo, hi int) {
	nc := b.NC()
	hm0s, tes, tps, dirs := b.Bulk[ingest.Hm0], b.Bulk[ingest.Te], b.Bulk[ingest.Tp], b.Bulk[ingest.Dir]
	depths := b.Bulk[ingest.Depth] // per step when depth varies in time, else nil
	if dirs == nil {
		dirs = b.Bulk[ingest.DirPeak]
	}
	alpha := e.spec.Physics.TeOverTp
	nan := math.NaN()
	k0, w := lo-b.C0, hi-lo
	sc := bulkScratch.Get().(*[]float64)
	defer bulkScratch.Put(sc)
	if cap(*sc) < 2*b.NT*w {
		*sc = make([]float64, 2*b.NT*w)
	}
	jv, tev := (*sc)[:b.NT*w], (*sc)[b.NT*w:2*b.NT*w] // [t*w + k-k0]
	bds := make([]seastate.BulkDepth, w)
	for k := range bds {
		bds[k] = seastate.NewBulkDepth(e.cat.Depth[lo+k], e.consts.G) // NaN/+Inf: deep water
	}
	for t := 0; t < b.NT; t++ {
		row := t * nc
		for k := 0; k < w; k++ {
			i := row + k0 + k
			te, tp := nan, nan
			if tes != nil {
				te = tes[i]
			}
			if tps != nil {
				tp = tps[i]
			}
			bd := bds[k]
			if depths != nil {
				bd = seastate.NewBulkDepthAt(depths[i], e.consts.G) // depth varying in time: this step's
			}
			tev[t*w+k], jv[t*w+k] = seastate.BulkStep(bd, hm0s[i], te, tp, tes != nil, alpha, e.consts)
		}
	}
	for k := 0; k < w; k++ {
		c := cells[k0+k]
		if c == nil {
			continue
		}
		for t := 0; t < b.NT; t++ {
			st := &times[t]
			i := t*nc + k0 + k
			tp, dir := nan, nan
			if tps != nil {
				tp = tps[i]
			}
			if dirs != nil {
				dir = dirs[i]
			}
			// screened: unusable values counted and left out, here as in the state
			j, hm0, te, tp, dir := c.clim.AddAt(&st.ct, jv[t*w+k], hm0s[i], tev[t*w+k], tp, dir)
			c.clim.AddDirection(&st.ct, j, dir)
			if c.corr != nil {
				e.addCorrected(c.corr, &st.ct, bulkDepthAt(bds[k], depths, i, e.consts.G), j, hm0, te, tp)
			}
			c.col.Add(st.year, st.month, st.hours, st.weightH, hm0, te, tp)
		}
	}
}

// bulkScratch holds feedBulk's per-call arrays (Te and J of a block's cells).
var bulkScratch = sync.Pool{New: func() any { return new([]float64) }}

// blockTimes converts a block's stamps to calendar fields and durations once
// per block.
func (e *engine) blockTimes(b *ingest.Block) []stepTime {
	out := make([]stepTime, b.NT)
	for t, s := range b.Times {
		d := e.cat.Date(s)
		w := e.cat.StepHours(b.Step0 + t) // the step's own duration (ingest/timeaxis.go)
		out[t] = stepTime{year: d.Year, month: d.Month, hours: s.Hours(), weightH: w,
			ct: climate.PrepareTime(d.Year, d.Month, s.Hours(), w)}
	}
	return out
}

// streamPass reads the record for cells c0..c1-1 and feeds their states with
// workers goroutines, each owning a fixed sub-range of cells (no locks on the
// hot path). The reader only reads (raw blocks); each worker unpacks its own
// cells of a block (ingest.Block.Cook) and tallies what it found. After the
// last block of each file, while all workers are idle, it adds to seen the
// counts of the role files now read completely (ingest.Catalog.Settle) and
// calls fileDone with the index of the next file to read.
func (e *engine) streamPass(ctx context.Context, c0, c1, fromFile, workers int, cells []*cell, seen ingest.Tally,
	fileDone func(next int) error, progress func(steps int)) error {
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	blocks := make(chan *ingest.Block, 2)
	readErr := make(chan error, 1)
	go func() {
		readErr <- fault.Catch(func() error {
			return e.cat.Read(ctx, ingest.ReadRange{C0: c0, C1: c1, MaxSteps: e.spec.Exec.BlockSteps, FromFile: fromFile, Stats: &e.times.read, Raw: true,
				SpillTo: e.spillTo, SpillFrom: e.spillFrom}, blocks)
		})
		close(blocks)
	}()
	if workers < 1 {
		workers = 1
	}
	n := c1 - c0
	if workers > n {
		workers = n
	}
	type job struct {
		b     *ingest.Block
		times []stepTime
		wg    *sync.WaitGroup
	}
	var failed fault.First // a worker's panic, as an internal error
	chans := make([]chan job, workers)
	busy := make([]time.Duration, workers)
	cook := make([]time.Duration, workers)
	tallies := make([]ingest.Tally, workers) // each worker's counts since the last file
	pending := ingest.Tally{}                // counts of role files not yet read completely
	var all sync.WaitGroup
	for w := 0; w < workers; w++ {
		chans[w] = make(chan job, 1)
		tallies[w] = ingest.Tally{}
		lo, hi := c0+n*w/workers, c0+n*(w+1)/workers
		all.Add(1)
		go func(w int, ch chan job) {
			defer all.Done()
			for j := range ch {
				t := time.Now()
				if !failed.Set() {
					failed.Record(fault.Catch(func() error {
						fault.Hook("stream")
						j.b.Cook(lo, hi, tallies[w])
						tc := time.Now()
						cook[w] += tc.Sub(t)
						t = tc
						e.feed(j.b, j.times, cells, lo, hi)
						return nil
					}))
				}
				busy[w] += time.Since(t)
				j.wg.Done()
			}
		}(w, chans[w])
	}
	stop := func() {
		for _, ch := range chans {
			close(ch)
		}
		all.Wait()
		ingest.DropBlockBuffers() // the released blocks' arrays (a release may still be pending: it is then collected)
		for w := range busy {
			e.times.feedBusy += busy[w]
			e.times.cookBusy += cook[w]
		}
	}
	for {
		tw := time.Now()
		b, more := <-blocks
		e.times.idleWait += time.Since(tw)
		if !more {
			break
		}
		times := e.blockTimes(b)
		wg := &sync.WaitGroup{}
		wg.Add(workers)
		for _, ch := range chans {
			ch <- job{b, times, wg}
		}
		go func() { // once every worker has fed it, its arrays serve later blocks
			wg.Wait()
			if !failed.Set() {
				b.Release()
			}
		}()
		if b.LastOfFile {
			wg.Wait()
			if err := failed.Get(); err != nil {
				cancel()
				for range blocks {
				}
				stop()
				return err // no checkpoint of a state a panic left
			}
			for w := range tallies {
				pending.Add(tallies[w])
				clear(tallies[w])
			}
			e.cat.Settle(pending, seen, b.File, fromFile, c0, c1)
			if progress != nil {
				progress(0)
			}
			if err := ctx.Err(); err != nil {
				for range blocks { // the reader ends: wait for it
				}
				stop()
				return err
			}
			if fileDone != nil {
				tc := time.Now()
				err := fileDone(b.File + 1)
				e.times.fileDone += time.Since(tc)
				if err != nil {
					cancel()
					for range blocks {
					}
					stop()
					return err
				}
			}
		}
		if progress != nil {
			progress(b.NT)
		}
	}
	stop()
	if err := failed.Get(); err != nil {
		<-readErr
		return err
	}
	if err := <-readErr; err != nil {
		return err
	}
	return ctx.Err()
}
