package pipelines

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/stats/climate"
	"swellgrid/stats/design"
	"swellgrid/stats/extremes"
)

// The output schema: every column of every table, declared once. The Parquet
// schemas and their column metadata (cellsTable and the long-table schemas), the manifest's
// column list (Manifest.Columns) and the README's column tables
// (TestREADMEColumns) all come from the lists below; adding a statistic is one
// entry here with the function that fills it (see DEVELOPERS.md).
//
// An entry's Name may be a pattern with a parameter of the run: <P> a
// percentile of statistics.percentiles (90 -> "90", 2.5 -> "2p5"), <T> a return
// period of extremes.return_periods_y, <device> a device name. Consecutive
// entries with the same parameter are repeated as a block, parameter value
// first: hm0_rl1y_m, hm0_rl1y_lo_m, ..., hm0_rl5y_m, ... In Doc, <P>, <T> and
// <device> stand for the value and <bin> for statistics.hm0_bin_m.

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

// nullRule says when a cells.parquet column is null for a cell, before its
// filling function is asked.
type nullRule int

const (
	nullNever  nullRule = iota // always filled (a NaN float is still null)
	nullNoCell                 // null for a cell the run has no result for
	nullNoData                 // ... or whose record has no valid step
	nullNoFit                  // ... or without an extreme-value analysis
)

// column is a schema entry with the function that fills it from one row of
// type R; exactly one of the functions is set and gives the column's type.
type column[R any] struct {
	ColumnSpec
	null nullRule
	f64  func(R) float64
	i64  func(R) int64
	str  func(R) string
	bl   func(R) bool
}

func (c *column[R]) typ() ColumnType {
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
func f64Col[R any](name, unit, std, cm, doc string, f func(R) float64) column[R] {
	return column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, StandardName: std, CellMethods: cm, Doc: doc}, f64: f}
}

func i64Col[R any](name, unit, std, cm, doc string, f func(R) int64) column[R] {
	return column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, StandardName: std, CellMethods: cm, Doc: doc}, i64: f}
}

func strCol[R any](name, unit, doc string, f func(R) string) column[R] {
	return column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, Doc: doc}, str: f}
}

func boolCol[R any](name, unit, doc string, f func(R) bool) column[R] {
	return column[R]{ColumnSpec: ColumnSpec{Name: name, Unit: unit, Doc: doc}, bl: f}
}

// when sets the null rule of a cells.parquet entry.
func (c column[R]) when(n nullRule) column[R] { c.null = n; return c }

// per sets the parameter a pattern entry is repeated over.
func (c column[R]) per(p Param) column[R] { c.Param = p; return c }

// CF standard names used below (CF Standard Name Table; the same names that
// ingest.StandardNames reads).
const (
	cfHm0   = "sea_surface_wave_significant_height"
	cfTe    = "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"
	cfTp    = "sea_surface_wave_period_at_variance_spectral_density_maximum"
	cfDir   = "sea_surface_wave_from_direction"
	cfDepth = "sea_floor_depth_below_sea_surface"
)

// cellRow is one row of cells.parquet as its filling functions see it.
type cellRow struct {
	e  *engine
	id int
	r  *cellResult // nil: the run has no result for the cell
	k  int         // index of the column's parameter value (percentile, return period, device)
}

// level returns the k-th return level of a method, ok false if there is none.
func level(m *extremes.MethodResult, k int) (extremes.Level, bool) {
	if k >= len(m.Levels) {
		return extremes.Level{}, false
	}
	return m.Levels[k], true
}

func gevLevel(c *cellRow, get func(extremes.Level) float64) float64 {
	if l, ok := level(&c.r.ext.GEV, c.k); ok {
		return get(l)
	}
	return math.NaN()
}

func gpdLevel(c *cellRow, get func(extremes.Level) float64) float64 {
	if l, ok := level(&c.r.ext.GPD, c.k); ok {
		return get(l)
	}
	return math.NaN()
}

func device(c *cellRow) climate.DeviceSummary { return c.r.sum.Devices[c.k] }

// cellsSchema is cells.parquet, one row per cell of the grid in cell-id order.
var cellsSchema = []column[*cellRow]{
	i64Col("cell_id", "1", "", "", "stable cell id: index in swellgrid's canonical cell order",
		func(c *cellRow) int64 { return int64(c.id) }),
	strCol("name", "", "station name of a point set (cf_role timeseries_id, CF 1.8 section 9.5); empty when the files give none",
		func(c *cellRow) string { return c.e.cellName(c.id) }),
	f64Col("lon", "degree_east", "longitude", "", "cell longitude, WGS 84, [-180, 180)",
		func(c *cellRow) float64 { return c.e.cat.Grid.Lon[c.id] }),
	f64Col("lat", "degree_north", "latitude", "", "cell latitude, WGS 84",
		func(c *cellRow) float64 { return c.e.cat.Grid.Lat[c.id] }),
	f64Col("depth_m", "m", cfDepth, "", "water depth used for group velocity (null: deep-water assumption or unknown)",
		func(c *cellRow) float64 {
			if d := c.e.cat.Depth[c.id]; !math.IsInf(d, 1) {
				return d
			}
			return math.NaN()
		}),
	i64Col("steps", "1", "", "", "time steps read for the cell",
		func(c *cellRow) int64 { return int64(c.r.sum.Steps) }).when(nullNoCell),
	f64Col("coverage", "1", "", "", "share of the record's time with a valid wave power",
		func(c *cellRow) float64 { return c.r.sum.CoverageFrac }).when(nullNoData),
	f64Col("power_mean_kw_m", "kW/m", "", "time: mean", "mean omnidirectional wave power J",
		func(c *cellRow) float64 { return c.r.sum.PowerMeanKWm }).when(nullNoData),
	f64Col("power_std_kw_m", "kW/m", "", "time: standard_deviation", "standard deviation of J",
		func(c *cellRow) float64 { return c.r.sum.PowerStdKWm }).when(nullNoData),
	f64Col("power_cov", "1", "", "", "coefficient of variation of J (std / mean)",
		func(c *cellRow) float64 { return c.r.sum.PowerCoV }).when(nullNoData),
	f64Col("power_max_kw_m", "kW/m", "", "time: maximum", "largest J of the record",
		func(c *cellRow) float64 { return c.r.sum.PowerMaxKWm }).when(nullNoData),
	f64Col("power_p<P>_kw_m", "kW/m", "", "", "<P> th percentile of J (histogram, resolution stated in the manifest)",
		func(c *cellRow) float64 { return c.r.sum.PowerPercentilesKWm[c.k] }).when(nullNoData).per(ParamPercentile),
	f64Col("hm0_mean_m", "m", cfHm0, "time: mean", "mean significant wave height Hm0",
		func(c *cellRow) float64 { return c.r.sum.Hm0MeanM }).when(nullNoData),
	f64Col("hm0_p<P>_m", "m", "", "", "<P> th percentile of Hm0 (histogram bins of <bin> m)",
		func(c *cellRow) float64 { return c.r.sum.Hm0PercentilesM[c.k] }).when(nullNoData).per(ParamPercentile),
	f64Col("hm0_max_m", "m", cfHm0, "time: maximum", "largest Hm0 of the record",
		func(c *cellRow) float64 { return c.r.sum.Hm0MaxM }).when(nullNoData),
	f64Col("te_mean_s", "s", cfTe, "time: mean", "mean energy period Te",
		func(c *cellRow) float64 { return c.r.sum.TeMeanS }).when(nullNoData),
	f64Col("tp_mean_s", "s", cfTp, "time: mean", "mean peak period Tp",
		func(c *cellRow) float64 { return c.r.sum.TpMeanS }).when(nullNoData),
	f64Col("dir_mean_deg", "degree", cfDir, "time: mean", "time-weighted circular mean of the mean wave direction, nautical from (spectra: from the first-order directional moments)",
		func(c *cellRow) float64 { return c.r.sum.DirMeanDeg }).when(nullNoData),
	f64Col("dir_max_power_deg", "degree", "", "", "direction of maximum directional power (spectra: power-weighted circular mean over sea states, not the mean direction; bulk: mean direction), nautical from",
		func(c *cellRow) float64 { return c.r.dirMax }).when(nullNoData),
	f64Col("directionality", "1", "", "", "power-weighted mean directionality coefficient J_theta,max / J (spectra only)",
		func(c *cellRow) float64 { return c.r.direct }).when(nullNoData),
	f64Col("width_mean", "1", "", "", "mean spectral width eps0 (spectra only)",
		func(c *cellRow) float64 { return c.r.width }).when(nullNoData),
	f64Col("mvi", "1", "", "", "monthly variability index: (most - least energetic calendar month mean J) / annual mean J",
		func(c *cellRow) float64 { return c.r.sum.MVI }).when(nullNoData),
	f64Col("svi", "1", "", "", "seasonal variability index: (most - least energetic season mean J) / annual mean J",
		func(c *cellRow) float64 { return c.r.sum.SVI }).when(nullNoData),
	f64Col("interannual_cov", "1", "", "", "coefficient of variation of the annual mean J over included years",
		func(c *cellRow) float64 { return c.r.sum.InterannualCoV }).when(nullNoData),
	f64Col("interannual_std_kw_m", "kW/m", "", "", "sample standard deviation (ddof 1) of the annual mean J over the complete analysis years (annual.parquet; interannual_cov uses ddof 0 over calendar years)",
		func(c *cellRow) float64 { return c.r.iaStd }).when(nullNoData),
	i64Col("annual_years", "1", "", "", "complete analysis years (wave-power coverage at least statistics.coverage_min) behind interannual_std_kw_m and the AEP bands",
		func(c *cellRow) int64 { return int64(c.r.iaYears) }).when(nullNoData),
	f64Col("gev_loc_m", "m", "", "", "GEV location of annual maxima of Hm0 (maximum likelihood)",
		func(c *cellRow) float64 { return c.r.ext.GEV.Loc }).when(nullNoFit),
	f64Col("gev_scale_m", "m", "", "", "GEV scale",
		func(c *cellRow) float64 { return c.r.ext.GEV.Scale }).when(nullNoFit),
	f64Col("gev_shape", "1", "", "", "GEV shape, Coles (2001) sign: positive = heavy upper tail",
		func(c *cellRow) float64 { return c.r.ext.GEV.Shape }).when(nullNoFit),
	i64Col("gev_years", "1", "", "", "complete years whose maxima entered the GEV fit",
		func(c *cellRow) int64 { return int64(c.r.ext.Years) }).when(nullNoFit),
	f64Col("hm0_rl<T>y_m", "m", "", "", "<T>-year return level of Hm0, GEV on annual maxima (screening estimate)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.Hm0 }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("hm0_rl<T>y_lo_m", "m", "", "", "lower end of its 95% profile-likelihood interval",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.ProfLower }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("hm0_rl<T>y_hi_m", "m", "", "", "upper end of its 95% profile-likelihood interval (null: not bounded by the data)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.ProfUpper }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("te_rl<T>y_s", "s", "", "", "energy period associated with the GEV return level (see README)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.Te }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("gpd_threshold_m", "m", "", "", "peaks-over-threshold threshold of Hm0",
		func(c *cellRow) float64 { return c.r.ext.Threshold }).when(nullNoFit),
	f64Col("gpd_scale_m", "m", "", "", "GPD scale of storm-peak excesses",
		func(c *cellRow) float64 { return c.r.ext.GPD.Scale }).when(nullNoFit),
	f64Col("gpd_shape", "1", "", "", "GPD shape, Coles (2001) sign: positive = heavy upper tail",
		func(c *cellRow) float64 { return c.r.ext.GPD.Shape }).when(nullNoFit),
	f64Col("gpd_peaks_per_year", "1/yr", "", "", "declustered storm peaks per year above the threshold",
		func(c *cellRow) float64 { return c.r.ext.PeaksPerYear }).when(nullNoFit),
	f64Col("hm0_pot_rl<T>y_m", "m", "", "", "<T>-year return level of Hm0, GPD on storm peaks (screening estimate)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.Hm0 }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("hm0_pot_rl<T>y_lo_m", "m", "", "", "lower end of its 95% profile-likelihood interval (above the threshold)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.ProfLower }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("hm0_pot_rl<T>y_hi_m", "m", "", "", "upper end of its 95% profile-likelihood interval (null: not bounded by the data)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.ProfUpper }) }).when(nullNoFit).per(ParamPeriod),
	f64Col("hm0_depth_limit_m", "m", "", "", "depth-limited Hm0, extremes.breaking_ratio x depth: levels above it are flagged depth_limited (null: deep water or unknown depth)",
		func(c *cellRow) float64 { return c.r.ext.DepthLimit }).when(nullNoFit),
	f64Col("design_hm0_<TD>y_m", "m", "", "", "largest Hm0 of the <TD>-year IFORM environmental contour (screening estimate; see design.parquet)",
		func(c *cellRow) float64 { return designLargest(c, func(p design.Point) float64 { return p.Hm0 }) }).when(nullNoFit).per(ParamDesign),
	f64Col("design_te_<TD>y_s", "s", "", "", "median Te at the largest Hm0 of the <TD>-year contour",
		func(c *cellRow) float64 { return designLargest(c, func(p design.Point) float64 { return p.Te }) }).when(nullNoFit).per(ParamDesign),
	f64Col("aep_<device>_mwh", "MWh/yr", "", "", "mean annual energy of device <device> from its power matrix",
		func(c *cellRow) float64 { return device(c).AEPMWh }).when(nullNoData).per(ParamDevice),
	f64Col("cf_<device>", "1", "", "", "capacity factor of device <device>: mean power / rated power (rated_kw, else the largest matrix entry)",
		func(c *cellRow) float64 { return device(c).CapacityFactor }).when(nullNoData).per(ParamDevice),
	f64Col("above_rated_<device>", "1", "", "", "share of incident wave energy arriving while <device> is at rated power",
		func(c *cellRow) float64 { return device(c).AboveRatedEnergyShare }).when(nullNoData).per(ParamDevice),
	f64Col("below_cutin_<device>", "1", "", "", "share of incident wave energy arriving while <device> is below cut-in",
		func(c *cellRow) float64 { return device(c).BelowCutInEnergyShare }).when(nullNoData).per(ParamDevice),
	f64Col("energy_outside_matrix_<device>_frac", "1", "", "", "share of incident wave energy arriving in sea states outside the power matrix of <device> (Hm0 above its top row's edge, or the period beyond its outer columns' edges), where it yields nothing",
		func(c *cellRow) float64 { return device(c).OutsideMatrixEnergyShare }).when(nullNoData).per(ParamDevice),
	i64Col("bad_bins", "1", "", "", "missing, negative or non-finite spectral densities seen, each set to 0",
		func(c *cellRow) int64 { return c.r.badBins }).when(nullNoCell),
	i64Col("invalid_values", "1", "", "", "values that were present but unusable (negative, infinite or out of range), left out",
		func(c *cellRow) int64 { return int64(c.r.sum.InvalidValues) }).when(nullNoCell),
	i64Col("rejected_steps", "1", "", "", "time steps that could not be placed in the calendar, left out",
		func(c *cellRow) int64 { return int64(c.r.sum.RejectedSteps) }).when(nullNoCell),
	strCol("qc_flags", "", "comma-separated quality flags (see README)",
		func(c *cellRow) string { return strings.Join(c.e.cellFlags(c.id, c.r), ",") }),
}

// A row of a long table: the cell and one row of the cell's results.
type longRow[T any] struct {
	id   int
	name string
	v    T
}

func cellID[T any]() column[longRow[T]] {
	return i64Col("cell_id", "1", "", "", "cell id", func(x longRow[T]) int64 { return int64(x.id) })
}

func cellName[T any]() column[longRow[T]] {
	return strCol("name", "", "station name of the cell (point sets: cf_role timeseries_id; empty when the files give none)", func(x longRow[T]) string { return x.name })
}

// monthlyRow is a year-month or calendar-month row (m) or a season row (s).
type monthlyRow struct {
	m *climate.MonthRow
	s *climate.SeasonRow
}

type mRow = longRow[monthlyRow]

var monthlySchema = []column[mRow]{
	cellID[monthlyRow](),
	cellName[monthlyRow](),
	strCol("period", "", "year_month, calendar_month (climatology over included years) or season_<DJF|MAM|JJA|SON>",
		func(x mRow) string {
			switch {
			case x.v.s != nil:
				return "season_" + x.v.s.Season
			case x.v.m.Year == 0:
				return "calendar_month"
			}
			return "year_month"
		}),
	i64Col("year", "1", "", "", "year (0 for climatology and season rows)",
		func(x mRow) int64 {
			if x.v.s != nil {
				return 0
			}
			return int64(x.v.m.Year)
		}),
	i64Col("month", "1", "", "", "month 1..12 (0 for season rows)",
		func(x mRow) int64 {
			if x.v.s != nil {
				return 0
			}
			return int64(x.v.m.Month)
		}),
	f64Col("power_mean_kw_m", "kW/m", "", "time: mean", "mean wave power",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.PowerMeanKWm
			}
			return x.v.m.PowerMeanKWm
		}),
	f64Col("hm0_mean_m", "m", cfHm0, "time: mean", "mean Hm0",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.Hm0MeanM
			}
			return x.v.m.Hm0MeanM
		}),
	f64Col("valid_hours", "h", "", "", "time with a valid wave power",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.ValidHours
			}
			return x.v.m.ValidHours
		}),
	f64Col("coverage", "1", "", "", "year-month: valid share of the month (0: no data; every year-month of the record has a row); climatology: share of year-months included",
		func(x mRow) float64 {
			if x.v.s != nil {
				return math.NaN()
			}
			return x.v.m.Coverage
		}),
	boolCol("excluded", "", "year-month below the coverage threshold, left out of climatology and indices",
		func(x mRow) bool { return x.v.s == nil && x.v.m.Excluded }),
}

func monthlyRows(r *cellResult) []monthlyRow {
	out := make([]monthlyRow, 0, len(r.monthly)+len(r.season))
	for i := range r.monthly {
		out = append(out, monthlyRow{m: &r.monthly[i]})
	}
	for i := range r.season {
		out = append(out, monthlyRow{s: &r.season[i]})
	}
	return out
}

type sRow = longRow[climate.ScatterRow]

var scatterSchema = []column[sRow]{
	cellID[climate.ScatterRow](),
	cellName[climate.ScatterRow](),
	f64Col("hm0_lo_m", "m", "", "", "Hm0 bin lower edge", func(x sRow) float64 { return x.v.Hm0LoM }),
	f64Col("hm0_hi_m", "m", "", "", "Hm0 bin upper edge (null: open bin)", func(x sRow) float64 { return openEdge(x.v.Hm0HiM) }),
	f64Col("te_lo_s", "s", "", "", "Te bin lower edge", func(x sRow) float64 { return x.v.TeLoS }),
	f64Col("te_hi_s", "s", "", "", "Te bin upper edge (null: open bin)", func(x sRow) float64 { return openEdge(x.v.TeHiS) }),
	f64Col("hours", "h", "", "", "time in the bin", func(x sRow) float64 { return x.v.Hours }),
	f64Col("time_share", "1", "", "", "share of the table's time", func(x sRow) float64 { return x.v.TimeShare }),
	f64Col("power_mean_kw_m", "kW/m", "", "time: mean", "mean wave power in the bin", func(x sRow) float64 { return x.v.PowerMeanKWm }),
}

// openEdge writes the +Inf upper edge of an open bin as null, as the
// descriptions say.
func openEdge(v float64) float64 {
	if math.IsInf(v, 1) {
		return math.NaN()
	}
	return v
}

type xRow = longRow[climate.ExceedRow]

var exceedanceSchema = []column[xRow]{
	cellID[climate.ExceedRow](),
	cellName[climate.ExceedRow](),
	strCol("variable", "", "hm0_m or power_kw_m", func(x xRow) string { return x.v.Variable }),
	f64Col("value", "m or kW/m", "", "", "level (histogram bin edge)", func(x xRow) float64 { return x.v.Value }),
	f64Col("share_exceeded", "1", "", "", "share of valid time above the level", func(x xRow) float64 { return x.v.ShareExceeded }),
}

type wRow = longRow[climate.WindowRow]

var windowsSchema = []column[wRow]{
	cellID[climate.WindowRow](),
	cellName[climate.WindowRow](),
	f64Col("hm0_limit_m", "m", "", "", "Hm0 limit of the window", func(x wRow) float64 { return x.v.LimitM }),
	f64Col("min_duration_h", "h", "", "", "minimum window duration", func(x wRow) float64 { return x.v.DurationH }),
	i64Col("month", "1", "", "", "calendar month 1..12", func(x wRow) int64 { return int64(x.v.Month) }),
	f64Col("window_hours", "h", "", "", "time inside windows", func(x wRow) float64 { return x.v.WindowHours }),
	f64Col("valid_hours", "h", "", "", "time with a valid Hm0", func(x wRow) float64 { return x.v.ValidHours }),
	f64Col("fraction_in_windows", "1", "", "", "window_hours / valid_hours", func(x wRow) float64 { return x.v.FractionInWindows }),
	i64Col("windows", "1", "", "", "windows beginning in this calendar month", func(x wRow) int64 { return int64(x.v.Windows) }),
	f64Col("windows_per_month", "1", "", "", "mean number of windows per month", func(x wRow) float64 { return x.v.WindowsPerMonth }),
}

// extremesRow is one return level of one method.
type extremesRow struct {
	m *extremes.MethodResult
	l *extremes.Level
}

type eRow = longRow[extremesRow]

var extremesSchema = []column[eRow]{
	cellID[extremesRow](),
	cellName[extremesRow](),
	strCol("method", "", "gev_annual_maxima or gpd_storm_peaks", func(x eRow) string { return x.v.m.Method }),
	f64Col("return_period_y", "yr", "", "", "return period", func(x eRow) float64 { return x.v.l.PeriodYears }),
	f64Col("hm0_m", "m", "", "", "return level of Hm0 (screening estimate; see caution)", func(x eRow) float64 { return x.v.l.Hm0 }),
	f64Col("hm0_lo_m", "m", "", "", "95% profile-likelihood interval, lower", func(x eRow) float64 { return x.v.l.ProfLower }),
	f64Col("hm0_hi_m", "m", "", "", "95% profile-likelihood interval, upper (null: not bounded by the data)", func(x eRow) float64 { return x.v.l.ProfUpper }),
	f64Col("hm0_delta_lo_m", "m", "", "", "95% delta-method interval, lower (truncated at 0 or the threshold)", func(x eRow) float64 { return x.v.l.Lower }),
	f64Col("hm0_delta_hi_m", "m", "", "", "95% delta-method interval, upper", func(x eRow) float64 { return x.v.l.Upper }),
	f64Col("hm0_boot_lo_m", "m", "", "", "95% parametric-bootstrap interval, lower (null unless asked)", func(x eRow) float64 { return x.v.l.BootLower }),
	f64Col("hm0_boot_hi_m", "m", "", "", "95% parametric-bootstrap interval, upper (null unless asked)", func(x eRow) float64 { return x.v.l.BootUpper }),
	f64Col("te_s", "s", "", "", "associated energy period", func(x eRow) float64 { return x.v.l.Te }),
	f64Col("tp_s", "s", "", "", "associated peak period", func(x eRow) float64 { return x.v.l.Tp }),
	f64Col("loc_or_threshold_m", "m", "", "", "GEV location or GPD threshold", func(x eRow) float64 { return x.v.m.Loc }),
	f64Col("scale_m", "m", "", "", "scale", func(x eRow) float64 { return x.v.m.Scale }),
	f64Col("shape", "1", "", "", "shape, Coles (2001) sign", func(x eRow) float64 { return x.v.m.Shape }),
	i64Col("n", "1", "", "", "maxima or exceedances fitted", func(x eRow) int64 { return int64(x.v.m.N) }),
	strCol("qc_flags", "", "flags of the level (why it is null, or what is flagged about it) and of its fit", func(x eRow) string {
		return strings.Join((x.v.m.Flags&^extremes.Withheld | x.v.l.Flags).Names(), ",")
	}),
}

func extremesRows(r *cellResult) []extremesRow {
	if !r.hasExt {
		return nil
	}
	var out []extremesRow
	for _, m := range []*extremes.MethodResult{&r.ext.GEV, &r.ext.GPD} {
		for i := range m.Levels {
			out = append(out, extremesRow{m: m, l: &m.Levels[i]})
		}
	}
	return out
}

func scatterRows(r *cellResult) []climate.ScatterRow { return r.scatter }
func exceedRows(r *cellResult) []climate.ExceedRow   { return r.exceed }
func windowRows(r *cellResult) []climate.WindowRow   { return r.windows }

// longTable is a long table: its file, its schema, the rows one cell gives.
type longTable interface {
	file() string
	specs() []ColumnSpec
	build(res []*cellResult) *export.Table
}

type longSchema[T any] struct {
	name string
	cols []column[longRow[T]]
	rows func(r *cellResult) []T
}

func (s longSchema[T]) file() string { return s.name + ".parquet" }

func (s longSchema[T]) specs() []ColumnSpec { return specsOf(s.file(), s.cols) }

// build fills the table from the cells' results, sorted by cell id.
func (s longSchema[T]) build(res []*cellResult) *export.Table {
	var rows []longRow[T]
	for _, r := range res {
		for _, v := range s.rows(r) {
			rows = append(rows, longRow[T]{r.id, r.name, v})
		}
	}
	cols := make([]export.Column, len(s.cols))
	for k := range s.cols {
		cols[k] = fill(&s.cols[k], s.cols[k].Name, s.cols[k].Doc, rows, nil)
	}
	return &export.Table{Columns: cols, Meta: map[string]string{export.MetaCaution: Caution}, RowGroupRows: rowGroupRows(len(cols))}
}

// longTables is the list of long tables, in the order of the README.
var longSchemas = []longTable{
	longSchema[monthlyRow]{"monthly", monthlySchema, monthlyRows},
	longSchema[climate.ScatterRow]{"scatter", scatterSchema, scatterRows},
	longSchema[climate.ExceedRow]{"exceedance", exceedanceSchema, exceedRows},
	longSchema[climate.WindowRow]{"windows", windowsSchema, windowRows},
	longSchema[extremesRow]{"extremes", extremesSchema, extremesRows},
	longSchema[extremes.ThresholdRow]{"threshold_diagnostics", thresholdSchema, ladderRows},
	longSchema[designRow]{"design", designSchema, designRows},
	longSchema[climate.DirectionRow]{"directions", directionsSchema, directionRows},
	longSchema[annualRow]{"annual", annualSchema, annualRows},
	longSchema[climate.AEPBand]{"aep_bands", bandsSchema, bandRows},
}

func specsOf[R any](file string, cols []column[R]) []ColumnSpec {
	out := make([]ColumnSpec, len(cols))
	for k := range cols {
		out[k] = cols[k].ColumnSpec
		out[k].File, out[k].Type = file, cols[k].typ()
	}
	return out
}

// Schema lists every column of every table the run writes, patterns
// unexpanded, cells.parquet first.
func Schema() []ColumnSpec {
	out := specsOf("cells.parquet", cellsSchema)
	for _, t := range longSchemas {
		out = append(out, t.specs()...)
	}
	out = append(out, specsOf("screening.parquet", screeningSchema)...)
	return append(out, validationSpecs()...) // swellgrid validate (validate_schema.go)
}

// fill builds one column from rows; isNull (nil: never) says which rows are
// null before the column's function is asked.
func fill[R any](c *column[R], name, doc string, rows []R, isNull func(R) bool) export.Column {
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

func (n nullRule) test() func(*cellRow) bool {
	switch n {
	case nullNoCell:
		return func(c *cellRow) bool { return c.r == nil }
	case nullNoData:
		return func(c *cellRow) bool { return c.r == nil || c.r.sum.Steps == 0 }
	case nullNoFit:
		return func(c *cellRow) bool { return c.r == nil || !c.r.hasExt }
	}
	return nil
}

// paramValue is one value of a column parameter: its index in the run's
// configuration, its tag in a column name and its text in a description.
type paramValue struct {
	k         int
	tag, text string
}

// periodTag names a return period or percentile in a column: 100 -> "100",
// 2.5 -> "2p5".
func periodTag(t float64) string {
	return strings.ReplaceAll(strconv.FormatFloat(t, 'f', -1, 64), ".", "p")
}

func (e *engine) paramValues(p Param) []paramValue {
	var out []paramValue
	switch p {
	case ParamPercentile:
		for i, q := range e.ccfg.Percentiles {
			if e.userPercentile(q) {
				out = append(out, paramValue{i, periodTag(q), fmt.Sprintf("%g", q)})
			}
		}
	case ParamPeriod:
		for i, t := range e.spec.Extremes.ReturnPeriodsY {
			out = append(out, paramValue{i, periodTag(t), fmt.Sprintf("%g", t)})
		}
	case ParamDesign:
		if e.spec.Design.Enabled {
			for i, t := range e.spec.Design.ReturnPeriodsY {
				out = append(out, paramValue{i, periodTag(t), fmt.Sprintf("%g", t)})
			}
		}
	case ParamDevice:
		for i, d := range e.ccfg.Devices {
			out = append(out, paramValue{i, d.Name, d.Name})
		}
	default:
		out = []paramValue{{0, "", ""}}
	}
	return out
}

// expand gives a pattern's name and description for one parameter value.
func (e *engine) expand(c *ColumnSpec, v paramValue) (name, doc string) {
	name, doc = c.Name, c.Doc
	if c.Param != NoParam {
		ph := "<" + string(c.Param) + ">"
		name, doc = strings.ReplaceAll(name, ph, v.tag), strings.ReplaceAll(doc, ph, v.text)
	}
	doc = strings.ReplaceAll(doc, "<bin>", fmt.Sprintf("%g", e.ccfg.Hm0HistResM))
	return name, doc
}

// cellsTable builds the rows lo..hi-1 of cells.parquet from cellsSchema:
// one row per cell of the grid, in cell-id order; cells without data have
// null results. res holds results of cells in that range.
func (e *engine) cellsTable(lo, hi int, res []*cellResult) *export.Table {
	rows := make([]*cellRow, hi-lo)
	for i := range rows {
		rows[i] = &cellRow{e: e, id: lo + i}
	}
	for _, r := range res {
		rows[r.id-lo].r = r
	}
	var cols []export.Column
	forEachCellColumn(e, func(c *column[*cellRow], v paramValue) {
		for _, row := range rows {
			row.k = v.k
		}
		name, doc := e.expand(&c.ColumnSpec, v)
		cols = append(cols, fill(c, name, doc, rows, c.null.test()))
	})
	return &export.Table{Columns: cols, Meta: map[string]string{export.MetaCaution: Caution}, RowGroupRows: rowGroupRows(len(cols))}
}

func sortByID(res []*cellResult) {
	sort.Slice(res, func(i, j int) bool { return res[i].id < res[j].id })
}

// cellsColumns lists the columns of this run's cells.parquet, patterns
// expanded, in file order (the GeoParquet geometry column, added by export,
// not included).
func (e *engine) cellsColumns() []ColumnSpec {
	var out []ColumnSpec
	forEachCellColumn(e, func(c *column[*cellRow], v paramValue) {
		s := c.ColumnSpec
		s.File, s.Type = "cells.parquet", c.typ()
		s.Name, s.Doc = e.expand(&c.ColumnSpec, v)
		out = append(out, s)
	})
	return out
}

// forEachCellColumn calls f for every column of cells.parquet in file order:
// each entry of cellsSchema with each value of its parameter, a block of
// consecutive entries with the same parameter repeated value by value.
func forEachCellColumn(e *engine, f func(c *column[*cellRow], v paramValue)) {
	for lo := 0; lo < len(cellsSchema); {
		hi := lo + 1
		for p := cellsSchema[lo].Param; p != NoParam && hi < len(cellsSchema) && cellsSchema[hi].Param == p; hi++ {
		}
		for _, v := range e.paramValues(cellsSchema[lo].Param) {
			for k := lo; k < hi; k++ {
				f(&cellsSchema[k], v)
			}
		}
		lo = hi
	}
}

// geometryColumn is the point column WriteGeoParquet adds to cells.parquet.
var geometryColumn = ColumnSpec{File: "cells.parquet", Name: "geometry", Type: "binary", Doc: "cell centre as a WKB point (lon, lat; OGC:CRS84)"}

// outputColumns lists every column of every table of this run, patterns expanded,
// keyed by file name: the manifest's column list.
func (e *engine) outputColumns() map[string][]ColumnSpec {
	out := map[string][]ColumnSpec{"cells.parquet": append(e.cellsColumns(), geometryColumn)}
	for _, t := range longSchemas {
		out[t.file()] = t.specs()
	}
	if e.spec.Screening != nil {
		out["screening.parquet"] = screeningSpecs(e.spec.Screening.DistanceLayers())
	}
	return out
}

// designLargest reads the k-th design return period's largest contour point.
func designLargest(c *cellRow, get func(design.Point) float64) float64 {
	d := c.r.design
	if d == nil || !d.ok || c.k >= len(d.largest) {
		return math.NaN()
	}
	return get(d.largest[c.k])
}

type tRow = longRow[extremes.ThresholdRow]

var thresholdSchema = []column[tRow]{
	cellID[extremes.ThresholdRow](),
	f64Col("quantile", "1", "", "", "quantile of the cell's Hm0 that sets the threshold", func(x tRow) float64 { return x.v.Quantile }),
	f64Col("threshold_m", "m", "", "", "threshold of Hm0", func(x tRow) float64 { return x.v.Threshold }),
	i64Col("n_peaks", "1", "", "", "declustered storm peaks above the threshold", func(x tRow) int64 { return int64(x.v.N) }),
	f64Col("mean_excess_m", "m", "", "", "mean excess of the peaks over the threshold (mean residual life)", func(x tRow) float64 { return x.v.MeanExcess }),
	f64Col("mean_excess_lo_m", "m", "", "", "95% normal interval of the mean excess, lower", func(x tRow) float64 { return x.v.MeanExcessLo }),
	f64Col("mean_excess_hi_m", "m", "", "", "95% normal interval of the mean excess, upper", func(x tRow) float64 { return x.v.MeanExcessHi }),
	f64Col("shape", "1", "", "", "GPD shape (Coles 2001 sign) of the peaks above the threshold", func(x tRow) float64 { return x.v.Shape }),
	f64Col("shape_lo", "1", "", "", "95% delta-method interval of the shape, lower", func(x tRow) float64 { return x.v.ShapeLo }),
	f64Col("shape_hi", "1", "", "", "95% delta-method interval of the shape, upper", func(x tRow) float64 { return x.v.ShapeHi }),
	f64Col("modified_scale_m", "m", "", "", "modified scale sigma - xi u, constant above a threshold where the GPD holds", func(x tRow) float64 { return x.v.ModScale }),
	f64Col("modified_scale_lo_m", "m", "", "", "95% delta-method interval of the modified scale, lower", func(x tRow) float64 { return x.v.ModScaleLo }),
	f64Col("modified_scale_hi_m", "m", "", "", "95% delta-method interval of the modified scale, upper", func(x tRow) float64 { return x.v.ModScaleHi }),
}

func ladderRows(r *cellResult) []extremes.ThresholdRow { return r.ladder }

// designRow is one point of one environmental contour.
type designRow struct {
	T     float64
	point int
	p     design.Point
}

type dRow = longRow[designRow]

var designSchema = []column[dRow]{
	cellID[designRow](),
	f64Col("return_period_y", "yr", "", "", "return period of the environmental contour", func(x dRow) float64 { return x.v.T }),
	i64Col("point", "1", "", "", "point index along the contour, from its largest Hm0 anticlockwise in standard normal space", func(x dRow) int64 { return int64(x.v.point) }),
	f64Col("hm0_m", "m", cfHm0, "", "Hm0 of the contour point (IFORM; screening estimate, see caution)", func(x dRow) float64 { return x.v.p.Hm0 }),
	f64Col("te_s", "s", cfTe, "", "Te of the contour point", func(x dRow) float64 { return x.v.p.Te }),
}

func designRows(r *cellResult) []designRow {
	d := r.design
	if d == nil || !d.ok {
		return nil
	}
	var out []designRow
	for k, c := range d.contours {
		for i, p := range c {
			out = append(out, designRow{T: d.periods[k], point: i, p: p})
		}
	}
	return out
}

type dirRow = longRow[climate.DirectionRow]

// directionsSchema: the directional distribution of power and occurrence,
// one row per direction sector (statistics.direction_sectors), from the
// mean direction on bulk input and from the directional spectrum on 2-D
// spectral input (stats/climate directions.go, seastate.Kernel.SectorPowers).
var directionsSchema = []column[dirRow]{
	cellID[climate.DirectionRow](),
	cellName[climate.DirectionRow](),
	i64Col("sector", "1", "", "", "direction sector, 0 centred on north, numbered clockwise", func(x dirRow) int64 { return int64(x.v.Sector) }),
	f64Col("sector_centre_deg", "degree", "", "", "centre of the sector, direction the waves come from (nautical, clockwise from north)", func(x dirRow) float64 { return x.v.CentreDeg }),
	f64Col("sector_from_deg", "degree", "", "", "clockwise start of the sector (included)", func(x dirRow) float64 { return x.v.FromDeg }),
	f64Col("sector_to_deg", "degree", "", "", "clockwise end of the sector (excluded)", func(x dirRow) float64 { return x.v.ToDeg }),
	f64Col("power_share", "1", "", "", "share of the record's wave energy arriving from the sector", func(x dirRow) float64 { return x.v.PowerShare }),
	f64Col("occurrence_share", "1", "", "", "share of the time whose mean wave direction lies in the sector", func(x dirRow) float64 { return x.v.OccurrenceShare }),
	f64Col("power_mean_kw_m", "kW/m", "", "time: mean", "time-mean wave power arriving from the sector (the sectors sum to the mean power of the steps with a direction)", func(x dirRow) float64 { return x.v.PowerMeanKWm }),
	f64Col("occurrence_hours", "h", "", "", "time whose mean wave direction lies in the sector", func(x dirRow) float64 { return x.v.OccurrenceHours }),
}

func directionRows(r *cellResult) []climate.DirectionRow { return r.dirs }

// annualRow is one analysis year of a cell: the wave resource (dev < 0) or
// one device's energy (dev its index).
type annualRow struct {
	y   *climate.YearRow
	dev int
	sum *climate.Summary
}

type aRow = longRow[annualRow]

// annualSchema: year by year (climate.CellState.Annual), one row for the
// wave resource and one per device for every analysis year with data.
var annualSchema = []column[aRow]{
	cellID[annualRow](),
	cellName[annualRow](),
	i64Col("year", "1", "", "", "analysis year, named by the calendar year it begins in (extremes.year_start_month; 1: the calendar year)",
		func(x aRow) int64 { return int64(x.v.y.Year) }),
	strCol("device", "", "empty: the wave resource row; else the device whose energy the row gives",
		func(x aRow) string {
			if x.v.dev < 0 {
				return ""
			}
			return x.v.sum.Devices[x.v.dev].Name
		}),
	f64Col("power_mean_kw_m", "kW/m", "", "time: mean", "resource row: duration-weighted mean wave power of the year (null on device rows)",
		func(x aRow) float64 {
			if x.v.dev >= 0 {
				return math.NaN()
			}
			return x.v.y.PowerMeanKWm
		}),
	f64Col("energy_mwh", "MWh", "", "", "device row: the device's energy in the year, its mean power over the steps with a valid Hm0 and period times the year's hours (null on resource rows)",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return math.NaN()
			}
			return x.v.y.DeviceEnergyMWh[x.v.dev]
		}),
	f64Col("valid_hours", "h", "", "", "time with a valid wave power (resource row) or a valid Hm0 and matrix period (device row)",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return x.v.y.ValidHours
			}
			return x.v.y.DeviceValidHours[x.v.dev]
		}),
	f64Col("hours", "h", "", "", "length of the analysis year in the data's calendar",
		func(x aRow) float64 { return x.v.y.Hours }),
	f64Col("coverage_frac", "1", "", "", "valid_hours / hours",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return x.v.y.CoverageFrac
			}
			return x.v.y.DeviceCoverageFrac[x.v.dev]
		}),
	boolCol("excluded", "", "the year's wave-power coverage is below statistics.coverage_min: left out of interannual_std_kw_m and the AEP bands",
		func(x aRow) bool { return x.v.y.Excluded }),
}

func annualRows(r *cellResult) []annualRow {
	var out []annualRow
	for i := range r.annual {
		for d := -1; d < len(r.sum.Devices); d++ {
			out = append(out, annualRow{y: &r.annual[i], dev: d, sum: &r.sum})
		}
	}
	return out
}

type bRow = longRow[climate.AEPBand]

// bandsSchema: the P50/P90/P99 annual energy of each device per horizon
// with its uncertainty components (climate.AEPBands; screening estimates,
// see the README).
var bandsSchema = []column[bRow]{
	cellID[climate.AEPBand](),
	cellName[climate.AEPBand](),
	strCol("device", "", "device", func(x bRow) string { return x.v.Device }),
	f64Col("horizon_y", "yr", "", "", "future period whose mean annual energy the band is for (uncertainty.horizons_y)", func(x bRow) float64 { return x.v.HorizonY }),
	i64Col("years_used", "1", "", "", "complete analysis years behind the inter-annual spread", func(x bRow) int64 { return int64(x.v.YearsUsed) }),
	f64Col("aep_p50_mwh", "MWh/yr", "", "", "P50: the long-term mean annual energy (aep_<device>_mwh of cells.parquet)", func(x bRow) float64 { return x.v.P50MWh }),
	f64Col("interannual_frac", "1", "", "", "sample standard deviation (ddof 1) of the complete years' mean device power over their mean", func(x bRow) float64 { return x.v.InterannualFrac }),
	f64Col("u_record_frac", "1", "", "", "uncertainty of the long-term mean from the record length: interannual_frac / sqrt(years_used)", func(x bRow) float64 { return x.v.RecordFrac }),
	f64Col("u_future_frac", "1", "", "", "variability of the mean of horizon_y future years: interannual_frac / sqrt(horizon_y)", func(x bRow) float64 { return x.v.FutureFrac }),
	f64Col("u_model_frac", "1", "", "", "model uncertainty (uncertainty.model_frac: an assumption, see the manifest)", func(x bRow) float64 { return x.v.ModelFrac }),
	f64Col("u_total_frac", "1", "", "", "root-sum-square of u_record_frac, u_future_frac and u_model_frac (independent errors)", func(x bRow) float64 { return x.v.TotalFrac }),
	f64Col("aep_p90_mwh", "MWh/yr", "", "", "annual energy exceeded with 90 % probability: aep_p50_mwh (1 - 1.2816 u_total_frac) (null when not positive)", func(x bRow) float64 { return x.v.P90MWh }),
	f64Col("aep_p99_mwh", "MWh/yr", "", "", "annual energy exceeded with 99 % probability: aep_p50_mwh (1 - 2.3263 u_total_frac) (null when not positive)", func(x bRow) float64 { return x.v.P99MWh }),
}

func bandRows(r *cellResult) []climate.AEPBand { return r.bands }
