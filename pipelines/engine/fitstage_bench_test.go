package engine

import (
	"path/filepath"
	"testing"
)

// fitStageCells reads a fixture and feeds every block into fresh per-cell
// states, as the stream stage does, and returns the engine, the states and
// the ids of the unmasked cells: the input of the fit stage.
func fitStageCells(b *testing.B, input string) (*engine, []*cell, []int) {
	e, cat, out := benchEngine(b, input)
	n := cat.Grid.NCells()
	cells := make([]*cell, n)
	var ids []int
	for id := range cells {
		if !cat.Masked[id] {
			cells[id] = e.newCell(id)
			ids = append(ids, id)
		}
	}
	for blk := range out {
		e.feed(blk, e.blockTimes(blk), cells, 0, n)
	}
	return e, cells, ids
}

// BenchmarkFitStage measures the fit stage per cell as the pipeline runs it
// (engine.finish with the default spec: climate summaries and tables, GEV
// and GPD fits with the default profile-likelihood intervals, threshold
// diagnostics, design sea states), one worker, on a short record (the
// 2-year, 24-cell bulk fixture: the GEV withholds its levels for few years,
// the GPD publishes) and on long ones (the 30-year, 3-station point set of
// testdata/extremes_points and the 12-year, 6-cell e2e fixture: both methods
// publish every level with its profile interval). Target (issue 16): at
// least 2 000 cells/s per core. The -nodesign cases leave the design sea
// states out (design.enabled = false), to show the cost of the extremes
// alone; cpu-us/cell is the process CPU time per cell
// (not counting the time waited for a core on a shared machine).
func BenchmarkFitStage(b *testing.B) {
	for _, c := range []struct{ name, input string }{
		{"short-2y", filepath.Join("..", "..", "testdata", "bulk_monthly")},
		{"long-30y", filepath.Join("..", "..", "testdata", "extremes_points", "extremes_points.nc")},
		{"long-12y", filepath.Join("..", "..", "testdata", "e2e", "bulk")},
	} {
		for _, design := range []bool{true, false} {
			name := c.name
			if !design {
				name += "-nodesign"
			}
			b.Run(name, func(b *testing.B) {
				e, cells, ids := fitStageCells(b, c.input)
				e.spec.Design.Enabled = design
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
			})
		}
	}
}
