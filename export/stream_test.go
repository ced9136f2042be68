package export

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// A table written part by part (any split, row groups smaller than the
// table) is byte-identical to the same table written at once: the runs
// write their tables as the results of each pass come, and the output must
// not depend on the number of passes.
func TestStreamSameBytesAsWhole(t *testing.T) {
	const n = 1000
	ids, vals, names := make([]int64, n), make([]float64, n), make([]string, n)
	valid := make([]bool, n)
	lon, lat := make([]float64, n), make([]float64, n)
	for i := range ids {
		ids[i], vals[i], names[i], valid[i] = int64(i), float64(i)/7, string(rune('a'+i%26)), i%5 != 0
		lon[i], lat[i] = -10+float64(i%40)*0.25, 40+float64(i/40)*0.25
		if i%11 == 0 {
			vals[i] = math.NaN()
		}
	}
	base := func(lo, hi int) *Table {
		return &Table{Columns: []Column{Int64Column("cell_id", "1", "id", ids[lo:hi], nil),
			Float64Column("x_m", "m", "x", vals[lo:hi]), StringColumn("name", "", "name", names[lo:hi], valid[lo:hi])},
			Meta: map[string]string{"k": "v"}, RowGroupRows: 96}
	}
	dir := t.TempDir()
	withLonLat := func(lo, hi int) *Table {
		tb := base(lo, hi)
		tb.Columns = append(tb.Columns, Float64Column("lon", "degree_east", "lon", lon[lo:hi]), Float64Column("lat", "degree_north", "lat", lat[lo:hi]))
		return tb
	}
	for _, mode := range []int{0, 1, 2} {
		geo, table := mode > 0, base
		if mode == 2 {
			table = withLonLat
		}
		whole := filepath.Join(dir, "whole.parquet")
		var err error
		if geo {
			err = WriteGeoParquet(whole, table(0, n), lon, lat)
		} else {
			err = WriteParquet(whole, table(0, n))
		}
		if err != nil {
			t.Fatal(err)
		}
		want, _ := os.ReadFile(whole)
		for _, cuts := range [][]int{{0, n}, {0, 0, 1, 95, 96, 97, 500, 999, n}, {0, 333, 666, n}} {
			path := filepath.Join(dir, "parts.parquet")
			os.Remove(path)
			var st *TableStream
			if geo {
				st, err = NewGeoParquetStream(path, table(0, 0), lon, lat)
			} else {
				st, err = NewParquetStream(path, table(0, 0))
			}
			if err != nil {
				t.Fatal(err)
			}
			for k := 1; k < len(cuts); k++ {
				if err := st.Append(table(cuts[k-1], cuts[k])); err != nil {
					t.Fatal(err)
				}
			}
			if _, err := os.Stat(path); err == nil {
				t.Fatal("the file is in place before Close")
			}
			if err := st.Close(); err != nil {
				t.Fatal(err)
			}
			got, _ := os.ReadFile(path)
			if !bytes.Equal(got, want) {
				t.Errorf("mode %d, parts %v: %d bytes, whole table %d bytes; want identical", mode, cuts, len(got), len(want))
			}
		}
	}
	// A GeoParquet stream that misses points is refused and leaves nothing.
	path := filepath.Join(dir, "short.parquet")
	st, err := NewGeoParquetStream(path, base(0, 10), lon, lat)
	if err != nil {
		t.Fatal(err)
	}
	if err := st.Close(); err == nil {
		t.Error("a stream of 10 rows for 1000 points was closed without error")
	}
	if m, _ := filepath.Glob(filepath.Join(dir, ".short.parquet.partial-*")); len(m) > 0 || fileExists(path) {
		t.Error("the refused stream left a file")
	}
}

func fileExists(p string) bool { _, err := os.Stat(p); return err == nil }
