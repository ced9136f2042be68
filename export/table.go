package export

import (
	"fmt"
	"regexp"

	"swellgrid/stats"
)

// Column is one named column of a table. Exactly one of Float64, Int64, String
// or Bool holds the values. A Float64 value that is NaN is written as null (a
// cell without a result is null, never zero). For the other kinds, Valid marks
// which rows hold a value (false = null); a nil Valid means every row does.
// Unit (for example "kW/m", "m", "s", "1") and Doc (one line: what the column
// means and how it was obtained) are stored with the schema, and so are
// StandardName and CellMethods, the CF standard_name and cell_methods of the
// column where they apply (empty: none; not written).
type Column struct {
	Name         string
	Unit         string
	Doc          string
	StandardName string
	CellMethods  string
	Float64      []float64
	Int64        []int64
	String       []string
	Bool         []bool
	Valid        []bool
}

// Table is a set of columns of equal length, written in the given order.
// Meta adds file-level key/value metadata (for example a note that the data
// are a synthetic scenario); keys are written sorted. RowGroupRows sets the
// rows per Parquet row group (0 means DefaultRowGroupRows).
type Table struct {
	Columns      []Column
	Meta         map[string]string
	RowGroupRows int
}

// DefaultRowGroupRows is the default number of rows per Parquet row group:
// 64 Ki rows keeps a group of a few dozen float columns at a few MB, small
// enough for GIS readers to skip groups by their statistics and large enough
// to compress well (common practice; GDAL's Parquet driver also writes 64 Ki
// rows per group by default).
const DefaultRowGroupRows = 65536

// ScreeningCaution is written into every table and contour layer whose
// caller gives no caution of its own: the one caution text, stats.Caution.
const ScreeningCaution = stats.Caution

// Float64Column returns a float column; NaN values are written as null.
func Float64Column(name, unit, doc string, v []float64) Column {
	return Column{Name: name, Unit: unit, Doc: doc, Float64: v}
}

// Int64Column returns an integer column; valid may be nil (no nulls).
func Int64Column(name, unit, doc string, v []int64, valid []bool) Column {
	return Column{Name: name, Unit: unit, Doc: doc, Int64: v, Valid: valid}
}

// StringColumn returns a string column; valid may be nil (no nulls).
func StringColumn(name, unit, doc string, v []string, valid []bool) Column {
	return Column{Name: name, Unit: unit, Doc: doc, String: v, Valid: valid}
}

// BoolColumn returns a boolean column; valid may be nil (no nulls).
func BoolColumn(name, unit, doc string, v []bool, valid []bool) Column {
	return Column{Name: name, Unit: unit, Doc: doc, Bool: v, Valid: valid}
}

// Len is the number of rows of c.
func (c *Column) Len() int {
	switch {
	case c.Float64 != nil:
		return len(c.Float64)
	case c.Int64 != nil:
		return len(c.Int64)
	case c.String != nil:
		return len(c.String)
	default:
		return len(c.Bool)
	}
}

func (c *Column) kinds() int {
	n := 0
	for _, set := range []bool{c.Float64 != nil, c.Int64 != nil, c.String != nil, c.Bool != nil} {
		if set {
			n++
		}
	}
	return n
}

var columnName = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)

// check validates the table and returns its row count.
func (t *Table) check(path string) (int, error) {
	if t == nil || len(t.Columns) == 0 {
		return 0, fmt.Errorf("export: table for %s has no columns", path)
	}
	rows := -1
	seen := map[string]bool{}
	for k := range t.Columns {
		c := &t.Columns[k]
		if !columnName.MatchString(c.Name) {
			return 0, fmt.Errorf("export: %s: column %d is named %q; names must be lower-case letters, digits and _, starting with a letter", path, k, c.Name)
		}
		if seen[c.Name] {
			return 0, fmt.Errorf("export: %s: column %q appears twice", path, c.Name)
		}
		seen[c.Name] = true
		if c.kinds() == 0 {
			return 0, fmt.Errorf("export: %s: column %q has no values; set one of Float64, Int64, String, Bool (an empty, non-nil slice for a table without rows)", path, c.Name)
		}
		if c.kinds() > 1 {
			return 0, fmt.Errorf("export: %s: column %q has values of more than one kind; set exactly one of Float64, Int64, String, Bool", path, c.Name)
		}
		if c.Float64 != nil && c.Valid != nil {
			return 0, fmt.Errorf("export: %s: column %q is Float64 with a Valid mask; mark missing floats with NaN instead", path, c.Name)
		}
		n := c.Len()
		if c.Valid != nil && len(c.Valid) != n {
			return 0, fmt.Errorf("export: %s: column %q has %d values but %d validity flags", path, c.Name, n, len(c.Valid))
		}
		if rows >= 0 && n != rows {
			return 0, fmt.Errorf("export: %s: column %q has %d rows, column %q has %d; all columns must have the same length", path, c.Name, n, t.Columns[0].Name, rows)
		}
		rows = n
	}
	if t.RowGroupRows < 0 {
		return 0, fmt.Errorf("export: %s: RowGroupRows is %d; use 0 for the default or a positive count", path, t.RowGroupRows)
	}
	return rows, nil
}
