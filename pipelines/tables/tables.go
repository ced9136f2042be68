// Package tables declares the columns of the run's output tables once, each
// with the function that fills it from a row: name, type, unit, CF
// attributes and description (what the Parquet metadata, the manifest and
// the README say), and builds export tables from rows. The run engine,
// screening and validation declare their tables with it. It must not know
// how a value is computed, nor which tables exist.
package tables

import (
	"math"
	"math/bits"
	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/stats"
)

// The declarative part of a column (name, type, unit, CF attributes,
// description) is the output contract's (export/contract); these names are
// the contract's, for the schema entries below.
type (
	ColumnSpec = contract.ColumnSpec
	ColumnType = contract.ColumnType
	Param      = contract.Param
)

// Column types and pattern parameters (export/contract).
const (
	TypeFloat64     = contract.TypeFloat64
	TypeInt64       = contract.TypeInt64
	TypeString      = contract.TypeString
	TypeBool        = contract.TypeBool
	NoParam         = contract.NoParam
	ParamPercentile = contract.ParamPercentile
	ParamPeriod     = contract.ParamPeriod
	ParamDevice     = contract.ParamDevice
	ParamDesign     = contract.ParamDesign
)

// NullRule says when a cells.parquet column is null for a cell, before its
// filling function is asked.
type NullRule int

// Column is a schema entry with the function that fills it from one row of
// type R; exactly one of the functions is set and gives the column's type.
type Column[R any] struct {
	ColumnSpec
	Null NullRule
	f64  func(R) float64
	i64  func(R) int64
	str  func(R) string
	bl   func(R) bool
}

// ValueType is the Parquet type of the column, given by its filling function.
func (c *Column[R]) ValueType() ColumnType {
	switch {
	case c.f64 != nil:
		return TypeFloat64
	case c.i64 != nil:
		return TypeInt64
	case c.str != nil:
		return TypeString
	default:
		return TypeBool
	}
}

// Entry constructors: name, unit, standard_name, cell_methods, doc, filler.
func F64[R any](name, unit, std, cm, doc string, f func(R) float64) Column[R] {
	return Column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, StandardName: std, CellMethods: cm, Doc: doc}, f64: f}
}

// I64 is an int64 column entry.
func I64[R any](name, unit, std, cm, doc string, f func(R) int64) Column[R] {
	return Column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, StandardName: std, CellMethods: cm, Doc: doc}, i64: f}
}

// Str is a string column entry (no standard name or cell methods).
func Str[R any](name, unit, doc string, f func(R) string) Column[R] {
	return Column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, Doc: doc}, str: f}
}

// Bool is a boolean column entry.
func Bool[R any](name, unit, doc string, f func(R) bool) Column[R] {
	return Column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, Doc: doc}, bl: f}
}

// When sets the null rule of a cells.parquet entry.
func (c Column[R]) When(n NullRule) Column[R] { c.Null = n; return c }

// Per sets the parameter a pattern entry is repeated over.
func (c Column[R]) Per(p Param) Column[R] { c.Param = p; return c }

// CF standard names used below (CF Standard Name Table; the same names that
// ingest.StandardNames reads).
const (
	CFHm0   = "sea_surface_wave_significant_height"
	CFTe    = "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"
	CFTp    = "sea_surface_wave_period_at_variance_spectral_density_maximum"
	CFDir   = "sea_surface_wave_from_direction"
	CFDepth = "sea_floor_depth_below_sea_surface"
)

// SpecsOf is what cols say of themselves as columns of file.
func SpecsOf[R any](file string, cols []Column[R]) []ColumnSpec {
	out := make([]ColumnSpec, len(cols))
	for k := range cols {
		out[k] = cols[k].ColumnSpec
		out[k].File, out[k].Type = file, cols[k].ValueType()
	}
	return out
}

// Fill builds one column from rows; isNull (nil: never) says which rows are
// null before the column's function is asked.
func Fill[R any](c *Column[R], name, doc string, rows []R, isNull func(R) bool) export.Column {
	n := len(rows)
	var valid []bool
	if isNull != nil && c.f64 == nil {
		valid = make([]bool, n)
		for i, r := range rows {
			valid[i] = !isNull(r)
		}
	}
	col := export.Column{Name: name, Unit: c.Unit, Doc: doc, StandardName: c.StandardName, CellMethods: c.CellMethods}
	switch {
	case c.f64 != nil:
		col.Float64 = make([]float64, n)
		for i, r := range rows {
			if isNull != nil && isNull(r) {
				col.Float64[i] = math.NaN()
			} else {
				col.Float64[i] = c.f64(r)
			}
		}
	case c.i64 != nil:
		col.Int64 = make([]int64, n)
		for i, r := range rows {
			if valid == nil || valid[i] {
				col.Int64[i] = c.i64(r)
			}
		}
	case c.str != nil:
		col.String = make([]string, n)
		for i, r := range rows {
			if valid == nil || valid[i] {
				col.String[i] = c.str(r)
			}
		}
	default:
		col.Bool = make([]bool, n)
		for i, r := range rows {
			if valid == nil || valid[i] {
				col.Bool[i] = c.bl(r)
			}
		}
	}
	col.Valid = valid
	return col
}

// Build makes a table of rows with every column of cols, nulls none.
func Build[R any](cols []Column[R], rows []R) *export.Table {
	out := make([]export.Column, len(cols))
	for k := range cols {
		out[k] = Fill(&cols[k], cols[k].Name, cols[k].Doc, rows, nil)
	}
	return &export.Table{Columns: out, Meta: map[string]string{export.MetaCaution: Caution}}
}

// RowGroupRows is the row group length of a table of ncols columns: a power
// of two near 2 MiB of 8-byte values per group (1 Ki to 64 Ki rows). It
// depends on the schema only, never on the memory budget or the passes, so
// that the files are byte-identical however the run was split; and the
// writer holds one group per table, so the export's memory is bounded by
// the number of tables, not by the number of cells.
func RowGroupRows(ncols int) int {
	r := (2 << 20) / (8 * max(ncols, 1))
	r = 1 << (bits.Len(uint(r)) - 1)
	return min(max(r, 1<<10), 1<<16)
}

// Caution is carried by every output with return levels or resource figures:
// the one caution text, stats.Caution.
const Caution = stats.Caution
