package pipelines

import (
	"context"
	"path/filepath"
	"testing"

	"swellgrid/ingest"
)

// benchFeed reads a fixture into memory once, then measures feeding every
// block into fresh per-cell states (the state update of the stream stage:
// bulk power or spectral parameters, climate and extremes accumulators), one
// worker, and reports cell-steps per second.
func benchFeed(b *testing.B, input string) {
	spec := DefaultSpec()
	spec.Input.Paths = []string{input}
	cat, err := ingest.Open(spec.Input.Paths, spec.ingestOptions())
	if err != nil {
		b.Fatal(err)
	}
	ccfg, err := spec.climateConfig(cat)
	if err != nil {
		b.Fatal(err)
	}
	e, err := newEngine(cat, spec, ccfg)
	if err != nil {
		b.Fatal(err)
	}
	out := make(chan *ingest.Block, 1<<12)
	if err := cat.Read(context.Background(), ingest.ReadRange{MaxSteps: spec.Run.BlockSteps}, out); err != nil {
		b.Fatal(err)
	}
	close(out)
	var blocks []*ingest.Block
	var times [][]stepTime
	for blk := range out {
		blocks = append(blocks, blk)
		times = append(times, e.blockTimes(blk))
	}
	n := cat.Grid.NCells()
	b.ReportAllocs()
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
	b.ReportMetric(float64(n)*float64(cat.Steps)*float64(b.N)/b.Elapsed().Seconds(), "cell-steps/s")
}

// BenchmarkFeedBulk feeds the 24-file bulk fixture (finite-depth bulk power).
func BenchmarkFeedBulk(b *testing.B) { benchFeed(b, filepath.Join("..", "testdata", "bulk_monthly")) }

// BenchmarkFeedSpectral feeds the 2-D spectra fixture (29 x 24 spectra).
func BenchmarkFeedSpectral(b *testing.B) {
	benchFeed(b, filepath.Join("..", "testdata", "spectral_points.nc"))
}
