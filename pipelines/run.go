package pipelines

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"sync"
	"time"

	"swellgrid/export"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/stats/climate"
	"swellgrid/stats/extremes"
)

// Options are the run's settings that are not part of the spec.
type Options struct {
	Restart  bool         // ignore checkpoints and start over
	Log      *slog.Logger // progress and warnings (nil: discard)
	Progress Progress     // progress display (nil: none)
	Version  string       // software version for the manifest
	// Shard, if set, restricts the run to one share of the cells and writes a
	// shard directory (final states and shard.json) instead of tables; see
	// Merge.
	Shard *Shard
	// Update continues the finished run in the output directory with the
	// input files that are new (later in time); see update.go.
	Update bool
	// Workers, if > 0, is the number of fit workers of Merge (a run takes
	// run.workers from the spec).
	Workers int
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

// InputError marks bad input or a bad spec (exit code 2).
type InputError struct{ Err error }

func (e *InputError) Error() string { return e.Err.Error() }
func (e *InputError) Unwrap() error { return e.Err }

// IsOutputError reports whether err concerns the output directory (locked,
// not writable; exit code 4).
func IsOutputError(err error) bool {
	var o *outputErr
	return errors.As(err, &o)
}

// IsResumeRefused reports whether err is a refused resume (exit code 2).
func IsResumeRefused(err error) bool {
	var r *resumeRefused
	return errors.As(err, &r)
}

// ingestOptions maps the spec to the reader's options.
func (s *Spec) ingestOptions() ingest.Options {
	opt := ingest.Options{Vars: map[ingest.Role]string{}, Units: map[ingest.Role]string{}, AllowLongGaps: s.Input.AllowLongGaps}
	for k, v := range s.Roles {
		opt.Vars[ingest.Role(k)] = v
	}
	for k, v := range s.Units {
		opt.Units[ingest.Role(k)] = v
	}
	switch s.Depth.Source {
	case "deep-water":
		opt.DeepWater = true
	case "constant":
		opt.DepthConstant = s.Depth.ConstantM
	case "bathymetry":
		opt.BathymetryFile = s.Depth.BathymetryFile
	}
	switch s.Input.DirectionConvention {
	case "to":
		t := true
		opt.DirectionTo = &t
	case "from":
		f := false
		opt.DirectionTo = &f
	}
	return opt
}

func (s *Spec) checkRoles() error {
	for k := range s.Roles {
		ok := false
		for _, r := range append(ingest.Roles, ingest.Mask) {
			if string(r) == k {
				ok = true
			}
		}
		if !ok {
			return fmt.Errorf("spec: roles.%s: unknown role; roles are %v", k, ingest.Roles)
		}
	}
	for k := range s.Units {
		if _, ok := s.Roles[k]; !ok {
			found := false
			for _, r := range ingest.Roles {
				found = found || string(r) == k
			}
			if !found {
				return fmt.Errorf("spec: units.%s: unknown role; roles are %v", k, ingest.Roles)
			}
		}
	}
	return nil
}

// climateConfig maps the spec to the per-cell state's configuration.
func (s *Spec) climateConfig(cal ingest.Calendar) (*climate.Config, error) {
	c := climate.DefaultConfig()
	c.Calendar = string(cal)
	c.Hm0HistResM = s.Statistics.Hm0BinM
	c.Percentiles = append([]float64(nil), s.Statistics.Percentiles...)
	if s.Extremes.ThresholdRule == "quantile" {
		q := 100 * s.Extremes.ThresholdQuantile
		have := false
		for _, p := range c.Percentiles {
			have = have || p == q
		}
		if !have {
			c.Percentiles = append(c.Percentiles, q)
			sort.Float64s(c.Percentiles)
		}
	}
	c.ScatterHm0StepM, c.ScatterTeStepS = s.Statistics.ScatterHm0BinM, s.Statistics.ScatterTeBinS
	c.WindowLimitsM = append([]float64(nil), s.Statistics.WindowLimitsM...)
	c.WindowDurationsH = append([]float64(nil), s.Statistics.WindowDurationsH...)
	c.CoverageMin = s.Statistics.CoverageMin
	for _, d := range s.Devices {
		f, err := os.Open(d.PowerMatrix)
		if err != nil {
			return nil, fmt.Errorf("device %s: %v", d.Name, err)
		}
		dev, err := climate.ReadPowerMatrixCSV(f, d.Name)
		f.Close()
		if err != nil {
			return nil, fmt.Errorf("device %s: power matrix %s: %v", d.Name, d.PowerMatrix, err)
		}
		if d.Lookup == "bilinear" {
			dev.Lookup = climate.Bilinear
		}
		c.Devices = append(c.Devices, dev)
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	return c, nil
}

func (s *Spec) analysisConfig(years float64) extremes.AnalysisConfig {
	a := extremes.AnalysisConfig{ReturnPeriods: s.Extremes.ReturnPeriodsY, MinYears: s.Extremes.MinYears,
		Threshold: extremes.ThresholdPeaksPerYear, TargetPeaksPerYear: s.Extremes.PeaksPerYear}
	if s.Extremes.Bootstrap > 0 {
		a.Bootstrap = extremes.Bootstrap{N: s.Extremes.Bootstrap, Seed: s.Extremes.Seed}
	}
	return a
}

// Run runs the whole job: catalog, stream, fits, export.
func Run(ctx context.Context, spec *Spec, opt Options) (*Result, error) {
	t0 := time.Now()
	log := opt.Log
	if log == nil {
		log = slog.New(slog.NewTextHandler(devNull{}, nil))
	}
	if err := spec.Validate(); err != nil {
		return nil, &InputError{err}
	}
	if err := spec.checkRoles(); err != nil {
		return nil, &InputError{err}
	}
	timings := map[string]float64{}
	mark := func(stage string, since time.Time) { timings[stage] += time.Since(since).Seconds() }

	ts := time.Now()
	// A sixteenth of the memory budget per variable for NetCDF-4 chunks
	// (clamped to 16 MiB .. 512 MiB): enough for a month of a variable on a
	// large grid, so each chunk is decompressed once.
	limit, _ := ParseSize(spec.Run.MemoryLimit)
	if err := ingest.SetChunkCache(min(max(limit/16, 16<<20), 512<<20)); err != nil {
		return nil, err
	}
	cat, err := ingest.Open(spec.Input.Paths, spec.ingestOptions())
	if err != nil {
		return nil, &InputError{err}
	}
	mark("catalog_s", ts)
	if cat.DepthSource == "none" {
		return nil, &InputError{fmt.Errorf("no water depth: the files hold no variable with standard_name sea_floor_depth_below_sea_surface; set depth.source in the spec (\"constant\", \"bathymetry\" or \"deep-water\"), or give --depth METRES or --deep-water")}
	}
	ccfg, err := spec.climateConfig(cat.Calendar)
	if err != nil {
		return nil, &InputError{err}
	}
	eng, err := newEngine(cat, spec, ccfg)
	if err != nil {
		return nil, &InputError{err}
	}
	if err := eng.checkContourColumns(); err != nil {
		return nil, &InputError{err}
	}
	out := spec.Output.Dir
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, &outputErr{fmt.Errorf("output directory %s: %v", out, err)}
	}
	unlock, err := lockDir(out)
	if err != nil {
		return nil, err
	}
	defer unlock()
	removePartials(out)
	ids, err := inputIDs(cat)
	if err != nil {
		return nil, &InputError{err}
	}
	// Checksums of the inputs, read as plain files beside the NetCDF reader.
	sums := make([]string, len(cat.Files))
	var sumWG sync.WaitGroup
	var sumErr error
	sumWG.Add(1)
	go func() {
		defer sumWG.Done()
		for i, f := range cat.Files {
			if ctx.Err() != nil {
				return
			}
			s, err := export.SHA256File(f.Path)
			if err != nil {
				sumErr = err
				return
			}
			sums[i] = s
		}
	}()
	workers := spec.Run.Workers
	if workers == 0 {
		workers = runtime.NumCPU()
	}
	if opt.Update && opt.Restart {
		return nil, &InputError{errors.New("--update and --restart exclude each other: an update continues the saved states, a restart discards them")}
	}
	lo, hi := 0, cat.Grid.NCells()
	if opt.Shard != nil {
		if lo, hi, err = opt.Shard.Cells(cat.Grid); err != nil {
			return nil, &InputError{err}
		}
	}
	passes, err := eng.plan(lo, hi)
	if err != nil {
		return nil, &InputError{err}
	}
	trusted := 0
	if opt.Update {
		// The earlier files must be unchanged: compare their checksums before
		// anything is read or written.
		sumWG.Wait()
		if sumErr != nil {
			return nil, &InputError{sumErr}
		}
		up, err := checkUpdate(out, spec, cat, sums, opt.Shard)
		if err != nil {
			return nil, &InputError{err}
		}
		passes, trusted = up.passes, up.earlier
		if up.shard != nil {
			opt.Shard, lo, hi = up.shard, up.lo, up.hi
		}
		log.Info("update", "earlier_files", up.earlier, "new_files", len(cat.Files)-up.earlier)
	}
	log.Info("run", "files", len(cat.Files), "steps", cat.Steps, "cells", cat.Grid.NCells(), "passes", len(passes), "workers", workers, "out", out)
	var results []*cellResult
	acfg := spec.analysisConfig(0)
	for pi, p := range passes {
		ts = time.Now()
		path := ckPath(out, p[0], p[1])
		want := ckHeader{Fingerprint: spec.Fingerprint(), Inputs: ids, C0: p[0], C1: p[1]}
		var cells []*cell
		from := 0
		if !opt.Restart {
			if _, err := os.Stat(path); err == nil {
				cells, from, err = loadCheckpointTrusting(path, want, trusted, eng.newCell)
				if err != nil {
					if IsResumeRefused(err) {
						return nil, &InputError{err}
					}
					return nil, err
				}
				log.Info("resuming", "pass", pi+1, "from_file", from, "of", len(cat.Files))
			}
		}
		if cells == nil {
			cells = make([]*cell, p[1]-p[0])
			for i := range cells {
				if !cat.Masked[p[0]+i] {
					cells[i] = eng.newCell(p[0] + i)
				}
			}
		}
		if opt.Progress != nil {
			opt.Progress.Start(fmt.Sprintf("read pass %d/%d", pi+1, len(passes)), int64(cat.Steps), int64(cat.Files[min(from, len(cat.Files)-1)].Offset))
		}
		if from < len(cat.Files) {
			lastCk := time.Now()
			every := time.Duration(spec.Run.CheckpointEveryS * float64(time.Second))
			err = eng.streamPass(ctx, p[0], p[1], from, workers, cells, func(next int) error {
				// The final state is always saved (resume, update, merge); in
				// between, at most one checkpoint per run.checkpoint_every_s.
				if next < len(cat.Files) && every > 0 && time.Since(lastCk) < every {
					return nil
				}
				defer func() { lastCk = time.Now() }()
				h := want
				h.NextFile = next
				if err := saveCheckpoint(path, h, cells); err != nil {
					return &outputErr{fmt.Errorf("checkpoint %s: %v", path, err)}
				}
				return nil
			}, func(steps int) {
				if opt.Progress != nil {
					opt.Progress.Add(int64(steps))
				}
			})
			if err != nil {
				if opt.Progress != nil {
					opt.Progress.Done()
				}
				if ctx.Err() != nil {
					return nil, ctx.Err()
				}
				var ie *outputErr
				if errors.As(err, &ie) {
					return nil, err
				}
				return nil, &InputError{err}
			}
		}
		if opt.Progress != nil {
			opt.Progress.Done()
		}
		mark("stream_s", ts)
		if opt.Shard != nil {
			continue // a shard keeps its final states; Merge fits them
		}
		ts = time.Now()
		res, err := eng.finishAll(ctx, p[0], cells, acfg, workers, opt.Progress)
		if err != nil {
			return nil, err
		}
		results = append(results, res...)
		mark("fit_s", ts)
	}
	sumWG.Wait()
	if sumErr != nil {
		return nil, &InputError{sumErr}
	}
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	if err := removeStaleCheckpoints(out, passes); err != nil {
		return nil, &outputErr{err}
	}
	if opt.Shard != nil {
		return writeShard(out, spec, cat, *opt.Shard, lo, hi, passes, sums, opt.Version, t0)
	}
	ts = time.Now()
	written, warns, err := eng.writeOutputs(out, results)
	if err != nil {
		return nil, &outputErr{err}
	}
	mark("export_s", ts)
	eng.addStreamTimings(timings)
	m := eng.manifest(opt.Version, sums, warns, timings)
	if err := export.WriteManifest(filepath.Join(out, "manifest.json"), m); err != nil {
		return nil, &outputErr{err}
	}
	written = append(written, "manifest.json")
	return &Result{OutDir: out, Files: written, Cells: cat.Grid.NCells(), Steps: cat.Steps, Warnings: append(cat.Warnings, warns...), Wall: time.Since(t0)}, nil
}

type devNull struct{}

func (devNull) Write(p []byte) (int, error) { return len(p), nil }

// plan splits the cells lo..hi-1 into passes that fit the memory budget. The estimate
// per cell is the encoded size of a state after the record's years plus the
// read buffers of a block.
func (e *engine) plan(lo, hi int) ([][2]int, error) {
	limit, _ := ParseSize(e.spec.Run.MemoryLimit)
	years := math.Max(1, float64(e.cat.Steps)*e.dtHours/8766)
	probe := climate.NewCellState(e.ccfg)
	b, _ := probe.MarshalBinary()
	perCell := float64(len(b))*2 + years*(12*64+50*48+256) + 512
	if e.spectral {
		perCell += float64(e.layout.Len()) * 8 * float64(e.spec.Run.BlockSteps) * 2
	} else {
		perCell += 6 * 8 * float64(e.spec.Run.BlockSteps) * 2
	}
	budget := float64(limit) * 0.6
	per := int(budget / perCell)
	if per < 1 {
		return nil, fmt.Errorf("run.memory_limit %s is too small for one cell (about %.0f bytes per cell)", e.spec.Run.MemoryLimit, perCell)
	}
	if e.cat.Grid.Kind != grid.Points && per >= e.cat.Grid.NX {
		per = per / e.cat.Grid.NX * e.cat.Grid.NX // whole rows read best
	}
	var out [][2]int
	for c := lo; c < hi; c += per {
		out = append(out, [2]int{c, min(hi, c+per)})
	}
	return out, nil
}

// finishAll computes the results of a pass's cells with a pool of workers.
func (e *engine) finishAll(ctx context.Context, c0 int, cells []*cell, acfg extremes.AnalysisConfig, workers int, pr Progress) ([]*cellResult, error) {
	res := make([]*cellResult, len(cells))
	next := make(chan int, 64)
	var wg sync.WaitGroup
	if pr != nil {
		pr.Start("fit extremes", int64(len(cells)), 0)
		defer pr.Done()
	}
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				if cells[i] != nil {
					res[i] = e.finish(c0+i, cells[i], acfg)
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
