package engine

import (
	"context"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"swellgrid/ingest"
	"swellgrid/pipelines/runspec"
)

// benchFeed reads a fixture into memory once, then measures feeding every
// block into fresh per-cell states (the state update of the stream stage:
// bulk power or spectral parameters, climate and extremes accumulators), one
// worker, and reports cell-steps per second.
func benchFeed(b *testing.B, input string) {
	e, cat, out := benchEngine(b, input)
	var blocks []*ingest.Block
	var times [][]stepTime
	for blk := range out {
		blocks = append(blocks, blk)
		times = append(times, e.blockTimes(blk))
	}
	n := cat.Grid.NCells()
	b.ReportAllocs()
	cpu0 := processCPU()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		cells := make([]*cell, n)
		for id := range cells {
			if !cat.Masked[id] {
				cells[id] = e.newCell(id)
			}
		}
		for k, blk := range blocks {
			e.feed(blk, times[k], cells, 0, n)
		}
	}
	b.StopTimer()
	work := float64(n) * float64(cat.Steps) * float64(b.N)
	b.ReportMetric(work/b.Elapsed().Seconds(), "cell-steps/s")
	// CPU time of the process (user + system, GC included) per cell-step: on
	// a machine shared with other jobs this, unlike the wall-clock rate, does
	// not count the time the benchmark waited for a core.
	b.ReportMetric(float64((processCPU()-cpu0).Nanoseconds())/work, "cpu-ns/cell-step")
}

// BenchmarkFeedBulk feeds the 24-file bulk fixture (finite-depth bulk power).
func BenchmarkFeedBulk(b *testing.B) {
	benchFeed(b, filepath.Join("..", "..", "testdata", "bulk_monthly"))
}

// BenchmarkFeedSpectral feeds the 2-D spectra fixture (29 x 24 spectra).
func BenchmarkFeedSpectral(b *testing.B) {
	benchFeed(b, filepath.Join("..", "..", "testdata", "spectral_points.nc"))
}

// processCPU is the user plus system CPU time of this process so far
// (getrusage(2), RUSAGE_SELF).
func processCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkFinishBulk measures the fit stage per cell (engine.finish: the
// climate summaries and tables, GEV and GPD fits with their default
// intervals) on the states of the 24-file (2-year) bulk fixture, one worker,
// and reports cells per second.
func BenchmarkFinishBulk(b *testing.B) {
	e, cells, ids := fitStageCells(b, filepath.Join("..", "..", "testdata", "bulk_monthly"))
	acfg := e.spec.AnalysisConfig()
	b.ReportAllocs()
	cpu0 := processCPU()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		id := ids[i%len(ids)]
		if r := e.finish(id, cells[id], acfg); r == nil {
			b.Fatal("no result")
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "cells/s")
	b.ReportMetric(float64((processCPU()-cpu0).Nanoseconds())/float64(b.N)/1e3, "cpu-us/cell")
}

// benchEngine is the engine of the default spec on input, with every block
// of the record read (one worker's input).
func benchEngine(b *testing.B, input string) (*engine, *ingest.Catalog, <-chan *ingest.Block) {
	spec := runspec.DefaultSpec()
	spec.Input.Paths = []string{input}
	cat, err := ingest.Open(spec.Input.Paths, spec.IngestOptions())
	if err != nil {
		b.Fatal(err)
	}
	rs := mustResolve(b, spec)
	ccfg, err := rs.ClimateConfig(cat)
	if err != nil {
		b.Fatal(err)
	}
	e, err := newEngine(cat, rs, ccfg)
	if err != nil {
		b.Fatal(err)
	}
	out := make(chan *ingest.Block, 1<<12)
	if err := cat.Read(context.Background(), ingest.ReadRange{MaxSteps: spec.Run.BlockSteps}, out); err != nil {
		b.Fatal(err)
	}
	close(out)
	return e, cat, out
}
