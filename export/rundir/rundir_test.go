package rundir

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"github.com/apache/arrow/go/v17/parquet"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"
)

// ReadCellRows and ReadColumns against the values written: a file made by
// Apache Arrow's own Parquet writer (not swellgrid's), cell_id in order with
// 1..3 rows per cell, row groups of 4 rows so that a cell's rows start,
// end or straddle a row-group boundary; one value null.
func TestReadCellRowsAndColumns(t *testing.T) {
	var ids []int64
	var vals []float64
	var names []string
	for c := int64(0); c < 9; c++ {
		for k := int64(0); k <= c%3; k++ {
			ids = append(ids, c)
			vals = append(vals, float64(10*c+k))
			names = append(names, string(rune('a'+c)))
		}
	}
	vals[5] = math.NaN() // written as null
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "cell_id", Type: arrow.PrimitiveTypes.Int64},
		{Name: "v", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "name", Type: arrow.BinaryTypes.String},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	b.Field(0).(*array.Int64Builder).AppendValues(ids, nil)
	for _, v := range vals {
		if math.IsNaN(v) {
			b.Field(1).(*array.Float64Builder).AppendNull()
		} else {
			b.Field(1).(*array.Float64Builder).Append(v)
		}
	}
	b.Field(2).(*array.StringBuilder).AppendValues(names, nil)
	rec := b.NewRecord()
	defer rec.Release()
	path := filepath.Join(t.TempDir(), "long.parquet")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	tbl := array.NewTableFromRecords(schema, []arrow.Record{rec})
	defer tbl.Release()
	props := parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(4), parquet.WithStats(true))
	if err := pqarrow.WriteTable(tbl, f, 4, props, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	f.Close()

	// ReadCellRows, then a run's CellTable (which keeps the row groups last
	// decoded) with the cells in order, in reverse and in order again.
	run := &Run{Dir: filepath.Dir(path), tables: map[string]*Table{}, groups: map[string]*groupRead{}}
	var order []int64
	for c := int64(-1); c <= 9; c++ {
		order = append(order, c)
	}
	for c := int64(9); c >= -1; c-- {
		order = append(order, c)
	}
	order = append(order, order[:11]...)
	for k, c := range order {
		read := func() (*Table, error) { return ReadCellRows(path, c) }
		if k >= 11 {
			read = func() (*Table, error) { return run.CellTable("long", c) }
		}
		got, err := read()
		if err != nil {
			t.Fatal(err)
		}
		var want []int // rows of the written data with cell_id c
		for i, id := range ids {
			if id == c {
				want = append(want, i)
			}
		}
		if got.Rows != len(want) {
			t.Fatalf("cell %d: %d rows, want %d", c, got.Rows, len(want))
		}
		id, v, name := got.Col("cell_id"), got.Col("v"), got.Col("name")
		for k, i := range want {
			same := v.Float[k] == vals[i] || math.IsNaN(v.Float[k]) && math.IsNaN(vals[i])
			if id.Int[k] != c || !same || name.Str[k] != names[i] {
				t.Errorf("cell %d row %d: (%d, %v, %q), want (%d, %v, %q)", c, k, id.Int[k], v.Float[k], name.Str[k], c, vals[i], names[i])
			}
		}
	}

	// the footer was parsed once and kept, with the row groups' cell ranges
	// (4 rows a group: cells 0-2, 2-3, 3-4, ...); ReadFooters keeps the same
	ft := run.footers["long"]
	if ft == nil || !ft.ranges.ok || len(ft.ranges.lo) != (len(ids)+3)/4 || ft.ranges.lo[0] != 0 || ft.ranges.hi[len(ft.ranges.hi)-1] != 8 {
		t.Errorf("CellTable kept no footer with the row groups' cell ranges: %+v", ft)
	}
	run2 := &Run{Dir: filepath.Dir(path), tables: map[string]*Table{}, groups: map[string]*groupRead{}}
	if err := run2.ReadFooters("long", "absent_table"); err != nil || run2.footers["long"] == nil || !slices.Equal(run2.footers["long"].ranges.lo, ft.ranges.lo) {
		t.Errorf("ReadFooters: %v, %+v", err, run2.footers["long"])
	}

	// only the asked columns (with cell_id), then every column again
	part, err := run2.CellTable("long", 4, "v", "absent")
	if err != nil || part.Rows != 2 || part.Col("name") != nil || part.Col("v") == nil || part.Col("cell_id") == nil || part.Col("v").Float[1] != 41 {
		t.Fatalf("CellTable with columns v: %v, %d rows, columns %v", err, part.Rows, colNames(part))
	}
	if whole, err := run2.CellTable("long", 4); err != nil || whole.Col("name") == nil || whole.Col("name").Str[0] != "e" {
		t.Fatalf("CellTable of every column after a partial read: %v, columns %v", err, colNames(whole))
	}

	cols, err := ReadColumns(path, "v", "cell_id", "absent")
	if err != nil {
		t.Fatal(err)
	}
	if cols.Rows != len(ids) || len(cols.Columns) != 2 || cols.Columns[0].Name != "cell_id" || cols.Col("name") != nil || cols.Col("absent") != nil {
		t.Fatalf("ReadColumns: %d rows, columns %v; want %d rows of cell_id and v", cols.Rows, colNames(cols), len(ids))
	}
	for i := range ids {
		if cols.Col("cell_id").Int[i] != ids[i] || !(cols.Col("v").Float[i] == vals[i] || math.IsNaN(vals[i]) && math.IsNaN(cols.Col("v").Float[i])) {
			t.Errorf("ReadColumns row %d: (%d, %v), want (%d, %v)", i, cols.Col("cell_id").Int[i], cols.Col("v").Float[i], ids[i], vals[i])
		}
	}
}

func colNames(t *Table) []string {
	var n []string
	for _, c := range t.Columns {
		n = append(n, c.Name)
	}
	return n
}
