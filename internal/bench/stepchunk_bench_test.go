package bench

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"testing"
	"time"

	"swellgrid/ingest"
	"swellgrid/internal/testtool"
)

// cpuTime is the process's user + system CPU time so far (getrusage(2)).
func cpuTime(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// stepChunked gives files chunked one time step per chunk: the files named
// by SWELLGRID_STEPCHUNK (a glob, e.g. a few months of the bulk benchmark
// rechunked with `nccopy -c time/1,lat/100,lon/100`), or else the bulk
// fixture rechunked so by testdata/stepchunk/rechunk.py (python3-netcdf4)
// into a temporary directory.
func stepChunked(b *testing.B) []string {
	if g := os.Getenv("SWELLGRID_STEPCHUNK"); g != "" {
		files, err := filepath.Glob(g)
		if err != nil || len(files) == 0 {
			b.Fatalf("SWELLGRID_STEPCHUNK=%s: no files (%v)", g, err)
		}
		return files
	}
	py := testtool.NeedPython(b, "netCDF4")
	src, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bulk_monthly", "*.nc"))
	if err != nil || len(src) == 0 {
		b.Fatalf("fixture files: %v %v", src, err)
	}
	dir := b.TempDir()
	args := append(append([]string{filepath.Join("..", "..", "testdata", "stepchunk", "rechunk.py")}, src...), dir)
	if out, err := exec.Command(py, args...).CombinedOutput(); err != nil {
		b.Fatalf("rechunk.py: %v\n%s", err, out)
	}
	var files []string
	for _, f := range src {
		files = append(files, filepath.Join(dir, filepath.Base(f)))
	}
	return files
}

// readRaw reads the record as a run's reader goroutine does (raw blocks,
// ingest.ReadRange.Raw: the NetCDF calls only; the run's workers unpack
// their cells in parallel) and releases every block uncooked.
func readRaw(b *testing.B, cat *ingest.Catalog) {
	out := make(chan *ingest.Block, 2)
	errc := make(chan error, 1)
	go func() {
		errc <- cat.Read(context.Background(), ingest.ReadRange{MaxSteps: 64, Raw: true}, out)
		close(out)
	}()
	for blk := range out {
		blk.Release()
	}
	if err := <-errc; err != nil {
		b.Fatal(err)
	}
}

// BenchmarkReadStepChunked reads files chunked one step per chunk through
// the read floor (ReadFloor), through ingest's reader as a run's reader
// goroutine does (raw blocks, readRaw) and through ingest's reader with
// every value unpacked on the reading goroutine (ReadIngest), one after
// the other in each iteration, and reports the CPU time of each per
// iteration and their ratios to the floor (target: the reader at most
// 1.3 x the floor).
func BenchmarkReadStepChunked(b *testing.B) {
	files := stepChunked(b)
	cat, err := ingest.Open(files, ingest.Options{DeepWater: true})
	if err != nil {
		b.Fatal(err)
	}
	var floorCPU, rawCPU, ingestCPU time.Duration
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		c0 := cpuTime(b)
		if _, err := ReadFloor(cat, 64); err != nil {
			b.Fatal(err)
		}
		c1 := cpuTime(b)
		if _, err := ReadIngest(cat, 64); err != nil {
			b.Fatal(err)
		}
		c2 := cpuTime(b)
		readRaw(b, cat)
		c3 := cpuTime(b)
		floorCPU += c1 - c0
		ingestCPU += c2 - c1
		rawCPU += c3 - c2
	}
	b.ReportMetric(floorCPU.Seconds()/float64(b.N), "floor-cpu-s/op")
	b.ReportMetric(ingestCPU.Seconds()/float64(b.N), "ingest-cpu-s/op")
	b.ReportMetric(rawCPU.Seconds()/float64(b.N), "reader-cpu-s/op")
	b.ReportMetric(ingestCPU.Seconds()/floorCPU.Seconds(), "ingest/floor")
	b.ReportMetric(rawCPU.Seconds()/floorCPU.Seconds(), "reader/floor")
}
