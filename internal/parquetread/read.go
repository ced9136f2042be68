// Package parquetread reads the columns of a Parquet file back into Go values
// with the Apache Arrow project's reader (pqarrow), independently of
// swellgrid's writer. It is test tooling: it serves the tests of every
// package that checks what a run wrote, and sgdiff (cmd/sgdiff, `make bench`).
// It must not import any other swellgrid package, and no product package
// (ingest, grid, stats, export, pipelines, cmd/swellgrid) imports it outside
// its _test.go files.
package parquetread

import (
	"context"
	"fmt"
	"os"

	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"github.com/apache/arrow/go/v17/parquet/file"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"
)

// Columns reads the named columns (all columns when none are named) of the
// Parquet file at path. Values are float64, int64, string, bool or []byte,
// and nil for nulls; dictionary-encoded strings come back as strings.
func Columns(path string, names ...string) (map[string][]any, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rdr, err := file.NewParquetReader(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		return nil, fmt.Errorf("%s: %v", path, err)
	}
	defer tbl.Release()
	if len(names) == 0 {
		for c := 0; c < int(tbl.NumCols()); c++ {
			names = append(names, tbl.Column(c).Name())
		}
	}
	out := map[string][]any{}
	for _, name := range names {
		idx := tbl.Schema().FieldIndices(name)
		if len(idx) == 0 {
			return nil, fmt.Errorf("%s: no column %q", path, name)
		}
		vals := []any{}
		for _, ch := range tbl.Column(idx[0]).Data().Chunks() {
			for i := 0; i < ch.Len(); i++ {
				if ch.IsNull(i) {
					vals = append(vals, nil)
					continue
				}
				switch a := ch.(type) {
				case *array.Float64:
					vals = append(vals, a.Value(i))
				case *array.Int64:
					vals = append(vals, a.Value(i))
				case *array.String:
					vals = append(vals, a.Value(i))
				case *array.Boolean:
					vals = append(vals, a.Value(i))
				case *array.Binary:
					vals = append(vals, append([]byte(nil), a.Value(i)...))
				case *array.Dictionary:
					vals = append(vals, a.Dictionary().(*array.String).Value(a.GetValueIndex(i)))
				default:
					vals = append(vals, a.ValueStr(i))
				}
			}
		}
		out[name] = vals
	}
	return out, nil
}

// Float64s reads one float column; nulls become NaN.
func Float64s(path, name string) ([]float64, error) {
	c, err := Columns(path, name)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(c[name]))
	for i, v := range c[name] {
		f, ok := v.(float64)
		if v == nil {
			f = nan()
		} else if !ok {
			return nil, fmt.Errorf("%s: column %q is not float64", path, name)
		}
		out[i] = f
	}
	return out, nil
}

func nan() float64 { var z float64; return z / z }
