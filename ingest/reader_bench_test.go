package ingest

import (
	"context"
	"path/filepath"
	"testing"
)

// benchRead reads a fixture through Catalog.Read once per iteration and
// reports the values delivered per second (unpacking and the scatter into
// canonical order included).
func benchRead(b *testing.B, inputs ...string) {
	cat, err := Open(inputs, Options{DeepWater: true})
	if err != nil {
		b.Fatal(err)
	}
	var values int
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		out := make(chan *Block, 2)
		errc := make(chan error, 1)
		go func() { errc <- cat.Read(context.Background(), ReadRange{}, out); close(out) }()
		values = 0
		for blk := range out {
			for _, v := range blk.Bulk {
				values += len(v)
			}
			values += len(blk.Spec)
		}
		if err := <-errc; err != nil {
			b.Fatal(err)
		}
	}
	if values == 0 {
		b.Fatal("no values read")
	}
	b.ReportMetric(float64(values)*float64(b.N)/b.Elapsed().Seconds(), "values/s")
}

// BenchmarkReadBulkMonthly reads the 24-file bulk fixture: (time, lat, lon).
func BenchmarkReadBulkMonthly(b *testing.B) {
	benchRead(b, filepath.Join("..", "testdata", "bulk_monthly"))
}

// BenchmarkReadLonFirst reads a (time, lon, lat) file: the generic scatter.
func BenchmarkReadLonFirst(b *testing.B) {
	benchRead(b, filepath.Join("..", "testdata", "regular_desc_lonlat.nc"))
}

// BenchmarkReadSpectralPoints reads the 2-D spectra fixture:
// (time, station, frequency, direction).
func BenchmarkReadSpectralPoints(b *testing.B) {
	benchRead(b, filepath.Join("..", "testdata", "spectral_points.nc"))
}
