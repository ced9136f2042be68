package engine

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"runtime"
	"sync"
	"sync/atomic"
	"time"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats/extremes"
)

// A run and a merge are the same sequence of small stages, each with one job:
//
//	validate  everything that can be refused is refused here, with no side
//	          effect (no directory created, no file written, no lock taken)
//	lock      the output directory: create it, take its lock, clear partials
//	restore   each pass's states: fresh, from the run's own checkpoint (resume,
//	          update) or from a shard directory (merge)
//	stream    the input files not yet in the states, checkpointing as it goes
//	fit       the per-cell results of a pass, written to the tables (a
//	          shard's to its share of them; a merge fits nothing)
//	export    tables, contours and manifest (or a shard's shard.json; a
//	          merge assembles the shards' tables first)
//
// Fresh, resume, update, shard and merge differ only in where the states come
// from (restore) and where they go (the pass's checkpoint, a merge's copy).

// job is a run or a merge after validation: everything is known and
// checked, nothing is written yet.
type job struct {
	spec    *runspec.Resolved
	opt     Options
	log     *slog.Logger
	cat     *ingest.Catalog
	eng     *engine
	ids     []inputID // the inputs as found now (path, size, mtime)
	out     string
	passes  [][2]int // cell ranges, in order
	lo, hi  int      // cells covered (a shard's share, or the grid)
	workers int
	acfg    extremes.AnalysisConfig
	update  *updatePlan // Options.Update: the run it continues
	// streamed says the job read input files (a merge only loads states).
	streamed bool
	// sums are the inputs' checksums (Run; nil in a merge, which trusts
	// the shards' verified inputs).
	sums *checksums
	// seen is, per pass, what its cells have read of each role variable
	// (restored with the pass's states, or counted while streaming).
	seen    map[int]ingest.Tally
	timings map[string]float64
	t0      time.Time
	// fitChunk is the number of cells fitted and written at a time (the
	// memory plan's); sink writes the tables as the chunks come.
	fitChunk int
	sink     *tableSink
	mem      *memPlan
}

func (j *job) mark(stage string, since time.Time) { j.timings[stage] += time.Since(since).Seconds() }

// openCatalog builds the catalog of the spec's inputs, with a NetCDF chunk
// cache sized from the memory budget.
func openCatalog(ctx context.Context, spec *runspec.Resolved) (*ingest.Catalog, error) {
	// A sixteenth of the memory budget per variable for NetCDF-4 chunks
	// (clamped to 16 MiB .. 512 MiB): enough for a month of a variable on a
	// large grid, so each chunk is decompressed once.
	if err := ingest.SetChunkCache(chunkCachePerVar(spec.Exec.MemoryBytes)); err != nil {
		return nil, err
	}
	hold(ctx, "catalog")
	opt := spec.IngestOptions()
	opt.Ctx = ctx
	cat, err := ingest.Open(spec.Input.Paths, opt)
	if err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		return nil, fault.Input(err)
	}
	return cat, nil
}

// newJob checks what the catalog and the spec say together and sets up the
// engine; it writes nothing.
func newJob(spec *runspec.Resolved, opt Options, cat *ingest.Catalog, t0 time.Time) (*job, error) {
	log := opt.Log
	if log == nil {
		log = slog.New(slog.NewTextHandler(devNull{}, nil))
	}
	if cat.DepthSource == "none" {
		return nil, fault.Input(fmt.Errorf("no water depth: the files hold no variable with standard_name sea_floor_depth_below_sea_surface; set depth.source in the spec (\"constant\", \"bathymetry\" or \"deep-water\"), or give --depth METRES or --deep-water"))
	}
	// A spectral density whose units admit two readings (per Hz or per
	// rad/s) is read only once the spec says which (inspect shows it).
	for i := range cat.Readings {
		if r := &cat.Readings[i]; r.Unsettled() {
			return nil, fault.Input(errors.New(r.Refusal()))
		}
	}
	ccfg, err := spec.ClimateConfig(cat)
	if err != nil {
		return nil, fault.Input(err)
	}
	eng, err := newEngine(cat, spec, ccfg)
	if err != nil {
		return nil, fault.Input(err)
	}
	if err := eng.checkContourColumns(); err != nil {
		return nil, fault.Input(err)
	}
	ids, err := inputIDs(cat)
	if err != nil {
		return nil, fault.Input(err)
	}
	workers := spec.Exec.Workers
	if workers == 0 {
		workers = runtime.NumCPU()
	}
	return &job{spec: spec, opt: opt, log: log, cat: cat, eng: eng, ids: ids, out: spec.Output.Dir,
		lo: 0, hi: cat.Grid.NCells(), workers: workers, acfg: spec.AnalysisConfigFor(cat),
		seen: map[int]ingest.Tally{}, timings: map[string]float64{}, t0: t0}, nil
}

// validateRun is the validate stage of Run.
func validateRun(ctx context.Context, given *runspec.Spec, opt Options) (*job, error) {
	t0 := time.Now()
	spec, err := resolveSpec(given, opt)
	if err != nil {
		return nil, fault.Input(err)
	}
	if err := spec.CheckRoles(); err != nil {
		return nil, fault.Input(err)
	}
	if opt.Update && opt.Restart {
		return nil, fault.Input(errors.New("--update and --restart exclude each other: an update continues the saved states, a restart discards them"))
	}
	ts := time.Now()
	cat, err := openCatalog(ctx, spec)
	if err != nil {
		return nil, err
	}
	j, err := newJob(spec, opt, cat, t0)
	if err != nil {
		return nil, err
	}
	j.mark("catalog_s", ts)
	if opt.Shard != nil {
		if j.lo, j.hi, err = opt.Shard.Cells(cat.Grid); err != nil {
			return nil, fault.Input(err)
		}
	}
	if opt.Shard == nil { // a shard builds no products
		if err := checkProductBudget(spec.Exec.MemoryBytes, spec.Exec.MemoryText, cat.Grid.NCells(), productsOf(spec)); err != nil {
			return nil, fault.Input(err)
		}
	}
	if j.passes, err = j.plan(j.lo, j.hi); err != nil {
		return nil, fault.Input(err)
	}
	if opt.Update {
		// Everything but the earlier files' contents (checked once their
		// checksums are known, before any state is read).
		up, err := checkUpdate(j.out, spec, cat, opt.Shard)
		if err != nil {
			return nil, fault.Input(err)
		}
		j.update, j.passes = up, up.passes
		if up.shard != nil {
			j.opt.Shard, j.lo, j.hi = up.shard, up.lo, up.hi
		}
	}
	return j, nil
}

// lock is the lock stage: it creates the output directory, takes its lock
// and removes the partial files of a killed run (which no live run owns).
func (j *job) lock() (func(), error) {
	if err := os.MkdirAll(j.out, 0o755); err != nil {
		return nil, fault.Output(fmt.Errorf("output directory %s: %w", j.out, err))
	}
	unlock, err := lock.Dir(j.out)
	if err != nil {
		return nil, err
	}
	// the folders the run makes at its end: a planted link is refused now,
	// before anything is computed (export.MakeDir checks again)
	if err := export.CheckOutputs(j.out, []string{export.ContourDir, contract.ReportDir}, runFiles()); err != nil {
		unlock()
		return nil, fault.Input(err)
	}
	removePartials(j.out)
	return unlock, nil
}

// restoreOwn is the restore stage of Run: the pass's states from the run
// directory's checkpoint (unless --restart), or fresh ones. The first
// trusted inputs were verified by content (an update).
func (j *job) restoreOwn(trusted int) func(pi int, p [2]int) ([]*cell, int, error) {
	return func(pi int, p [2]int) ([]*cell, int, error) {
		path := ckPath(j.out, p[0], p[1])
		if !j.opt.Restart {
			if _, err := os.Stat(path); err == nil {
				want := j.ckWant(p)
				if hd, _, f, err := readCkHeader(path); err == nil && j.sums != nil {
					// Resume compares the content of the files read so far.
					f.Close()
					if want.Inputs, err = j.sums.withSums(j.ids, hd.NextFile); err != nil {
						return nil, 0, fault.Input(err)
					}
				}
				cells, h, err := loadState(path, want, trusted, j.eng.newCell)
				if err != nil {
					if IsResumeRefused(err) {
						return nil, 0, fault.Input(err)
					}
					return nil, 0, err
				}
				j.seen[pi] = ingest.TallyOf(h.Seen)
				j.log.Info("resuming", "pass", pi+1, "from_file", h.NextFile, "of", len(j.cat.Files))
				return cells, h.NextFile, nil
			}
		}
		j.seen[pi] = ingest.Tally{}
		cells := make([]*cell, p[1]-p[0])
		for i := range cells {
			if !j.cat.Masked[p[0]+i] {
				cells[i] = j.eng.newCell(p[0] + i)
			}
		}
		return cells, 0, nil
	}
}

// ckWant is the checkpoint header of pass p under this job.
func (j *job) ckWant(p [2]int) ckHeader {
	return ckHeader{Fingerprint: j.spec.Fingerprint(), Spec: j.spec.FingerprintJSON(), Inputs: j.ids, C0: p[0], C1: p[1], spec: j.spec}
}

// stream is the stream stage of one pass: it feeds the files from..end to
// the states, saving them to the pass's checkpoint after files (at most one
// per run.checkpoint_every_s) and always after the last.
func (j *job) stream(ctx context.Context, pi int, p [2]int, cells []*cell, from int) error {
	nf := len(j.cat.Files)
	if j.opt.Progress != nil {
		j.opt.Progress.Start(fmt.Sprintf("read pass %d/%d", pi+1, len(j.passes)), int64(j.cat.Steps), int64(j.cat.Files[min(from, nf-1)].Offset))
		defer j.opt.Progress.Done()
	}
	if from >= nf {
		return nil
	}
	j.streamed = true
	path, want := ckPath(j.out, p[0], p[1]), j.ckWant(p)
	_, serr := os.Stat(path)
	fresh := errors.Is(serr, os.ErrNotExist)
	if j.seen[pi] == nil {
		j.seen[pi] = ingest.Tally{}
	}
	lastCk := time.Now()
	every := time.Duration(j.spec.Exec.CheckpointEveryS * float64(time.Second))
	err := j.eng.streamPass(ctx, p[0], p[1], from, j.workers, cells, j.seen[pi], func(next int) error {
		if err := j.eng.checkSea(); err != nil {
			return err // a density read other than it is stored: before its states are saved
		}
		if err := j.checkData(); err != nil {
			return err // before the states that read it are saved
		}
		if next < nf && every > 0 && time.Since(lastCk) < every {
			return nil
		}
		defer func() { lastCk = time.Now() }()
		h := want
		h.NextFile = next
		h.Seen = j.seen[pi].Entries()
		if j.sums != nil {
			var err error
			if h.Inputs, err = j.sums.withSums(j.ids, next); err != nil {
				return err
			}
		}
		if err := saveCheckpoint(path, h, cells); err != nil {
			return fault.Output(fmt.Errorf("checkpoint %s: %w", path, err))
		}
		hold(ctx, "stream")
		return nil
	}, func(steps int) {
		if j.opt.Progress != nil {
			j.opt.Progress.Add(int64(steps))
		}
	})
	if err != nil {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		if fault.IsOutput(err) {
			return err
		}
		var nd *ingest.NoDataError
		if errors.As(err, &nd) && fresh {
			// A refused input leaves the output directory as it was: no
			// states of this run (saved before the refused file) stay.
			os.Remove(path)
		}
		return fault.Input(err)
	}
	return nil
}

// checkData refuses a role variable of an input that holds no value (or
// none possible) in any cell, once every pass has counted it (Catalog.CheckTally
// over the passes' tallies).
func (j *job) checkData() error {
	all := ingest.Tally{}
	for _, t := range j.seen {
		all.Add(t)
	}
	return j.cat.CheckTally(all)
}

// runPasses runs restore, stream and fit for every pass. restore gives a
// pass's states and the first file they lack; saved, if set, is called once
// a pass is done. Each pass's results go to the tables as they are fitted
// (fitPass; a shard's to its share of the tables), so that the run holds
// the results of one chunk of cells, never those of every pass.
func (j *job) runPasses(ctx context.Context, restore func(pi int, p [2]int) ([]*cell, int, error), saved func(pi int, p [2]int) error) error {
	var spill *spillSet
	defer func() { spill.close() }()
	for pi, p := range j.passes {
		ts := time.Now()
		cells, from, err := restore(pi, p)
		if err != nil {
			return err
		}
		j.eng.spillTo, j.eng.spillFrom = nil, nil
		if pi == 0 && from == 0 && len(j.passes) > 1 && !j.opt.NoSpill && j.spillHelps() {
			// later passes that start afresh take their values from a
			// scratch spill the first pass writes (spill.go)
			var later []int
			for k := 1; k < len(j.passes); k++ {
				if _, err := os.Stat(ckPath(j.out, j.passes[k][0], j.passes[k][1])); j.opt.Restart || err != nil {
					later = append(later, k)
				}
			}
			if spill = j.openSpill(later); spill != nil {
				j.eng.spillTo = spill.to(j.passes)
			}
		} else if r := spill.from(pi); r != nil && from == 0 {
			j.eng.spillFrom = r
			spillPasses.Add(1)
		}
		err = j.stream(ctx, pi, p, cells, from)
		j.eng.spillTo, j.eng.spillFrom = nil, nil
		if pi > 0 {
			spill.done(pi)
		}
		if err != nil {
			return err
		}
		j.mark("stream_s", ts)
		if err := j.fitPass(ctx, p[0], len(cells), func(off, n int) ([]*cell, error) { return cells[off : off+n], nil }); err != nil {
			return err
		}
		cells = nil
		if saved != nil {
			if err := saved(pi, p); err != nil {
				return err
			}
		}
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	// Passes read in other processes (resumed, shards merged) are counted
	// from their states' headers: refuse before any table is put in place.
	if err := j.checkData(); err != nil {
		return fault.Input(err)
	}
	return nil
}

// fitPass is the fit stage of the n cells from c0: it fits them in chunks
// of at most j.fitChunk cells, which next gives (off, count), and writes
// each chunk's results to the tables before the next chunk, forgetting the
// chunk's states.
func (j *job) fitPass(ctx context.Context, c0, n int, next func(off, k int) ([]*cell, error)) error {
	hold(ctx, "fit")
	ts := time.Now()
	defer j.mark("fit_s", ts)
	if err := j.openSink(); err != nil {
		return err
	}
	if pr := j.opt.Progress; pr != nil {
		pr.Start("fit extremes", int64(n), 0)
		defer pr.Done()
	}
	chunk := max(1, j.fitChunk)
	for off := 0; off < n; off += chunk {
		k := min(chunk, n-off)
		cells, err := next(off, k)
		if err != nil {
			return err
		}
		fitCalls.Add(1)
		res, err := j.eng.finishAll(ctx, c0+off, cells, j.acfg, j.workers, j.opt.Progress)
		if err != nil {
			return err
		}
		clear(cells) // the states of the chunk are done with
		te := time.Now()
		if err := j.sink.add(c0+off, c0+off+k, res); err != nil {
			return fault.Output(err)
		}
		j.mark("export_s", te)
	}
	return nil
}

// fitCalls counts the fit stage's chunks since the process started: a test
// hook (a merge must fit nothing).
var fitCalls atomic.Int64

// openSink starts the job's tables (once): the grid's, or a shard's share.
func (j *job) openSink() error {
	if j.sink != nil {
		return nil
	}
	s, err := j.eng.openSink(j.out, j.workers, j.lo, j.hi, j.opt.Shard != nil)
	if err != nil {
		return fault.Output(err)
	}
	j.sink = s
	return nil
}

// export is the export stage: it puts the tables in place, writes the
// contours and then the manifest, each file atomically.
func (j *job) export(ctx context.Context, sums []string) (*Result, error) {
	ts := time.Now()
	hold(ctx, "export")
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := j.openSink(); err != nil { // no cells at all
		return nil, err
	}
	written, warns, err := j.sink.close()
	if err != nil {
		return nil, fault.Output(err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err // interrupted: the manifest, written last, stays the old one
	}
	j.mark("export_s", ts)
	if j.streamed {
		j.eng.addStreamTimings(j.timings)
	}
	m := j.eng.manifest(j.opt.Version, sums, warns, j.timings)
	if err := j.eng.finishManifest(j.out, m, &written, &warns); err != nil {
		return nil, fault.Output(err)
	}
	if err := export.WriteRunManifest(j.out, m); err != nil {
		return nil, fault.Output(err)
	}
	written = append(written, "manifest.json")
	removePartials(j.out) // leftovers of a killed run that appeared since the start (none of ours: under the lock)
	return &Result{OutDir: j.out, Files: written, Cells: j.cat.Grid.NCells(), Steps: j.cat.Steps,
		Warnings: append(j.cat.Warnings, warns...), Wall: time.Since(j.t0)}, nil
}

// testHold names a stage (catalog, stream, fit, export) at which a run
// waits for its context to be cancelled, up to a minute: a hook for the
// tests that signal the built binary in each stage (environment variable
// SWELLGRID_TEST_HOLD). Unset in normal use.
var testHold = os.Getenv("SWELLGRID_TEST_HOLD")

// hold waits at stage while testHold names it, saying so on stderr once.
func hold(ctx context.Context, stage string) {
	if testHold != stage {
		return
	}
	holdOnce.Do(func() {
		fmt.Fprintf(os.Stderr, "swellgrid: test hold in stage %s\n", stage)
		select {
		case <-ctx.Done():
		case <-time.After(time.Minute):
		}
	})
}

var holdOnce sync.Once

// checksums computes the SHA-256 of the input files in a goroutine of its
// own, as plain files beside the NetCDF reader, in order. Each is of the
// bytes the run reads: ingest.Catalog.HashFile checks the file's stamp
// (size, mtime, ctime, inode) against the catalog's around the hash, as the
// reader does around its reads. stop cancels it and waits for it; every path
// out of a run calls it.
type checksums struct {
	sums   []string
	ready  []chan struct{} // ready[i] is closed once sums[i] is set
	err    error
	done   chan struct{}
	cancel context.CancelFunc
	once   sync.Once
}

func startChecksums(ctx context.Context, cat *ingest.Catalog) *checksums {
	ctx, cancel := context.WithCancel(ctx)
	c := &checksums{sums: make([]string, len(cat.Files)), ready: make([]chan struct{}, len(cat.Files)), done: make(chan struct{}), cancel: cancel}
	for i := range c.ready {
		c.ready[i] = make(chan struct{})
	}
	go func() {
		defer close(c.done)
		c.err = fault.Catch(func() error {
			for i := range cat.Files {
				s, err := cat.HashFile(ctx, i)
				if err != nil {
					return err
				}
				c.sums[i] = s
				close(c.ready[i])
			}
			return nil
		})
	}()
	return c
}

// wait returns the checksums once all are known.
func (c *checksums) wait() ([]string, error) {
	<-c.done
	if c.err != nil {
		return nil, c.err
	}
	return c.sums, nil
}

// upTo waits until the first n checksums are known.
func (c *checksums) upTo(n int) error {
	if n <= 0 {
		return nil
	}
	select {
	case <-c.ready[n-1]:
		return nil
	case <-c.done:
		return c.err
	}
}

// withSums is ids with the checksums of the first n files: a checkpoint
// records the content of the files it has read, and resume compares it.
func (c *checksums) withSums(ids []inputID, n int) ([]inputID, error) {
	n = min(n, len(ids))
	if err := c.upTo(n); err != nil {
		return nil, err
	}
	out := append([]inputID(nil), ids...)
	for i := 0; i < n; i++ {
		out[i].SHA256 = c.sums[i]
	}
	return out, nil
}

// stop cancels the checksums and waits for the goroutine to end.
func (c *checksums) stop() {
	c.once.Do(c.cancel)
	<-c.done
}

// runFiles are the fixed names a run writes in its directory, checked for
// planted links before anything is computed (export.CheckOutputs).
func runFiles() []string {
	fs := []string{contract.ManifestFile, contract.ManifestSeal, shardFile, shardSeal, contract.CellsFile, contract.AtlasNCFile, contract.AtlasGPKGFile,
		contract.ScreeningFile, contract.ParquetFile(contract.TableScreening), contract.ParquetFile(contract.TableMeshNodes), contract.ParquetFile(contract.TableMeshFaces)}
	for _, n := range runspec.LongTableNames {
		fs = append(fs, contract.ParquetFile(n))
	}
	return fs
}
