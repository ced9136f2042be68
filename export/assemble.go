package export

import (
	"context"
	"fmt"
	"math"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"github.com/apache/arrow/go/v17/parquet/file"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"
)

// Cut ends the current row group at the rows appended so far (a no-op when
// none are buffered): the rows that follow start a new row group, whose
// RowGroupRows are counted from here. A writer that cuts at fixed points of
// its rows (the run's cell blocks) makes files whose row groups are those of
// the same table written in parts that start and end at those points, which
// AppendRowGroups assembles.
func (s *TableStream) Cut() error {
	if s.closed {
		return fmt.Errorf("export: %s: cut after close", s.path)
	}
	if s.buf == 0 {
		return nil
	}
	return s.flush()
}

// AppendRowGroups appends every row group of the Parquet file src (written
// by a TableStream of the same columns) as a row group of its own, one at a
// time, in order, and returns the rows appended. The stream must be at a row
// group boundary (nothing buffered: after Cut). Each group is decoded and
// encoded again by the stream's writer, so the bytes are those the stream
// would have written from the same rows cut at the same points. For each
// row group, seen (if set) is given the values of each column named in
// floats, in order: a Float64 column's values with NaN for nulls (as the
// stream writes NaN), nil for a column of another kind or one the file
// lacks. Empty row groups (the one of a file without rows) are skipped. It
// holds one row group in memory.
func (s *TableStream) AppendRowGroups(ctx context.Context, src string, floats []string, seen func(col string, v []float64)) (int, error) {
	if s.closed {
		return 0, fmt.Errorf("export: %s: append after close", s.path)
	}
	if s.buf != 0 {
		return 0, fmt.Errorf("export: %s: %d rows buffered; the row groups of %s can only follow a cut", s.path, s.buf, src)
	}
	pf, err := file.OpenParquetFile(src, false)
	if err != nil {
		return 0, fmt.Errorf("export: reading %s: %w", src, err)
	}
	defer pf.Close()
	mem := memory.NewGoAllocator()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, mem)
	if err != nil {
		return 0, fmt.Errorf("export: reading %s: %w", src, err)
	}
	sc, err := fr.Schema()
	if err != nil {
		return 0, fmt.Errorf("export: reading %s: %w", src, err)
	}
	if why := sameFields(sc, s.schema); why != "" {
		return 0, fmt.Errorf("export: %s cannot be appended to %s: %s", src, s.path, why)
	}
	leaves := make([]int, pf.MetaData().Schema.NumColumns())
	for k := range leaves {
		leaves[k] = k
	}
	rows := 0
	for g := 0; g < pf.NumRowGroups(); g++ {
		n := int(pf.RowGroup(g).NumRows())
		if n == 0 {
			continue
		}
		if n > s.group {
			return rows, fmt.Errorf("export: %s: row group %d has %d rows, more than the %d of %s", src, g, n, s.group, s.path)
		}
		if s.points != nil && s.rows+n > len(s.points.lon) {
			return rows, fmt.Errorf("export: %s: rows %d..%d beyond the %d points", s.path, s.rows, s.rows+n-1, len(s.points.lon))
		}
		tbl, err := fr.ReadRowGroups(ctx, leaves, []int{g})
		if err != nil {
			return rows, fmt.Errorf("export: reading %s row group %d: %w", src, g, err)
		}
		if int(tbl.NumCols()) != s.schema.NumFields() {
			tbl.Release()
			return rows, fmt.Errorf("export: reading %s row group %d: %d columns, want %d", src, g, tbl.NumCols(), s.schema.NumFields())
		}
		cols := make([]arrow.Array, tbl.NumCols())
		for k := range cols {
			ch := tbl.Column(k).Data().Chunks()
			if len(ch) == 1 {
				ch[0].Retain()
				cols[k] = ch[0]
			} else if cols[k], err = array.Concatenate(ch, mem); err != nil {
				break
			}
		}
		tbl.Release()
		if err != nil {
			return rows, fmt.Errorf("export: reading %s row group %d: %w", src, g, err)
		}
		rec := array.NewRecord(s.schema, cols, int64(n))
		for _, c := range cols {
			c.Release()
		}
		if seen != nil {
			for _, name := range floats {
				seen(name, floatValues(rec, name))
			}
		}
		err = s.fw.Write(rec)
		rec.Release()
		if err != nil {
			return rows, fmt.Errorf("export: writing %s from %s: %w", s.path, src, err)
		}
		s.rows += n
		rows += n
	}
	return rows, nil
}

// sameFields says "" when a and b have the same columns (names, types,
// nullability), or what differs.
func sameFields(a, b *arrow.Schema) string {
	if a.NumFields() != b.NumFields() {
		return fmt.Sprintf("%d columns against %d", a.NumFields(), b.NumFields())
	}
	for k := 0; k < a.NumFields(); k++ {
		fa, fb := a.Field(k), b.Field(k)
		if fa.Name != fb.Name || !arrow.TypeEqual(fa.Type, fb.Type) || fa.Nullable != fb.Nullable {
			return fmt.Sprintf("column %d is %s %s against %s %s", k+1, fa.Name, fa.Type, fb.Name, fb.Type)
		}
	}
	return ""
}

// floatValues is the Float64 column name of rec with NaN for nulls, or nil.
func floatValues(rec arrow.Record, name string) []float64 {
	k := rec.Schema().FieldIndices(name)
	if len(k) != 1 {
		return nil
	}
	a, ok := rec.Column(k[0]).(*array.Float64)
	if !ok {
		return nil
	}
	v := make([]float64, a.Len())
	for i := range v {
		v[i] = math.NaN()
		if a.IsValid(i) {
			v[i] = a.Value(i)
		}
	}
	return v
}
