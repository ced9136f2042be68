package pipelines

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"sync"
	"time"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
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
	// MemoryLimit, if set, is the memory budget of Merge (a size such as
	// "512MiB"; a run takes run.memory_limit from the spec, a merge
	// otherwise the default, as the shards do not record theirs).
	MemoryLimit string
	// LimitProcess applies the memory plan to this process: Go's soft
	// memory limit (runtime/debug.SetMemoryLimit) is set to the budget less
	// the chunk cache. The CLI sets it; a library caller that runs other
	// work in the same process may leave it off.
	LimitProcess bool
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

// ingestOptions maps the spec to the reader's options.
func (s *Spec) ingestOptions() ingest.Options {
	opt := ingest.Options{Vars: map[ingest.Role]string{}, Units: map[ingest.Role]string{}, AllowLongGaps: s.Input.AllowLongGaps,
		Duplicates: ingest.DuplicatePolicy(s.Input.DuplicateSteps)}
	for k, v := range s.Roles {
		opt.Vars[ingest.Role(k)] = v
	}
	opt.Encoding, opt.Basis = map[ingest.Role]ingest.Encoding{}, map[ingest.Role]ingest.DensityBasis{}
	for k, v := range s.Units {
		switch role, kind := unitsKey(k); kind {
		case "encoding":
			opt.Encoding[role], _ = ingest.ParseEncoding(v) // checked by checkRoles
		case "basis":
			opt.Basis[role], _ = ingest.ParseDensityBasis(v)
		default:
			opt.Units[role] = v
		}
	}
	switch s.Depth.Source {
	case "deep-water":
		opt.DeepWater = true
	case "constant":
		opt.DepthConstant = s.Depth.ConstantM
	case "bathymetry":
		opt.BathymetryFile = s.Depth.BathymetryFile
	}
	opt.DirConvention, _ = ingest.ParseDirConvention(s.Input.DirectionConvention) // checked by Validate
	opt.DirForce = s.Input.DirectionConventionForce
	return opt
}

// unitsKey splits a key of the spec's [units] table into its role and
// kind: "" for the units of a role ("spectrum2d"), "encoding" or "basis"
// for a spectral density's statements ("spectrum2d_encoding",
// "spectrum2d_basis").
func unitsKey(k string) (ingest.Role, string) {
	for _, kind := range []string{"encoding", "basis"} {
		if r, ok := strings.CutSuffix(k, "_"+kind); ok && (ingest.Role(r) == ingest.Spectrum2D || ingest.Role(r) == ingest.Spectrum1D) {
			return ingest.Role(r), kind
		}
	}
	return ingest.Role(k), ""
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
	for _, k := range keys(s.Units) {
		role, kind := unitsKey(k)
		switch kind {
		case "encoding":
			if _, err := ingest.ParseEncoding(s.Units[k]); err != nil {
				return fmt.Errorf("spec: units.%s: %v", k, err)
			}
			continue
		case "basis":
			if _, err := ingest.ParseDensityBasis(s.Units[k]); err != nil {
				return fmt.Errorf("spec: units.%s: %v", k, err)
			}
			continue
		}
		if _, ok := s.Roles[k]; !ok {
			found := false
			for _, r := range ingest.Roles {
				found = found || r == role
			}
			if !found {
				return fmt.Errorf("spec: units.%s: unknown role; roles are %v, and spectrum2d_encoding, spectrum2d_basis (spectrum1d_...) state how a spectral density is stored", k, ingest.Roles)
			}
		}
	}
	return nil
}

// climateConfig maps the spec to the per-cell state's configuration.
func (s *Spec) climateConfig(cat *ingest.Catalog) (*climate.Config, error) {
	cal := cat.Calendar
	c := climate.DefaultConfig()
	c.Calendar = string(cal)
	c.Hm0HistResM = s.Statistics.Hm0BinM
	c.Percentiles = append([]float64(nil), s.Statistics.Percentiles...)
	// The POT threshold rule (extremes.POTThreshold) and the
	// threshold-diagnostics ladder need those percentiles of Hm0 (not
	// written as columns unless asked).
	var need []float64
	for _, q := range s.analysisConfig().Hm0Quantiles() {
		need = append(need, 100*q)
	}
	for _, q := range extremes.LadderQuantiles {
		need = append(need, 100*q)
	}
	for _, q := range need {
		q = math.Round(q*1e9) / 1e9 // 100 * 0.995 is not exactly 99.5 in binary
		if !slices.Contains(c.Percentiles, q) {
			c.Percentiles = append(c.Percentiles, q)
		}
	}
	sort.Float64s(c.Percentiles)
	c.ScatterHm0StepM, c.ScatterTeStepS = s.Statistics.ScatterHm0BinM, s.Statistics.ScatterTeBinS
	c.WindowLimitsM = append([]float64(nil), s.Statistics.WindowLimitsM...)
	c.WindowDurationsH = append([]float64(nil), s.Statistics.WindowDurationsH...)
	c.CoverageMin = s.Statistics.CoverageMin
	c.DirectionSectors = s.Statistics.DirectionSectors
	for i, d := range s.Devices {
		// The bytes Validate read (bounded) and fingerprinted.
		b, ok := s.namedData(fmt.Sprintf("device[%d].power_matrix", i))
		if !ok {
			return nil, fmt.Errorf("device %s: power matrix %s: not read; validate the spec first", d.Name, d.PowerMatrix)
		}
		dev, err := climate.ReadPowerMatrixCSV(bytes.NewReader(b), d.Name)
		if err != nil {
			return nil, fmt.Errorf("device %s: power matrix %s: %w", d.Name, d.PowerMatrix, err)
		}
		if d.Lookup == "bilinear" {
			dev.Lookup = climate.Bilinear
		}
		if err := s.devicePeriod(dev, d, cat); err != nil {
			return nil, err
		}
		dev.Rated = d.RatedKW
		c.Devices = append(c.Devices, dev)
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	return c, nil
}

// analysisConfig maps the spec's extremes section to extremes.AnalysisConfig;
// the threshold rule itself is extremes.POTThreshold (a cell's Hm0 quantile
// is supplied per cell in engine.finish).
func (s *Spec) analysisConfig() extremes.AnalysisConfig {
	rule := extremes.ThresholdPeaksPerYear
	if s.Extremes.ThresholdRule == "quantile" {
		rule = extremes.ThresholdQuantile
	}
	a := extremes.AnalysisConfig{ReturnPeriods: s.Extremes.ReturnPeriodsY, MinYears: s.Extremes.MinYears,
		Threshold: rule, TargetPeaksPerYear: s.Extremes.PeaksPerYear, ThresholdQuantile: s.Extremes.ThresholdQuantile,
		MinPeaks: s.Extremes.MinPeaks, ShapeMin: s.Extremes.ShapeRange[0], ShapeMax: s.Extremes.ShapeRange[1],
		MaxExtrapolation: s.Extremes.MaxExtrapolation, BreakingRatio: s.Extremes.BreakingRatio}
	if s.Extremes.Bootstrap > 0 {
		a.Bootstrap = extremes.Bootstrap{N: s.Extremes.Bootstrap, Seed: uint64(s.Extremes.Seed)}
	}
	return a
}

// analysisConfigFor is analysisConfig with the lengths of the analysis
// years in the catalog's calendar (a full year for the GEV's complete years
// and the peak rate's record length).
func (s *Spec) analysisConfigFor(cat *ingest.Catalog) extremes.AnalysisConfig {
	a := s.analysisConfig()
	a.YearHours = yearHours(cat.Calendar, s.Extremes.YearStartMonth)
	return a
}

// yearHours gives the hours of the analysis year y, from the first of month
// m0 of y to the first of month m0 of y+1, in calendar cal.
func yearHours(cal ingest.Calendar, m0 int) func(int) float64 {
	if m0 < 1 || m0 > 12 {
		m0 = 1
	}
	return func(y int) float64 {
		a := ingest.StampOf(cal, ingest.Date{Year: y, Month: m0, Day: 1})
		b := ingest.StampOf(cal, ingest.Date{Year: y + 1, Month: m0, Day: 1})
		return float64(b-a) / 3600
	}
}

// Run runs the whole job through the stages of stages.go: validate, lock,
// restore, stream, fit, export.
func Run(ctx context.Context, spec *Spec, opt Options) (res *Result, err error) {
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
			os.Remove(filepath.Join(j.out, stateDir))
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
		return writeShard(j.out, spec, j.cat, *j.opt.Shard, j.lo, j.hi, j.passes, s, opt.Version, j.t0)
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
