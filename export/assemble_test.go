package export

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// A table written by one stream cut at fixed rows (blocks) is byte-identical
// to the same table assembled from parts written apart, each starting and
// ending on those rows (AppendRowGroups), for a plain and a GeoParquet
// table; a stream with rows buffered refuses to append row groups; the
// Float64 values handed to seen are the file's with NaN for nulls.
func TestAssembledSameBytesAsCutStream(t *testing.T) {
	const n = 300
	ids, vals, names := make([]int64, n), make([]float64, n), make([]string, n)
	valid := make([]bool, n)
	lon, lat := make([]float64, n), make([]float64, n)
	for i := range ids {
		ids[i], vals[i], names[i], valid[i] = int64(i), float64(i)/7, string(rune('a'+i%26)), i%5 != 0
		lon[i], lat[i] = -10+float64(i%20)*0.25, 40+float64(i/20)*0.25
		if i%11 == 0 {
			vals[i] = math.NaN()
		}
	}
	table := func(lo, hi int) *Table {
		return &Table{Columns: []Column{Int64Column("cell_id", "1", "id", ids[lo:hi], valid[lo:hi]),
			Float64Column("x_m", "m", "x", vals[lo:hi]), StringColumn("name", "", "name", names[lo:hi], valid[lo:hi])},
			Meta: map[string]string{"k": "v"}, RowGroupRows: 32}
	}
	blocks := []int{0, 40, 80, 120, 160, 200, 240, 280, n} // 40-row blocks: groups of 32 + 8 rows
	shards := [][2]int{{0, 3}, {3, 5}, {5, 8}}             // block indices
	dir := t.TempDir()
	for _, geo := range []bool{false, true} {
		open := func(path string, lo, hi int) *TableStream {
			t.Helper()
			var st *TableStream
			var err error
			if geo {
				st, err = NewGeoParquetStream(path, table(0, 0), lon[lo:hi], lat[lo:hi])
			} else {
				st, err = NewParquetStream(path, table(0, 0))
			}
			if err != nil {
				t.Fatal(err)
			}
			return st
		}
		write := func(path string, b0, b1 int) {
			t.Helper()
			st := open(path, blocks[b0], blocks[b1])
			for b := b0; b < b1; b++ {
				if err := st.Append(table(blocks[b], blocks[b+1])); err != nil {
					t.Fatal(err)
				}
				if err := st.Cut(); err != nil {
					t.Fatal(err)
				}
			}
			if err := st.Close(); err != nil {
				t.Fatal(err)
			}
		}
		single := filepath.Join(dir, "single.parquet")
		write(single, 0, len(blocks)-1)
		var parts []string
		for k, s := range shards {
			p := filepath.Join(dir, "part"+string(rune('0'+k))+".parquet")
			write(p, s[0], s[1])
			parts = append(parts, p)
		}
		merged := filepath.Join(dir, "merged.parquet")
		st := open(merged, 0, n)
		var seen []float64
		for _, p := range parts {
			if _, err := st.AppendRowGroups(context.Background(), p, []string{"x_m", "name"}, func(col string, v []float64) {
				if col == "x_m" {
					seen = append(seen, v...)
				} else if v != nil {
					t.Errorf("seen: the string column %s given as numbers", col)
				}
			}); err != nil {
				t.Fatal(err)
			}
		}
		if err := st.Close(); err != nil {
			t.Fatal(err)
		}
		a, _ := os.ReadFile(single)
		b, _ := os.ReadFile(merged)
		if len(a) == 0 || !bytes.Equal(a, b) {
			t.Errorf("geo %v: assembled file (%d bytes) differs from the cut stream's (%d bytes)", geo, len(b), len(a))
		}
		for i, v := range seen {
			if !(v == vals[i] || math.IsNaN(v) && math.IsNaN(vals[i])) {
				t.Errorf("geo %v: seen x_m[%d] = %v, want %v", geo, i, v, vals[i])
				break
			}
		}
		if len(seen) != n {
			t.Errorf("geo %v: seen %d values, want %d", geo, len(seen), n)
		}
		// A stream with rows buffered cannot take row groups.
		bad := open(filepath.Join(dir, "bad.parquet"), 0, n)
		if err := bad.Append(table(0, 5)); err != nil {
			t.Fatal(err)
		}
		if _, err := bad.AppendRowGroups(context.Background(), parts[1], nil, nil); err == nil {
			t.Errorf("geo %v: row groups appended after 5 buffered rows", geo)
		}
		bad.Abort()
	}
}
