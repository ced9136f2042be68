package contract

import (
	"strconv"
	"strings"
)

// Columns of cells.parquet that other packages than the schema refer to by
// name. The schema (the run engine's cellsSchema) declares every column with
// its unit and description; these are the names readers and writers share.
const (
	ColCellID    = "cell_id" // stable cell id; also the first column of every long table
	ColName      = "name"    // station name of a point set
	ColLon       = "lon"     // cell longitude, [-180, 180)
	ColLat       = "lat"     // cell latitude
	ColDepth     = "depth_m"
	ColCoverage  = "coverage"
	ColPowerMean = "power_mean_kw_m" // also a column of monthly.parquet
	ColHm0Mean   = "hm0_mean_m"      // also a column of monthly.parquet
	ColMVI       = "mvi"
	ColQCFlags   = "qc_flags"
	ColGeometry  = "geometry" // the GeoParquet WKB point column
)

// Quality flags of the qc_flags column that readers act on; a cell's flags
// are joined by QCFlagSeparator.
const (
	QCFlagMasked    = "masked" // a land or masked cell: no values
	QCFlagSeparator = ","
)

// Tag names a percentile or a return period in a column name: the shortest
// decimal of v with "p" for the decimal point (100 -> "100", 2.5 -> "2p5").
func Tag(v float64) string {
	return strings.ReplaceAll(strconv.FormatFloat(v, 'f', -1, 64), ".", "p")
}

// Hm0PercentileColumn is cells.parquet's p-th percentile of Hm0:
// hm0_p<P>_m.
func Hm0PercentileColumn(p float64) string { return "hm0_p" + Tag(p) + "_m" }

// Hm0ReturnLevelColumn is cells.parquet's t-year return level of Hm0 (GEV
// on annual maxima): hm0_rl<T>y_m.
func Hm0ReturnLevelColumn(t float64) string { return "hm0_rl" + Tag(t) + "y_m" }

// AEPColumn is cells.parquet's mean annual energy of a device:
// aep_<device>_mwh.
func AEPColumn(device string) string { return "aep_" + device + "_mwh" }

// AvailabilityColumn is cells.parquet's energy-weighted availability of a
// device from its repair access: availability_<device>.
func AvailabilityColumn(device string) string { return "availability_" + device }

// CapacityFactorColumn is cells.parquet's capacity factor of a device:
// cf_<device>.
func CapacityFactorColumn(device string) string { return "cf_" + device }

// ColumnType is the Parquet (Arrow) type of a column.
type ColumnType string

// Column types.
const (
	TypeFloat64 ColumnType = "double"
	TypeInt64   ColumnType = "int64"
	TypeString  ColumnType = "string"
	TypeBool    ColumnType = "boolean"
)

// Param is the run parameter a column pattern is repeated over.
type Param string

// Parameters of column patterns.
const (
	NoParam         Param = ""
	ParamPercentile Param = "P"      // statistics.percentiles
	ParamPeriod     Param = "T"      // extremes.return_periods_y
	ParamDevice     Param = "device" // [[device]] name
	ParamDesign     Param = "TD"     // design.return_periods_y
)

// ColumnSpec describes one column, or one family of columns when Name is a
// pattern: what the Parquet metadata, the manifest and the README say about it.
type ColumnSpec struct {
	File         string     `json:"file"`
	Name         string     `json:"name"`
	Param        Param      `json:"param,omitempty"`
	Type         ColumnType `json:"type"`
	Unit         string     `json:"unit"`
	StandardName string     `json:"standard_name,omitempty"` // CF standard name, where one exists
	CellMethods  string     `json:"cell_methods,omitempty"`  // CF cell_methods, where they apply
	Doc          string     `json:"doc"`
}
