package engine

import (
	"math"
	"slices"

	"swellgrid/ingest"

	"swellgrid/stats/climate"
	"swellgrid/stats/extremes"
)

// cellResult is everything reported for one cell, computed once its state is
// complete; the long-table rows are kept as the stats packages give them.
type cellResult struct {
	id      int
	name    string // station name of a point set ("" when the files give none)
	sum     climate.Summary
	ext     extremes.Result
	hasExt  bool
	width   float64
	dirMax  float64
	direct  float64
	badBins int64
	monthly []climate.MonthRow
	season  []climate.SeasonRow
	scatter []climate.ScatterRow
	exceed  []climate.ExceedRow
	windows []climate.WindowRow
	amax    []annualMaxRow          // the GEV's annual maxima (extremes.Result.AnnualMaxima) with their times
	ladder  []extremes.ThresholdRow // threshold diagnostics
	design  *cellDesign             // design sea states (nil: not asked or no data)
	dirs    []climate.DirectionRow  // directional distribution (nil: no step with power and direction)
	annual  []climate.YearRow       // analysis years with data
	bands   []climate.AEPBand       // AEP bands per device and horizon
	access  []accessRow             // repair access per device and calendar month
	yield   []climate.MonthYieldRow // each device's energy by calendar month and year-month
	iaYears int                     // complete analysis years
	iaStd   float64                 // inter-annual sample std of annual mean J, kW/m
	corr    *climate.Summary        // the bias-corrected state's summary (nil: none, or out of reach)
	corrOf  *cellCorr               // its station and slopes
}

// finish computes the results of one cell from its state (fits included).
func (e *engine) finish(id int, c *cell, acfg extremes.AnalysisConfig) *cellResult {
	r := &cellResult{id: id, name: e.cellName(id), sum: c.clim.Summary(), width: math.NaN(), dirMax: math.NaN(), direct: math.NaN()}
	if c.spec != nil {
		r.width, r.dirMax, r.direct, r.badBins = c.spec.WidthMean(), c.spec.DirMaxPowerDeg(), c.spec.Directionality(), c.spec.BadBins
	} else {
		r.dirMax = r.sum.DirMeanDeg
	}
	r.monthly, r.season, r.scatter, r.exceed, r.windows = c.clim.MonthlyIn(e.recordSpans()), c.clim.Seasonal(), c.clim.Scatter(), c.clim.Exceedance(), c.clim.Windows()
	r.dirs = c.clim.Directions()
	r.annual = c.clim.Annual(e.spec.Extremes.YearStartMonth)
	r.yield = c.clim.MonthlyYieldIn(e.recordSpans())
	r.iaYears, r.iaStd = climate.InterannualPower(r.annual)
	if c.corr != nil {
		cs := c.corr.st.Summary()
		r.corr, r.corrOf = &cs, c.corr
	}
	if r.sum.Steps > 0 {
		r.bands = climate.AEPBands(r.annual, r.sum.Devices, e.spec.Uncertainty.HorizonsY, e.model.forCell(e.cat.Grid.Lon[id], e.cat.Grid.Lat[id]))
		r.access = e.accessRows(r)
	}
	if r.sum.Steps > 0 {
		cfg := acfg
		cfg.Hm0Quantile = func(q float64) float64 { return percentileOf(r.sum, 100*q) }
		cfg.DepthM = e.cat.Depth[id]
		r.ext = extremes.Analyse(c.col, cfg)
		r.hasExt = true
		for _, m := range r.ext.AnnualMaxima {
			r.amax = append(r.amax, annualMaxRow{m: m, time: e.cat.Date(ingest.Stamp(math.Round(m.Hours * 3600))).String()})
		}
		r.ladder = ladderFor(r, c)
		r.design = e.designFor(r)
	}
	return r
}

// recordSpans returns the year-months of the record as spans (first and
// last k = 12 year + month-1, inclusive): monthly.parquet has a row for every
// year-month from the record's first step to its last, those without data
// included (coverage 0, excluded), except in whole years without any step:
// a run of years with steps is one span, so that a gap of centuries (a
// reference year mistyped in one file, accepted with input.allow_long_gaps)
// does not give a row per month of it. Computed once per run.
func (e *engine) recordSpans() [][2]int {
	e.spansOnce.Do(func() {
		ts := e.cat.Times()
		if len(ts) == 0 {
			return
		}
		first, last := e.cat.Date(ts[0]), e.cat.Date(ts[len(ts)-1])
		var years []int
		for _, s := range ts {
			if y := e.cat.Date(s).Year; len(years) == 0 || years[len(years)-1] != y {
				years = append(years, y)
			}
		}
		slices.Sort(years)
		years = slices.Compact(years)
		for i := 0; i < len(years); {
			j := i
			for j+1 < len(years) && years[j+1] == years[j]+1 {
				j++
			}
			e.spans = append(e.spans, [2]int{max(years[i]*12, first.Year*12+first.Month-1), min(years[j]*12+11, last.Year*12+last.Month-1)})
			i = j + 1
		}
	})
	return e.spans
}

func percentileOf(s climate.Summary, p float64) float64 {
	for i, l := range s.PercentileLevels {
		if math.Abs(l-p) < 1e-9 {
			return s.Hm0PercentilesM[i]
		}
	}
	return math.NaN()
}

func (e *engine) userPercentile(p float64) bool {
	for _, q := range e.spec.Statistics.Percentiles {
		if q == p {
			return true
		}
	}
	return false
}

// cellFlags lists a cell's quality flags in a fixed order.
func (e *engine) cellFlags(id int, r *cellResult) []string {
	var out []string
	// A cell whose every value is missing (land in a set that gives no
	// depth) is masked, as a cell masked by depth or a mask variable is.
	empty := r == nil || r.sum.Steps == 0 || r.sum.ValidPowerHours == 0 && math.IsNaN(r.sum.Hm0MeanM)
	if e.cat.Masked[id] || empty {
		out = append(out, "masked")
	}
	if empty {
		return append(out, "no_data")
	}
	if r.sum.CoverageFrac < e.spec.Statistics.CoverageMin {
		out = append(out, "low_coverage")
	}
	if len(r.sum.ExcludedYears) > 0 {
		out = append(out, "years_excluded")
	}
	if r.sum.MonthsExcluded > 0 {
		out = append(out, "months_excluded")
	}
	if r.badBins > 0 {
		out = append(out, "bad_spectral_bins")
	}
	if r.sum.InvalidValues > 0 {
		out = append(out, "invalid_values")
	}
	if r.sum.RejectedSteps > 0 {
		out = append(out, "rejected_steps")
	}
	if r.corr != nil {
		out = append(out, "bias_corrected")
	}
	if r.hasExt {
		for _, n := range r.ext.GEV.Flags.Names() {
			out = append(out, "gev_"+n)
		}
		for _, n := range r.ext.GPD.Flags.Names() {
			out = append(out, "gpd_"+n)
		}
	}
	return append(out, r.design.flags()...)
}

// cellName is the station name of cell id ("" when the files give none).
func (e *engine) cellName(id int) string {
	if e.cat.Names == nil {
		return ""
	}
	return e.cat.Names[id]
}
