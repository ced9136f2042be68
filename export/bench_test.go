package export

import (
	"math"
	"path/filepath"
	"testing"
)

// BenchmarkWriteGeoParquet writes a 100k-row cells table with 40 float
// columns, an id and a flag column.
func BenchmarkWriteGeoParquet(b *testing.B) {
	const n = 100_000
	lon := make([]float64, n)
	lat := make([]float64, n)
	id := make([]int64, n)
	flags := make([]string, n)
	for k := range lon {
		lon[k] = -20 + float64(k%400)*0.05
		lat[k] = 40 + float64(k/400)*0.05
		id[k] = int64(k)
		if k%11 == 0 {
			flags[k] = "low_coverage"
		}
	}
	cols := []Column{Int64Column("cell_id", "1", "cell id", id, nil)}
	for c := 0; c < 40; c++ {
		v := make([]float64, n)
		for k := range v {
			v[k] = math.Sin(float64(k)*0.001+float64(c)) * 30
			if (k+c)%97 == 0 {
				v[k] = math.NaN()
			}
		}
		cols = append(cols, Float64Column("col_"+string(rune('a'+c%26))+string(rune('a'+c/26)), "1", "", v))
	}
	cols = append(cols, StringColumn("qc_flags", "", "", flags, nil))
	tab := &Table{Columns: cols}
	dir := b.TempDir()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := WriteGeoParquet(filepath.Join(dir, "cells.parquet"), tab, lon, lat); err != nil {
			b.Fatal(err)
		}
	}
}
