package engine

import (
	"context"
	"runtime"
	"testing"

	"swellgrid/ingest"
	"swellgrid/internal/runcheck"
)

// BenchmarkCellMemory measures the heap a pass holds per cell (the states
// after the whole record of testdata/bulk_monthly) and per fitted result,
// beside the memory model (climate.Config.CellMemory, engine.memoryModel):
// the model must not be below the measurement. It reports figures only
// (make bench); no test asserts memory.
func BenchmarkCellMemory(b *testing.B) {
	in := []string{runcheck.BulkFixture(&testing.T{})}
	s := clSpec(in, b.TempDir())
	j, err := validateRun(context.Background(), s, Options{})
	if err != nil {
		b.Fatal(err)
	}
	n := j.cat.Grid.NCells()
	heap := func() float64 {
		runtime.GC()
		var m runtime.MemStats
		runtime.ReadMemStats(&m)
		return float64(m.HeapAlloc)
	}
	var state, result float64
	for i := 0; i < b.N; i++ {
		h0 := heap()
		cells := make([]*cell, n)
		for k := range cells {
			if !j.cat.Masked[k] {
				cells[k] = j.eng.newCell(k)
			}
		}
		if err := j.eng.streamPass(context.Background(), 0, n, 0, 2, cells, ingest.Tally{}, nil, nil); err != nil {
			b.Fatal(err)
		}
		h1 := heap()
		res, err := j.eng.finishAll(context.Background(), 0, cells, j.acfg, 2, nil)
		if err != nil {
			b.Fatal(err)
		}
		h2 := heap()
		state, result = (h1-h0)/float64(n), (h2-h1)/float64(len(res))
		runtime.KeepAlive(cells)
		runtime.KeepAlive(res)
	}
	m := j.eng.ccfg.CellMemory(j.eng.recordYears(), 0)
	b.ReportMetric(state, "state-B/cell")
	b.ReportMetric(float64(m.State), "model-state-B/cell")
	b.ReportMetric(result, "result-B/cell")
	b.ReportMetric(float64(m.Result), "model-result-B/cell")
}
