package engine

import (
	"context"
	"errors"
	"log/slog"
	"os"
	"path/filepath"
	"sync"
	"time"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats/extremes"
)

// Options are the run's settings that are not part of the spec.
type Options struct {
	Restart  bool         // ignore checkpoints and start over
	Log      *slog.Logger // progress and warnings (nil: discard)
	Progress Progress     // progress display (nil: none)
	Version  string       // software version for the manifest
	// Shard, if set, restricts the run to one share of the cells and writes a
	// shard directory (final states, its cells' rows of every table and
	// shard.json); see Merge.
	Shard *Shard
	// Update continues the finished run in the output directory with the
	// input files that are new (later in time); see update.go.
	Update bool
	// Workers, if > 0, replaces the spec's run.workers (a run's or a
	// merge's: the command line's --workers).
	Workers int
	// MemoryLimit, if set, replaces the spec's run.memory_limit (a size such
	// as "512MiB"; the command line's --memory-limit). A merge without it
	// takes the default, as the shards do not record theirs.
	MemoryLimit string
	// LimitProcess applies the memory plan to this process: Go's soft
	// memory limit (runtime/debug.SetMemoryLimit) is set to the budget less
	// the chunk cache. The CLI sets it; a library caller that runs other
	// work in the same process may leave it off.
	LimitProcess bool
	// NoSpill makes a run of several passes read the input files in every
	// pass instead of spilling the later passes' values to scratch files
	// in its first (spill.go): for comparisons.
	NoSpill bool
}

// Result says what a run wrote.
type Result struct {
	OutDir   string
	Files    []string // written, relative to OutDir
	Cells    int
	Steps    int
	Warnings []string
	Wall     time.Duration
}

// IsResumeRefused reports whether err is a refused resume (exit code 2).
func IsResumeRefused(err error) bool {
	var r *resumeRefused
	return errors.As(err, &r)
}

// resolveSpec applies the options' execution settings (Workers,
// MemoryLimit) to a copy of spec and resolves it (runspec.Spec.Resolve):
// the one way in of these settings for a run and a merge alike.
func resolveSpec(spec *runspec.Spec, opt Options) (*runspec.Resolved, error) {
	s := *spec
	if opt.Workers != 0 {
		s.Run.Workers = opt.Workers
	}
	if opt.MemoryLimit != "" {
		s.Run.MemoryLimit = opt.MemoryLimit
	}
	return s.Resolve()
}

// Run runs the whole job through the stages of stages.go: validate, lock,
// restore, stream, fit, export.
func Run(ctx context.Context, spec *runspec.Spec, opt Options) (res *Result, err error) {
	j, err := validateRun(ctx, spec, opt)
	if err != nil {
		return nil, err
	}
	_, serr := os.Stat(j.out)
	created := errors.Is(serr, os.ErrNotExist)
	unlock, err := j.lock()
	if err != nil {
		return nil, err
	}
	defer func() {
		// A variable found without data while streaming is refused like
		// one the catalog refuses: an output directory this run created
		// is removed again (after the lock; only if empty).
		var nd *ingest.NoDataError
		if created && errors.As(err, &nd) {
			os.Remove(filepath.Join(j.out, lock.StateDir))
			os.Remove(j.out)
		}
	}()
	defer unlock()
	if opt.LimitProcess {
		j.mem.applyToProcess()
	}
	sums := startChecksums(ctx, j.cat)
	defer sums.stop()
	j.sums = sums
	trusted := 0
	if j.update != nil {
		// The earlier files must be unchanged: compare their checksums
		// before any state is read or written.
		s, err := sums.wait()
		if err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			return nil, fault.Input(err)
		}
		if why := inputContentChanges(j.update.prior, j.cat, s); why != "" {
			return nil, fault.Input(&updateRefused{j.out, why})
		}
		trusted = j.update.earlier
		j.log.Info("update", "earlier_files", j.update.earlier, "new_files", len(j.cat.Files)-j.update.earlier)
	}
	j.log.Info("run", "files", len(j.cat.Files), "steps", j.cat.Steps, "cells", j.cat.Grid.NCells(), "passes", len(j.passes), "workers", j.workers, "out", j.out)
	defer j.abortSink()
	if err := j.runPasses(ctx, j.restoreOwn(trusted), nil); err != nil {
		return nil, err
	}
	s, err := sums.wait()
	if err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		return nil, fault.Input(err)
	}
	if err := removeStaleCheckpoints(j.out, j.passes); err != nil {
		return nil, fault.Output(err)
	}
	if j.opt.Shard != nil {
		if err := j.openSink(); err != nil {
			return nil, err
		}
		files, _, err := j.sink.close()
		if err != nil {
			return nil, fault.Output(err)
		}
		if j.streamed {
			j.eng.addStreamTimings(j.timings)
		}
		return writeShard(j.out, j.spec, j.cat, *j.opt.Shard, j.lo, j.hi, j.passes, s, files, opt.Version, j.t0, j.timings)
	}
	return j.export(ctx, s)
}

type devNull struct{}

func (devNull) Write(p []byte) (int, error) { return len(p), nil }

// plan splits the cells lo..hi-1 into passes that fit the memory budget
// (planBudget, budget.go) and sets the fit chunk.
func (j *job) plan(lo, hi int) ([][2]int, error) {
	p, err := j.eng.planBudget(lo, hi)
	if err != nil {
		return nil, err
	}
	j.mem, j.fitChunk = p, p.fitChunk
	var out [][2]int
	for c := lo; c < hi; c += p.passCells {
		out = append(out, [2]int{c, min(hi, c+p.passCells)})
	}
	return out, nil
}

// finishAll computes the results of cells c0.. with a pool of workers,
// counting them on pr (started by the caller).
func (e *engine) finishAll(ctx context.Context, c0 int, cells []*cell, acfg extremes.AnalysisConfig, workers int, pr Progress) ([]*cellResult, error) {
	res := make([]*cellResult, len(cells))
	next := make(chan int, 64)
	var wg sync.WaitGroup
	var failed fault.First
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				if cells[i] != nil && !failed.Set() {
					failed.Record(fault.Catch(func() error {
						fault.Hook("fit")
						res[i] = e.finish(c0+i, cells[i], acfg)
						return nil
					}))
				}
				if pr != nil {
					pr.Add(1)
				}
			}
		}()
	}
	for i := range cells {
		if ctx.Err() != nil {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	if err := failed.Get(); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	out := res[:0]
	for _, r := range res {
		if r != nil {
			out = append(out, r)
		}
	}
	return out, nil
}

// Progress shows how far a stage is: a bar on a terminal, periodic log lines
// for schedulers.
type Progress interface {
	Start(stage string, total, done int64)
	Add(n int64)
	Done()
}
