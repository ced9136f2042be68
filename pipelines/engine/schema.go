package engine

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/pipelines/screening"
	"swellgrid/pipelines/tables"
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

const (
	nullNever  tables.NullRule = iota // always filled (a NaN float is still null)
	nullNoCell                        // null for a cell the run has no result for
	nullNoData                        // ... or whose record has no valid step
	nullNoFit                         // ... or without an extreme-value analysis
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

// access is the repair access of the column's device at the cell (NaN
// fields when the device has no access rule).
func access(c *cellRow) deviceAccess {
	a, _, ok := c.e.accessOf(c.r, c.k)
	if !ok {
		nan := math.NaN()
		return deviceAccess{waitH: nan, availability: nan, censoredShare: nan}
	}
	return a
}

// cellsSchema is cells.parquet, one row per cell of the grid in cell-id order.
var cellsSchema = []tables.Column[*cellRow]{
	tables.I64("cell_id", "1", "", "", "stable cell id: index in swellgrid's canonical cell order",
		func(c *cellRow) int64 { return int64(c.id) }),
	tables.Str("name", "", "station name of a point set (cf_role timeseries_id, CF 1.8 section 9.5); empty when the files give none",
		func(c *cellRow) string { return c.e.cellName(c.id) }),
	tables.F64("lon", "degree_east", "longitude", "", "cell longitude, WGS 84, [-180, 180)",
		func(c *cellRow) float64 { return c.e.cat.Grid.Lon[c.id] }),
	tables.F64("lat", "degree_north", "latitude", "", "cell latitude, WGS 84",
		func(c *cellRow) float64 { return c.e.cat.Grid.Lat[c.id] }),
	tables.F64(contract.ColDepth, "m", tables.CFDepth, "", "water depth used for group velocity (null: deep-water assumption or unknown)",
		func(c *cellRow) float64 {
			if d := c.e.cat.Depth[c.id]; !math.IsInf(d, 1) {
				return d
			}
			return math.NaN()
		}),
	tables.I64("steps", "1", "", "", "time steps read for the cell",
		func(c *cellRow) int64 { return int64(c.r.sum.Steps) }).When(nullNoCell),
	tables.F64(contract.ColCoverage, "1", "", "", "share of the record's time with a valid wave power",
		func(c *cellRow) float64 { return c.r.sum.CoverageFrac }).When(nullNoData),
	tables.F64(contract.ColPowerMean, "kW/m", "", "time: mean", "mean omnidirectional wave power J",
		func(c *cellRow) float64 { return c.r.sum.PowerMeanKWm }).When(nullNoData),
	tables.F64("power_std_kw_m", "kW/m", "", "time: standard_deviation", "standard deviation of J",
		func(c *cellRow) float64 { return c.r.sum.PowerStdKWm }).When(nullNoData),
	tables.F64("power_cov", "1", "", "", "coefficient of variation of J (std / mean)",
		func(c *cellRow) float64 { return c.r.sum.PowerCoV }).When(nullNoData),
	tables.F64("power_max_kw_m", "kW/m", "", "time: maximum", "largest J of the record",
		func(c *cellRow) float64 { return c.r.sum.PowerMaxKWm }).When(nullNoData),
	tables.F64("power_p<P>_kw_m", "kW/m", "", "", "<P> th percentile of J (histogram, resolution stated in the manifest)",
		func(c *cellRow) float64 { return c.r.sum.PowerPercentilesKWm[c.k] }).When(nullNoData).Per(tables.ParamPercentile),
	tables.F64(contract.ColHm0Mean, "m", tables.CFHm0, "time: mean", "mean significant wave height Hm0",
		func(c *cellRow) float64 { return c.r.sum.Hm0MeanM }).When(nullNoData),
	tables.F64("hm0_p<P>_m", "m", "", "", "<P> th percentile of Hm0 (histogram bins of <bin> m)",
		func(c *cellRow) float64 { return c.r.sum.Hm0PercentilesM[c.k] }).When(nullNoData).Per(tables.ParamPercentile),
	tables.F64("hm0_max_m", "m", tables.CFHm0, "time: maximum", "largest Hm0 of the record",
		func(c *cellRow) float64 { return c.r.sum.Hm0MaxM }).When(nullNoData),
	tables.F64("te_mean_s", "s", tables.CFTe, "time: mean", "mean energy period Te",
		func(c *cellRow) float64 { return c.r.sum.TeMeanS }).When(nullNoData),
	tables.F64("tp_mean_s", "s", tables.CFTp, "time: mean", "mean peak period Tp",
		func(c *cellRow) float64 { return c.r.sum.TpMeanS }).When(nullNoData),
	tables.F64("dir_mean_deg", "degree", tables.CFDir, "time: mean", "time-weighted circular mean of the mean wave direction, nautical from (spectra: from the first-order directional moments)",
		func(c *cellRow) float64 { return c.r.sum.DirMeanDeg }).When(nullNoData),
	tables.F64("dir_max_power_deg", "degree", "", "", "direction of maximum directional power (spectra: power-weighted circular mean over sea states, not the mean direction; bulk: mean direction), nautical from",
		func(c *cellRow) float64 { return c.r.dirMax }).When(nullNoData),
	tables.F64("directionality", "1", "", "", "power-weighted mean directionality coefficient J_theta,max / J (spectra only)",
		func(c *cellRow) float64 { return c.r.direct }).When(nullNoData),
	tables.F64("width_mean", "1", "", "", "mean spectral width eps0 (spectra only)",
		func(c *cellRow) float64 { return c.r.width }).When(nullNoData),
	tables.F64(contract.ColMVI, "1", "", "", "monthly variability index: (most - least energetic calendar month mean J) / annual mean J",
		func(c *cellRow) float64 { return c.r.sum.MVI }).When(nullNoData),
	tables.F64("svi", "1", "", "", "seasonal variability index: (most - least energetic season mean J) / annual mean J",
		func(c *cellRow) float64 { return c.r.sum.SVI }).When(nullNoData),
	tables.F64("interannual_cov", "1", "", "", "coefficient of variation of the annual mean J over included years",
		func(c *cellRow) float64 { return c.r.sum.InterannualCoV }).When(nullNoData),
	tables.F64("interannual_std_kw_m", "kW/m", "", "", "sample standard deviation (ddof 1) of the annual mean J over the complete analysis years (annual.parquet; interannual_cov uses ddof 0 over calendar years)",
		func(c *cellRow) float64 { return c.r.iaStd }).When(nullNoData),
	tables.I64("annual_years", "1", "", "", "complete analysis years (wave-power coverage at least statistics.coverage_min) behind interannual_std_kw_m and the AEP bands",
		func(c *cellRow) int64 { return int64(c.r.iaYears) }).When(nullNoData),
	tables.F64("gev_loc_m", "m", "", "", "GEV location of annual maxima of Hm0 (maximum likelihood)",
		func(c *cellRow) float64 { return c.r.ext.GEV.Loc }).When(nullNoFit),
	tables.F64("gev_scale_m", "m", "", "", "GEV scale",
		func(c *cellRow) float64 { return c.r.ext.GEV.Scale }).When(nullNoFit),
	tables.F64("gev_shape", "1", "", "", "GEV shape, Coles (2001) sign: positive = heavy upper tail",
		func(c *cellRow) float64 { return c.r.ext.GEV.Shape }).When(nullNoFit),
	tables.I64("gev_years", "1", "", "", "complete years whose maxima entered the GEV fit",
		func(c *cellRow) int64 { return int64(c.r.ext.Years) }).When(nullNoFit),
	tables.F64("hm0_rl<T>y_m", "m", "", "", "<T>-year return level of Hm0, GEV on annual maxima (screening estimate)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.Hm0 }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("hm0_rl<T>y_lo_m", "m", "", "", "lower end of its 95% profile-likelihood interval",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.ProfLower }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("hm0_rl<T>y_hi_m", "m", "", "", "upper end of its 95% profile-likelihood interval (null: not bounded by the data)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.ProfUpper }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("te_rl<T>y_s", "s", "", "", "energy period associated with the GEV return level (see README)",
		func(c *cellRow) float64 { return gevLevel(c, func(l extremes.Level) float64 { return l.Te }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("gpd_threshold_m", "m", "", "", "peaks-over-threshold threshold of Hm0",
		func(c *cellRow) float64 { return c.r.ext.Threshold }).When(nullNoFit),
	tables.F64("gpd_scale_m", "m", "", "", "GPD scale of storm-peak excesses",
		func(c *cellRow) float64 { return c.r.ext.GPD.Scale }).When(nullNoFit),
	tables.F64("gpd_shape", "1", "", "", "GPD shape, Coles (2001) sign: positive = heavy upper tail",
		func(c *cellRow) float64 { return c.r.ext.GPD.Shape }).When(nullNoFit),
	tables.F64("gpd_peaks_per_year", "1/yr", "", "", "declustered storm peaks per year above the threshold",
		func(c *cellRow) float64 { return c.r.ext.PeaksPerYear }).When(nullNoFit),
	tables.F64("hm0_pot_rl<T>y_m", "m", "", "", "<T>-year return level of Hm0, GPD on storm peaks (screening estimate)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.Hm0 }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("hm0_pot_rl<T>y_lo_m", "m", "", "", "lower end of its 95% profile-likelihood interval (above the threshold)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.ProfLower }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("hm0_pot_rl<T>y_hi_m", "m", "", "", "upper end of its 95% profile-likelihood interval (null: not bounded by the data)",
		func(c *cellRow) float64 { return gpdLevel(c, func(l extremes.Level) float64 { return l.ProfUpper }) }).When(nullNoFit).Per(tables.ParamPeriod),
	tables.F64("hm0_depth_limit_m", "m", "", "", "depth-limited Hm0, extremes.breaking_ratio x depth: levels above it are flagged depth_limited (null: deep water or unknown depth)",
		func(c *cellRow) float64 { return c.r.ext.DepthLimit }).When(nullNoFit),
	tables.F64("design_hm0_<TD>y_m", "m", "", "", "largest Hm0 of the <TD>-year IFORM environmental contour (screening estimate; see design.parquet)",
		func(c *cellRow) float64 { return designLargest(c, func(p design.Point) float64 { return p.Hm0 }) }).When(nullNoFit).Per(tables.ParamDesign),
	tables.F64("design_te_<TD>y_s", "s", "", "", "median Te at the largest Hm0 of the <TD>-year contour",
		func(c *cellRow) float64 { return designLargest(c, func(p design.Point) float64 { return p.Te }) }).When(nullNoFit).Per(tables.ParamDesign),
	tables.F64("aep_<device>_mwh", "MWh/yr", "", "", "mean annual energy of device <device> from its power matrix",
		func(c *cellRow) float64 { return device(c).AEPMWh }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("cf_<device>", "1", "", "", "capacity factor of device <device>: mean power / rated power (rated_kw, else the largest matrix entry)",
		func(c *cellRow) float64 { return device(c).CapacityFactor }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("above_rated_<device>", "1", "", "", "share of incident wave energy arriving while <device> is at rated power",
		func(c *cellRow) float64 { return device(c).AboveRatedEnergyShare }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("below_cutin_<device>", "1", "", "", "share of incident wave energy arriving while <device> is below cut-in",
		func(c *cellRow) float64 { return device(c).BelowCutInEnergyShare }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("energy_outside_matrix_<device>_frac", "1", "", "", "share of incident wave energy arriving in sea states outside the power matrix of <device> (Hm0 above its top row's edge, or the period beyond its outer columns' edges), where it yields nothing",
		func(c *cellRow) float64 { return device(c).OutsideMatrixEnergyShare }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("access_wait_<device>_h", "h", "", "", "mean wait from a failure of <device> at a random instant to the first instant from which its repair (repair_h) can go on in an unbroken access window (Hm0 below access_hm0_m, and Te below access_te_s when set), from the record by duration (null: no access rule)",
		func(c *cellRow) float64 { return access(c).waitH }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("access_censored_<device>_frac", "1", "", "", "share of the record after its last access window for <device>: failures there wait until the record's end, so access_wait_<device>_h is a lower bound when this is large",
		func(c *cellRow) float64 { return access(c).censoredShare }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("availability_<device>", "1", "", "", "availability of <device>: 1 - failures_per_year (wait + repair_h) / 8766 h per calendar month of the failure, weighted by the device's energy in that month (see access.parquet; screening estimate)",
		func(c *cellRow) float64 { return access(c).availability }).When(nullNoData).Per(tables.ParamDevice),
	tables.F64("energy_available_<device>_mwh", "MWh/yr", "", "", "aep_<device>_mwh x availability_<device>: the device's yield with its downtime, before array interaction and export losses (screening.parquet adds them per scenario)",
		func(c *cellRow) float64 { return device(c).AEPMWh * access(c).availability }).When(nullNoData).Per(tables.ParamDevice),
	tables.I64("bad_bins", "1", "", "", "missing, negative or non-finite spectral densities seen, each set to 0",
		func(c *cellRow) int64 { return c.r.badBins }).When(nullNoCell),
	tables.I64("invalid_values", "1", "", "", "values that were present but unusable (negative, infinite or out of range), left out",
		func(c *cellRow) int64 { return int64(c.r.sum.InvalidValues) }).When(nullNoCell),
	tables.I64("rejected_steps", "1", "", "", "time steps that could not be placed in the calendar, left out",
		func(c *cellRow) int64 { return int64(c.r.sum.RejectedSteps) }).When(nullNoCell),
	tables.Str("corr_station", "", "validation station whose pairs correct the cell's sea states (uncertainty.correct; the nearest within uncertainty.reach_km); empty: no bias-corrected columns for the cell",
		func(c *cellRow) string { return corrOf(c).name }),
	tables.F64("corr_station_km", "km", "", "", "great-circle distance from the cell centre to corr_station",
		func(c *cellRow) float64 { return corrOf(c).km }).When(nullNoData),
	tables.F64("corr_hm0_slope", "1", "", "", "b_H: least-squares slope through the origin of measured on modelled Hm0 over corr_station's pairs; each sea state's Hm0' = b_H Hm0",
		func(c *cellRow) float64 { return corrOf(c).fit.slopeH }).When(nullNoData),
	tables.F64("corr_te_slope", "1", "", "", "b_T: the same for Te (1: too few Te pairs); Te' = b_T Te and Tp' = b_T Tp",
		func(c *cellRow) float64 { return corrOf(c).fit.slopeT }).When(nullNoData),
	tables.F64("hm0_mean_corr_m", "m", "", "time: mean", "bias-corrected: mean of Hm0' (beside hm0_mean_m, which stays raw)",
		func(c *cellRow) float64 { return corrSum(c, func(s *climate.Summary) float64 { return s.Hm0MeanM }) }).When(nullNoData),
	tables.F64("te_mean_corr_s", "s", "", "time: mean", "bias-corrected: mean of Te'",
		func(c *cellRow) float64 { return corrSum(c, func(s *climate.Summary) float64 { return s.TeMeanS }) }).When(nullNoData),
	tables.F64("power_mean_corr_kw_m", "kW/m", "", "time: mean", "bias-corrected: mean wave power of the corrected sea states, J(Hm0', Te') at the cell's depth, each step corrected before its power",
		func(c *cellRow) float64 {
			return corrSum(c, func(s *climate.Summary) float64 { return s.PowerMeanKWm })
		}).When(nullNoData),
	tables.F64("power_p<P>_corr_kw_m", "kW/m", "", "", "bias-corrected: <P> th percentile of J(Hm0', Te') (the raw histogram's resolution)",
		func(c *cellRow) float64 {
			return corrSum(c, func(s *climate.Summary) float64 { return s.PowerPercentilesKWm[c.k] })
		}).When(nullNoData).Per(tables.ParamPercentile),
	tables.F64("aep_<device>_corr_mwh", "MWh/yr", "", "", "bias-corrected: mean annual energy of device <device> from its power matrix at (Hm0', Te', Tp') of every step",
		func(c *cellRow) float64 {
			return corrSum(c, func(s *climate.Summary) float64 { return s.Devices[c.k].AEPMWh })
		}).When(nullNoData).Per(tables.ParamDevice),
	tables.Str(contract.ColQCFlags, "", "comma-separated quality flags (see README)",
		func(c *cellRow) string { return strings.Join(c.e.cellFlags(c.id, c.r), ",") }),
}

// noCorr is the correction of a cell without one: no station, NaN figures.
var noCorr = &cellCorr{km: math.NaN(), fit: &corrFit{slopeH: math.NaN(), slopeT: math.NaN()}}

// corrOf is the cell's bias correction (noCorr when it has none).
func corrOf(c *cellRow) *cellCorr {
	if c.r == nil || c.r.corrOf == nil {
		return noCorr
	}
	return c.r.corrOf
}

// corrSum is a figure of the cell's bias-corrected summary, NaN (null)
// when it has none.
func corrSum(c *cellRow, get func(*climate.Summary) float64) float64 {
	if c.r == nil || c.r.corr == nil {
		return math.NaN()
	}
	return get(c.r.corr)
}

// A row of a long table: the cell and one row of the cell's results.
type longRow[T any] struct {
	id   int
	name string
	v    T
}

func cellID[T any]() tables.Column[longRow[T]] {
	return tables.I64("cell_id", "1", "", "", "cell id", func(x longRow[T]) int64 { return int64(x.id) })
}

func cellName[T any]() tables.Column[longRow[T]] {
	return tables.Str("name", "", "station name of the cell (point sets: cf_role timeseries_id; empty when the files give none)", func(x longRow[T]) string { return x.name })
}

// monthlyRow is a year-month or calendar-month row (m) or a season row (s).
type monthlyRow struct {
	m *climate.MonthRow
	s *climate.SeasonRow
}

type mRow = longRow[monthlyRow]

var monthlySchema = []tables.Column[mRow]{
	cellID[monthlyRow](),
	cellName[monthlyRow](),
	tables.Str("period", "", "year_month, calendar_month (climatology over included years) or season_<DJF|MAM|JJA|SON>",
		func(x mRow) string {
			switch {
			case x.v.s != nil:
				return "season_" + x.v.s.Season
			case x.v.m.Year == 0:
				return "calendar_month"
			}
			return "year_month"
		}),
	tables.I64("year", "1", "", "", "year (0 for climatology and season rows)",
		func(x mRow) int64 {
			if x.v.s != nil {
				return 0
			}
			return int64(x.v.m.Year)
		}),
	tables.I64("month", "1", "", "", "month 1..12 (0 for season rows)",
		func(x mRow) int64 {
			if x.v.s != nil {
				return 0
			}
			return int64(x.v.m.Month)
		}),
	tables.F64(contract.ColPowerMean, "kW/m", "", "time: mean", "mean wave power",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.PowerMeanKWm
			}
			return x.v.m.PowerMeanKWm
		}),
	tables.F64(contract.ColHm0Mean, "m", tables.CFHm0, "time: mean", "mean Hm0",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.Hm0MeanM
			}
			return x.v.m.Hm0MeanM
		}),
	tables.F64("valid_hours", "h", "", "", "time with a valid wave power",
		func(x mRow) float64 {
			if x.v.s != nil {
				return x.v.s.ValidHours
			}
			return x.v.m.ValidHours
		}),
	tables.F64(contract.ColCoverage, "1", "", "", "year-month: valid share of the month (0: no data; every year-month of the record has a row); climatology: share of year-months included",
		func(x mRow) float64 {
			if x.v.s != nil {
				return math.NaN()
			}
			return x.v.m.Coverage
		}),
	tables.Bool("excluded", "", "year-month below the coverage threshold, left out of climatology and indices",
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

var scatterSchema = []tables.Column[sRow]{
	cellID[climate.ScatterRow](),
	cellName[climate.ScatterRow](),
	tables.F64("hm0_lo_m", "m", "", "", "Hm0 bin lower edge", func(x sRow) float64 { return x.v.Hm0LoM }),
	tables.F64("hm0_hi_m", "m", "", "", "Hm0 bin upper edge (null: open bin)", func(x sRow) float64 { return openEdge(x.v.Hm0HiM) }),
	tables.F64("te_lo_s", "s", "", "", "Te bin lower edge", func(x sRow) float64 { return x.v.TeLoS }),
	tables.F64("te_hi_s", "s", "", "", "Te bin upper edge (null: open bin)", func(x sRow) float64 { return openEdge(x.v.TeHiS) }),
	tables.F64("hours", "h", "", "", "time in the bin", func(x sRow) float64 { return x.v.Hours }),
	tables.F64("time_share", "1", "", "", "share of the table's time", func(x sRow) float64 { return x.v.TimeShare }),
	tables.F64(contract.ColPowerMean, "kW/m", "", "time: mean", "mean wave power in the bin", func(x sRow) float64 { return x.v.PowerMeanKWm }),
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

var exceedanceSchema = []tables.Column[xRow]{
	cellID[climate.ExceedRow](),
	cellName[climate.ExceedRow](),
	tables.Str("variable", "", "hm0_m or power_kw_m", func(x xRow) string { return x.v.Variable }),
	tables.F64("value", "m or kW/m", "", "", "level (histogram bin edge)", func(x xRow) float64 { return x.v.Value }),
	tables.F64("share_exceeded", "1", "", "", "share of valid time above the level", func(x xRow) float64 { return x.v.ShareExceeded }),
}

type wRow = longRow[climate.WindowRow]

var windowsSchema = []tables.Column[wRow]{
	cellID[climate.WindowRow](),
	cellName[climate.WindowRow](),
	tables.F64("hm0_limit_m", "m", "", "", "Hm0 limit of the window", func(x wRow) float64 { return x.v.LimitM }),
	tables.F64("min_duration_h", "h", "", "", "minimum window duration", func(x wRow) float64 { return x.v.DurationH }),
	tables.I64("month", "1", "", "", "calendar month 1..12", func(x wRow) int64 { return int64(x.v.Month) }),
	tables.F64("window_hours", "h", "", "", "time inside windows", func(x wRow) float64 { return x.v.WindowHours }),
	tables.F64("valid_hours", "h", "", "", "time with a valid Hm0", func(x wRow) float64 { return x.v.ValidHours }),
	tables.F64("fraction_in_windows", "1", "", "", "window_hours / valid_hours", func(x wRow) float64 { return x.v.FractionInWindows }),
	tables.I64("windows", "1", "", "", "windows beginning in this calendar month", func(x wRow) int64 { return int64(x.v.Windows) }),
	tables.F64("windows_per_month", "1", "", "", "mean number of windows per month", func(x wRow) float64 { return x.v.WindowsPerMonth }),
}

// extremesRow is one return level of one method.
type extremesRow struct {
	m *extremes.MethodResult
	l *extremes.Level
}

type eRow = longRow[extremesRow]

var extremesSchema = []tables.Column[eRow]{
	cellID[extremesRow](),
	cellName[extremesRow](),
	tables.Str("method", "", "gev_annual_maxima or gpd_storm_peaks", func(x eRow) string { return x.v.m.Method }),
	tables.F64("return_period_y", "yr", "", "", "return period", func(x eRow) float64 { return x.v.l.PeriodYears }),
	tables.F64("hm0_m", "m", "", "", "return level of Hm0 (screening estimate; see caution)", func(x eRow) float64 { return x.v.l.Hm0 }),
	tables.F64("hm0_lo_m", "m", "", "", "95% profile-likelihood interval, lower", func(x eRow) float64 { return x.v.l.ProfLower }),
	tables.F64("hm0_hi_m", "m", "", "", "95% profile-likelihood interval, upper (null: not bounded by the data)", func(x eRow) float64 { return x.v.l.ProfUpper }),
	tables.F64("hm0_delta_lo_m", "m", "", "", "95% delta-method interval, lower (truncated at 0 or the threshold)", func(x eRow) float64 { return x.v.l.Lower }),
	tables.F64("hm0_delta_hi_m", "m", "", "", "95% delta-method interval, upper", func(x eRow) float64 { return x.v.l.Upper }),
	tables.F64("hm0_boot_lo_m", "m", "", "", "95% parametric-bootstrap interval, lower (null unless asked)", func(x eRow) float64 { return x.v.l.BootLower }),
	tables.F64("hm0_boot_hi_m", "m", "", "", "95% parametric-bootstrap interval, upper (null unless asked)", func(x eRow) float64 { return x.v.l.BootUpper }),
	tables.F64("te_s", "s", "", "", "associated energy period", func(x eRow) float64 { return x.v.l.Te }),
	tables.F64("tp_s", "s", "", "", "associated peak period", func(x eRow) float64 { return x.v.l.Tp }),
	tables.F64("loc_or_threshold_m", "m", "", "", "GEV location or GPD threshold", func(x eRow) float64 { return x.v.m.Loc }),
	tables.F64("scale_m", "m", "", "", "scale", func(x eRow) float64 { return x.v.m.Scale }),
	tables.F64("shape", "1", "", "", "shape, Coles (2001) sign", func(x eRow) float64 { return x.v.m.Shape }),
	tables.I64("n", "1", "", "", "maxima or exceedances fitted", func(x eRow) int64 { return int64(x.v.m.N) }),
	tables.Str(contract.ColQCFlags, "", "flags of this return level: why it is null, or what is flagged about it (fit_flags: its fit's)", func(x eRow) string {
		return strings.Join(x.v.l.Flags.Names(), ",")
	}),
	tables.Str("fit_flags", "", "flags of the method's fit and its input, the same on each of its rows (e.g. incomplete_years, peaks_truncated, no_convergence)", func(x eRow) string {
		return strings.Join((x.v.m.Flags &^ extremes.LevelFlags).Names(), ",")
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
	tableName() string
	file() string
	specs() []tables.ColumnSpec
	build(res []*cellResult) *export.Table
}

type longSchema[T any] struct {
	name string
	cols []tables.Column[longRow[T]]
	rows func(r *cellResult) []T
}

func (s longSchema[T]) tableName() string { return s.name }

func (s longSchema[T]) file() string { return s.name + ".parquet" }

func (s longSchema[T]) specs() []tables.ColumnSpec { return tables.SpecsOf(s.file(), s.cols) }

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
		cols[k] = tables.Fill(&s.cols[k], s.cols[k].Name, s.cols[k].Doc, rows, nil)
	}
	return &export.Table{Columns: cols, Meta: map[string]string{export.MetaCaution: tables.Caution}, RowGroupRows: tables.RowGroupRows(len(cols))}
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
	longSchema[annualMaxRow]{"annual_maxima", annualMaxSchema, annualMaxRows},
	longSchema[yieldRow]{"monthly_yield", monthlyYieldSchema, monthlyYieldRows}, // schema_yield.go
	longSchema[climate.AEPBand]{"aep_bands", bandsSchema, bandRows},
	longSchema[accessRow]{"access", accessSchema, func(r *cellResult) []accessRow { return r.access }},
}

// Schema lists every column of every table the run writes, patterns
// unexpanded, cells.parquet first (the tables of `swellgrid validate` are
// validation.Specs).
func Schema() []tables.ColumnSpec {
	out := tables.SpecsOf("cells.parquet", cellsSchema)
	for _, t := range longSchemas {
		out = append(out, t.specs()...)
	}
	return append(out, screening.Schema()...)
}

// nullTest is the test of null rule n on a row of cells.parquet (nil: never null).
func nullTest(n tables.NullRule) func(*cellRow) bool {
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

func (e *engine) paramValues(p tables.Param) []paramValue {
	var out []paramValue
	switch p {
	case tables.ParamPercentile:
		for i, q := range e.ccfg.Percentiles {
			if e.userPercentile(q) {
				out = append(out, paramValue{i, periodTag(q), fmt.Sprintf("%g", q)})
			}
		}
	case tables.ParamPeriod:
		for i, t := range e.spec.Extremes.ReturnPeriodsY {
			out = append(out, paramValue{i, periodTag(t), fmt.Sprintf("%g", t)})
		}
	case tables.ParamDesign:
		if e.spec.Design.Enabled {
			for i, t := range e.spec.Design.ReturnPeriodsY {
				out = append(out, paramValue{i, periodTag(t), fmt.Sprintf("%g", t)})
			}
		}
	case tables.ParamDevice:
		for i, d := range e.ccfg.Devices {
			out = append(out, paramValue{i, d.Name, d.Name})
		}
	default:
		out = []paramValue{{0, "", ""}}
	}
	return out
}

// expand gives a pattern's name and description for one parameter value.
func (e *engine) expand(c *tables.ColumnSpec, v paramValue) (name, doc string) {
	name, doc = c.Name, c.Doc
	if c.Param != tables.NoParam {
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
	forEachCellColumn(e, func(c *tables.Column[*cellRow], v paramValue) {
		for _, row := range rows {
			row.k = v.k
		}
		name, doc := e.expand(&c.ColumnSpec, v)
		cols = append(cols, tables.Fill(c, name, doc, rows, nullTest(c.Null)))
	})
	return &export.Table{Columns: cols, Meta: map[string]string{export.MetaCaution: tables.Caution}, RowGroupRows: tables.RowGroupRows(len(cols))}
}

func sortByID(res []*cellResult) {
	sort.Slice(res, func(i, j int) bool { return res[i].id < res[j].id })
}

// cellsColumns lists the columns of this run's cells.parquet, patterns
// expanded, in file order (the GeoParquet geometry column, added by export,
// not included).
func (e *engine) cellsColumns() []tables.ColumnSpec {
	var out []tables.ColumnSpec
	forEachCellColumn(e, func(c *tables.Column[*cellRow], v paramValue) {
		s := c.ColumnSpec
		s.File, s.Type = "cells.parquet", c.ValueType()
		s.Name, s.Doc = e.expand(&c.ColumnSpec, v)
		out = append(out, s)
	})
	return out
}

// forEachCellColumn calls f for every column of cells.parquet in file order:
// each entry of cellsSchema with each value of its parameter, a block of
// consecutive entries with the same parameter repeated value by value.
func forEachCellColumn(e *engine, f func(c *tables.Column[*cellRow], v paramValue)) {
	for lo := 0; lo < len(cellsSchema); {
		hi := lo + 1
		for p := cellsSchema[lo].Param; p != tables.NoParam && hi < len(cellsSchema) && cellsSchema[hi].Param == p; hi++ {
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
var geometryColumn = tables.ColumnSpec{File: "cells.parquet", Name: "geometry", Type: "binary", Doc: "cell centre as a WKB point (lon, lat; OGC:CRS84)"}

// outputColumns lists every column of every table of this run, patterns expanded,
// keyed by file name: the manifest's column list.
func (e *engine) outputColumns() map[string][]tables.ColumnSpec {
	out := map[string][]tables.ColumnSpec{"cells.parquet": append(e.cellsColumns(), geometryColumn)}
	for _, t := range e.writtenLongTables() {
		out[t.file()] = t.specs()
	}
	if e.spec.Screening != nil {
		out["screening.parquet"] = screening.Specs(e.spec.Screening.DistanceLayers())
	}
	return out
}

// writtenLongTables are the long tables the run writes
// (output.long_tables: all by default), in longSchemas' order.
func (e *engine) writtenLongTables() []longTable {
	var out []longTable
	for _, t := range longSchemas {
		if e.spec.Output.WritesLongTable(t.tableName()) {
			out = append(out, t)
		}
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

var thresholdSchema = []tables.Column[tRow]{
	cellID[extremes.ThresholdRow](),
	tables.F64("quantile", "1", "", "", "quantile of the cell's Hm0 that sets the threshold", func(x tRow) float64 { return x.v.Quantile }),
	tables.F64("threshold_m", "m", "", "", "threshold of Hm0", func(x tRow) float64 { return x.v.Threshold }),
	tables.I64("n_peaks", "1", "", "", "declustered storm peaks above the threshold", func(x tRow) int64 { return int64(x.v.N) }),
	tables.F64("mean_excess_m", "m", "", "", "mean excess of the peaks over the threshold (mean residual life)", func(x tRow) float64 { return x.v.MeanExcess }),
	tables.F64("mean_excess_lo_m", "m", "", "", "95% normal interval of the mean excess, lower", func(x tRow) float64 { return x.v.MeanExcessLo }),
	tables.F64("mean_excess_hi_m", "m", "", "", "95% normal interval of the mean excess, upper", func(x tRow) float64 { return x.v.MeanExcessHi }),
	tables.F64("shape", "1", "", "", "GPD shape (Coles 2001 sign) of the peaks above the threshold", func(x tRow) float64 { return x.v.Shape }),
	tables.F64("shape_lo", "1", "", "", "95% delta-method interval of the shape, lower", func(x tRow) float64 { return x.v.ShapeLo }),
	tables.F64("shape_hi", "1", "", "", "95% delta-method interval of the shape, upper", func(x tRow) float64 { return x.v.ShapeHi }),
	tables.F64("modified_scale_m", "m", "", "", "modified scale sigma - xi u, constant above a threshold where the GPD holds", func(x tRow) float64 { return x.v.ModScale }),
	tables.F64("modified_scale_lo_m", "m", "", "", "95% delta-method interval of the modified scale, lower", func(x tRow) float64 { return x.v.ModScaleLo }),
	tables.F64("modified_scale_hi_m", "m", "", "", "95% delta-method interval of the modified scale, upper", func(x tRow) float64 { return x.v.ModScaleHi }),
}

func ladderRows(r *cellResult) []extremes.ThresholdRow { return r.ladder }

// designRow is one point of one environmental contour.
type designRow struct {
	T     float64
	point int
	p     design.Point
}

type dRow = longRow[designRow]

var designSchema = []tables.Column[dRow]{
	cellID[designRow](),
	tables.F64("return_period_y", "yr", "", "", "return period of the environmental contour", func(x dRow) float64 { return x.v.T }),
	tables.I64("point", "1", "", "", "point index along the contour, from its largest Hm0 anticlockwise in standard normal space", func(x dRow) int64 { return int64(x.v.point) }),
	tables.F64("hm0_m", "m", tables.CFHm0, "", "Hm0 of the contour point (IFORM; screening estimate, see caution)", func(x dRow) float64 { return x.v.p.Hm0 }),
	tables.F64("te_s", "s", tables.CFTe, "", "Te of the contour point", func(x dRow) float64 { return x.v.p.Te }),
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
var directionsSchema = []tables.Column[dirRow]{
	cellID[climate.DirectionRow](),
	cellName[climate.DirectionRow](),
	tables.I64("sector", "1", "", "", "direction sector, 0 centred on north, numbered clockwise", func(x dirRow) int64 { return int64(x.v.Sector) }),
	tables.F64("sector_centre_deg", "degree", "", "", "centre of the sector, direction the waves come from (nautical, clockwise from north)", func(x dirRow) float64 { return x.v.CentreDeg }),
	tables.F64("sector_from_deg", "degree", "", "", "clockwise start of the sector (included)", func(x dirRow) float64 { return x.v.FromDeg }),
	tables.F64("sector_to_deg", "degree", "", "", "clockwise end of the sector (excluded)", func(x dirRow) float64 { return x.v.ToDeg }),
	tables.F64("power_share", "1", "", "", "share of the record's wave energy arriving from the sector", func(x dirRow) float64 { return x.v.PowerShare }),
	tables.F64("occurrence_share", "1", "", "", "share of the time whose mean wave direction lies in the sector", func(x dirRow) float64 { return x.v.OccurrenceShare }),
	tables.F64(contract.ColPowerMean, "kW/m", "", "time: mean", "time-mean wave power arriving from the sector (the sectors sum to the mean power of the steps with a direction)", func(x dirRow) float64 { return x.v.PowerMeanKWm }),
	tables.F64("occurrence_hours", "h", "", "", "time whose mean wave direction lies in the sector", func(x dirRow) float64 { return x.v.OccurrenceHours }),
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
var annualSchema = []tables.Column[aRow]{
	cellID[annualRow](),
	cellName[annualRow](),
	tables.I64("year", "1", "", "", "analysis year, named by the calendar year it begins in (extremes.year_start_month; 1: the calendar year)",
		func(x aRow) int64 { return int64(x.v.y.Year) }),
	tables.Str("device", "", "empty: the wave resource row; else the device whose energy the row gives",
		func(x aRow) string {
			if x.v.dev < 0 {
				return ""
			}
			return x.v.sum.Devices[x.v.dev].Name
		}),
	tables.F64(contract.ColPowerMean, "kW/m", "", "time: mean", "resource row: duration-weighted mean wave power of the year (null on device rows)",
		func(x aRow) float64 {
			if x.v.dev >= 0 {
				return math.NaN()
			}
			return x.v.y.PowerMeanKWm
		}),
	tables.F64("energy_mwh", "MWh", "", "", "device row: the device's energy in the year, its mean power over the steps with a valid Hm0 and period times the year's hours (null on resource rows)",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return math.NaN()
			}
			return x.v.y.DeviceEnergyMWh[x.v.dev]
		}),
	tables.F64("valid_hours", "h", "", "", "time with a valid wave power (resource row) or a valid Hm0 and matrix period (device row)",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return x.v.y.ValidHours
			}
			return x.v.y.DeviceValidHours[x.v.dev]
		}),
	tables.F64("hours", "h", "", "", "length of the analysis year in the data's calendar",
		func(x aRow) float64 { return x.v.y.Hours }),
	tables.F64("coverage_frac", "1", "", "", "valid_hours / hours",
		func(x aRow) float64 {
			if x.v.dev < 0 {
				return x.v.y.CoverageFrac
			}
			return x.v.y.DeviceCoverageFrac[x.v.dev]
		}),
	tables.Bool("excluded", "", "the year's wave-power coverage is below statistics.coverage_min: left out of interannual_std_kw_m and the AEP bands",
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

// annualMaxRow is one analysis year's maximum as the GEV saw it
// (extremes.Result.AnnualMaxima) with its time in the data's calendar.
type annualMaxRow struct {
	m    extremes.AnnualMax
	time string
}

type amRow = longRow[annualMaxRow]

// annualMaxSchema: the GEV's input, one row per analysis year with valid
// data, taken from extremes.Analyse (not recomputed), the years left out of
// the fit flagged.
var annualMaxSchema = []tables.Column[amRow]{
	cellID[annualMaxRow](),
	cellName[annualMaxRow](),
	tables.I64("year", "1", "", "", "analysis year, named by the calendar year it begins in (extremes.year_start_month; 1: the calendar year)",
		func(x amRow) int64 { return int64(x.v.m.Year) }),
	tables.Str("time", "", "time of the year's largest Hm0 (the earliest on ties) in the data's calendar, YYYY-MM-DD hh:mm:ss",
		func(x amRow) string { return x.v.time }),
	tables.F64("hm0_m", "m", tables.CFHm0, "time: maximum", "the year's largest Hm0", func(x amRow) float64 { return x.v.m.Hm0 }),
	tables.F64("te_s", "s", tables.CFTe, "", "Te of the maximum's time step (null where the step has none)", func(x amRow) float64 { return x.v.m.Te }),
	tables.F64("tp_s", "s", tables.CFTp, "", "Tp of the maximum's time step (null where the step has none)", func(x amRow) float64 { return x.v.m.Tp }),
	tables.F64("valid_hours", "h", "", "", "the year's time with a valid Hm0", func(x amRow) float64 { return float64(x.v.m.ValidMinutes) / 60 }),
	tables.F64("full_year_hours", "h", "", "", "length of a full year for the coverage: the longest analysis year of the record in the data's calendar (or the longest covered year)",
		func(x amRow) float64 { return float64(x.v.m.FullMinutes) / 60 }),
	tables.F64("coverage_frac", "1", "", "", "valid_hours / full_year_hours", func(x amRow) float64 { return x.v.m.Coverage }),
	tables.Bool("excluded", "", "coverage_frac is below the GEV's minimum year coverage (0.8): the maximum is left out of the GEV fit",
		func(x amRow) bool { return !x.v.m.InGEV }),
}

func annualMaxRows(r *cellResult) []annualMaxRow {
	if !r.hasExt {
		return nil
	}
	return r.amax
}

type bRow = longRow[climate.AEPBand]

// bandsSchema: the P50/P90/P99 annual energy of each device per horizon
// with its uncertainty components (climate.AEPBands; screening estimates,
// see the README).
var bandsSchema = []tables.Column[bRow]{
	cellID[climate.AEPBand](),
	cellName[climate.AEPBand](),
	tables.Str("device", "", "device", func(x bRow) string { return x.v.Device }),
	tables.F64("horizon_y", "yr", "", "", "future period whose mean annual energy the band is for (uncertainty.horizons_y)", func(x bRow) float64 { return x.v.HorizonY }),
	tables.I64("years_used", "1", "", "", "complete analysis years behind the inter-annual spread", func(x bRow) int64 { return int64(x.v.YearsUsed) }),
	tables.F64("aep_p50_mwh", "MWh/yr", "", "", "P50: the long-term mean annual energy (aep_<device>_mwh of cells.parquet)", func(x bRow) float64 { return x.v.P50MWh }),
	tables.F64("interannual_frac", "1", "", "", "sample standard deviation (ddof 1) of the complete years' mean device power over their mean", func(x bRow) float64 { return x.v.InterannualFrac }),
	tables.F64("u_record_frac", "1", "", "", "uncertainty of the long-term mean from the record length: interannual_frac / sqrt(years_used)", func(x bRow) float64 { return x.v.RecordFrac }),
	tables.F64("u_future_frac", "1", "", "", "variability of the mean of horizon_y future years: interannual_frac / sqrt(horizon_y)", func(x bRow) float64 { return x.v.FutureFrac }),
	tables.Str("model_station", "", "validation station whose pairs give the model uncertainty (the nearest within uncertainty.reach_km of the cell); empty: none applies, u_model_frac is uncertainty.model_frac", func(x bRow) string { return x.v.Model.Station }),
	tables.F64("model_station_km", "km", "", "", "great-circle distance from the cell centre to model_station", func(x bRow) float64 { return x.v.Model.StationKm }),
	tables.F64("power_bias_frac", "1", "", "", "relative bias of the hindcast's mean wave power at model_station: sum(power_model) / sum(power_obs) - 1 over its pairs", func(x bRow) float64 { return x.v.Model.PowerBiasFrac }),
	tables.F64("power_bias_se_frac", "1", "", "", "standard error of power_bias_frac by the circular block bootstrap of the pairs (uncertainty.block_pairs, bootstrap_reps, seed)", func(x bRow) float64 { return x.v.Model.PowerBiasSEFrac }),
	tables.F64("aep_bias_frac", "1", "", "", "relative bias of the device's mean power (its AEP) at model_station, each side through the device's matrix: sum(P_model) / sum(P_obs) - 1", func(x bRow) float64 { return x.v.Model.BiasFrac }),
	tables.F64("aep_bias_se_frac", "1", "", "", "standard error of aep_bias_frac by the same bootstrap", func(x bRow) float64 { return x.v.Model.BiasSEFrac }),
	tables.F64("u_model_frac", "1", "", "", "model uncertainty: sqrt(aep_bias_frac^2 + aep_bias_se_frac^2) with a model_station, else uncertainty.model_frac (an assumption, see the manifest)", func(x bRow) float64 { return x.v.ModelFrac }),
	tables.F64("u_total_frac", "1", "", "", "root-sum-square of u_record_frac, u_future_frac and u_model_frac (independent errors)", func(x bRow) float64 { return x.v.TotalFrac }),
	tables.F64("aep_p90_mwh", "MWh/yr", "", "", "annual energy exceeded with 90 % probability: aep_p50_mwh (1 - 1.2816 u_total_frac) (null when not positive)", func(x bRow) float64 { return x.v.P90MWh }),
	tables.F64("aep_p99_mwh", "MWh/yr", "", "", "annual energy exceeded with 99 % probability: aep_p50_mwh (1 - 2.3263 u_total_frac) (null when not positive)", func(x bRow) float64 { return x.v.P99MWh }),
}

func bandRows(r *cellResult) []climate.AEPBand { return r.bands }

type acRow = longRow[accessRow]

// accessSchema is access.parquet: per cell, device with an access rule and
// calendar month, the repair access (see pipelines/engine/delivery.go).
var accessSchema = []tables.Column[acRow]{
	cellID[accessRow](),
	cellName[accessRow](),
	tables.Str("device", "", "device (a [[device]] with failures_per_year, repair_h and access_hm0_m)", func(x acRow) string { return x.v.device }),
	tables.I64("month", "1", "", "", "calendar month 1..12 of the failure", func(x acRow) int64 { return int64(x.v.month) }),
	tables.F64("record_hours", "h", "", "", "covered time of the calendar month over the record", func(x acRow) float64 { return x.v.hours }),
	tables.F64("access_wait_h", "h", "", "", "mean wait from a failure in the month to the first instant from which the repair can go on in an unbroken access window", func(x acRow) float64 { return x.v.waitH }),
	tables.F64("availability", "1", "", "", "1 - failures_per_year (access_wait_h + repair_h) / 8766 h, clipped to [0, 1]", func(x acRow) float64 { return x.v.availability }),
	tables.F64("energy_share", "1", "", "", "share of the device's energy over the record produced in the calendar month (the weight of availability_<device> in cells.parquet)", func(x acRow) float64 { return x.v.energyShare }),
}
