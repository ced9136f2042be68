package pipelines

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/stats/climate"
	"swellgrid/stats/extremes"
)

// cellResult is everything reported for one cell, computed once its state is
// complete; the long-table rows are kept as the stats packages give them.
type cellResult struct {
	id      int
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
	maxima  []extremes.Maximum
}

// finish computes the results of one cell from its state (fits included).
func (e *engine) finish(id int, c *cell, acfg extremes.AnalysisConfig) *cellResult {
	r := &cellResult{id: id, sum: c.clim.Summary(), width: math.NaN(), dirMax: math.NaN(), direct: math.NaN()}
	if c.spec != nil {
		r.width, r.dirMax, r.direct, r.badBins = c.spec.WidthMean(), c.spec.DirMaxPowerDeg(), c.spec.Directionality(), c.spec.BadBins
	} else {
		r.dirMax = r.sum.DirMeanDeg
	}
	r.monthly, r.season, r.scatter, r.exceed, r.windows = c.clim.MonthlyOver(e.recordMonths()), c.clim.Seasonal(), c.clim.Scatter(), c.clim.Exceedance(), c.clim.Windows()
	if r.sum.Steps > 0 {
		cfg := acfg
		if e.spec.Extremes.ThresholdRule == "quantile" {
			cfg.Threshold = extremes.ThresholdHm0
			cfg.ThresholdValue = percentileOf(r.sum, 100*e.spec.Extremes.ThresholdQuantile)
		}
		r.ext = extremes.Analyse(c.col, cfg)
		r.hasExt = true
		r.maxima = c.col.AnnualMaxima()
	}
	return r
}

// recordMonths returns the first and last year-month of the record (its
// first and last time step): monthly.parquet has a row for every year-month
// between them, those without data included (coverage 0, excluded).
func (e *engine) recordMonths() (y0, m0, y1, m1 int) {
	ts := e.cat.Times()
	if len(ts) == 0 {
		return 0, 1, -1, 1
	}
	a, b := e.cat.Date(ts[0]), e.cat.Date(ts[len(ts)-1])
	return a.Year, a.Month, b.Year, b.Month
}

func percentileOf(s climate.Summary, p float64) float64 {
	for i, l := range s.PercentileLevels {
		if math.Abs(l-p) < 1e-9 {
			return s.Hm0PercentilesM[i]
		}
	}
	return math.NaN()
}

// periodTag names a return period in a column: 100 -> "100", 2.5 -> "2p5".
func periodTag(t float64) string {
	return strings.ReplaceAll(strconv.FormatFloat(t, 'f', -1, 64), ".", "p")
}

func pctTag(p float64) string { return periodTag(p) }

// cellsTable builds cells.parquet: one row per cell of the grid, in cell-id
// order; cells without data have null results.
func (e *engine) cellsTable(res []*cellResult) *export.Table {
	g := e.cat.Grid
	n := g.NCells()
	byID := make([]*cellResult, n)
	for _, r := range res {
		byID[r.id] = r
	}
	var cols []export.Column
	f64 := func(name, unit, doc string, get func(r *cellResult) float64) {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.NaN()
			if r := byID[i]; r != nil && r.sum.Steps > 0 {
				v[i] = get(r)
			}
		}
		cols = append(cols, export.Float64Column(name, unit, doc, v))
	}
	ids := make([]int64, n)
	for i := range ids {
		ids[i] = int64(i)
	}
	cols = append(cols, export.Int64Column("cell_id", "1", "stable cell id: index in swellgrid's canonical cell order", ids, nil))
	cols = append(cols, export.Float64Column("lon", "degree_east", "cell longitude, WGS 84, [-180, 180)", append([]float64(nil), g.Lon...)))
	cols = append(cols, export.Float64Column("lat", "degree_north", "cell latitude, WGS 84", append([]float64(nil), g.Lat...)))
	depth := make([]float64, n)
	for i, d := range e.cat.Depth {
		depth[i] = d
		if math.IsInf(d, 1) {
			depth[i] = math.NaN()
		}
	}
	cols = append(cols, export.Float64Column("depth_m", "m", "water depth used for group velocity (null: deep-water assumption or unknown)", depth))
	steps := make([]int64, n)
	valid := make([]bool, n)
	for i, r := range byID {
		if r != nil {
			steps[i], valid[i] = int64(r.sum.Steps), true
		}
	}
	cols = append(cols, export.Int64Column("steps", "1", "time steps read for the cell", steps, valid))
	f64("coverage", "1", "share of the record's time with a valid wave power", func(r *cellResult) float64 { return r.sum.CoverageFrac })
	f64("power_mean_kw_m", "kW/m", "mean omnidirectional wave power J", func(r *cellResult) float64 { return r.sum.PowerMeanKWm })
	f64("power_std_kw_m", "kW/m", "standard deviation of J", func(r *cellResult) float64 { return r.sum.PowerStdKWm })
	f64("power_cov", "1", "coefficient of variation of J (std / mean)", func(r *cellResult) float64 { return r.sum.PowerCoV })
	f64("power_max_kw_m", "kW/m", "largest J of the record", func(r *cellResult) float64 { return r.sum.PowerMaxKWm })
	for i, p := range e.ccfg.Percentiles {
		i := i
		if !e.userPercentile(p) {
			continue
		}
		f64("power_p"+pctTag(p)+"_kw_m", "kW/m", fmt.Sprintf("%g th percentile of J (histogram, resolution stated in the manifest)", p), func(r *cellResult) float64 { return r.sum.PowerPercentilesKWm[i] })
	}
	f64("hm0_mean_m", "m", "mean significant wave height Hm0", func(r *cellResult) float64 { return r.sum.Hm0MeanM })
	for i, p := range e.ccfg.Percentiles {
		i := i
		if !e.userPercentile(p) {
			continue
		}
		f64("hm0_p"+pctTag(p)+"_m", "m", fmt.Sprintf("%g th percentile of Hm0 (histogram bins of %g m)", p, e.ccfg.Hm0HistResM), func(r *cellResult) float64 { return r.sum.Hm0PercentilesM[i] })
	}
	f64("hm0_max_m", "m", "largest Hm0 of the record", func(r *cellResult) float64 { return r.sum.Hm0MaxM })
	f64("te_mean_s", "s", "mean energy period Te", func(r *cellResult) float64 { return r.sum.TeMeanS })
	f64("tp_mean_s", "s", "mean peak period Tp", func(r *cellResult) float64 { return r.sum.TpMeanS })
	f64("dir_mean_deg", "degree", "time-weighted circular mean of the mean wave direction, nautical from (spectra: from the first-order directional moments)", func(r *cellResult) float64 { return r.sum.DirMeanDeg })
	f64("dir_max_power_deg", "degree", "direction of maximum directional power (spectra: power-weighted circular mean over sea states; bulk: mean direction), nautical from", func(r *cellResult) float64 { return r.dirMax })
	f64("directionality", "1", "power-weighted mean directionality coefficient J_theta,max / J (spectra only)", func(r *cellResult) float64 { return r.direct })
	f64("width_mean", "1", "mean spectral width eps0 (spectra only)", func(r *cellResult) float64 { return r.width })
	f64("mvi", "1", "monthly variability index: (most - least energetic calendar month mean J) / annual mean J", func(r *cellResult) float64 { return r.sum.MVI })
	f64("svi", "1", "seasonal variability index: (most - least energetic season mean J) / annual mean J", func(r *cellResult) float64 { return r.sum.SVI })
	f64("interannual_cov", "1", "coefficient of variation of the annual mean J over included years", func(r *cellResult) float64 { return r.sum.InterannualCoV })
	ext := func(get func(r *cellResult) float64) func(r *cellResult) float64 {
		return func(r *cellResult) float64 {
			if !r.hasExt {
				return math.NaN()
			}
			return get(r)
		}
	}
	f64("gev_loc_m", "m", "GEV location of annual maxima of Hm0 (maximum likelihood)", ext(func(r *cellResult) float64 { return r.ext.GEV.Loc }))
	f64("gev_scale_m", "m", "GEV scale", ext(func(r *cellResult) float64 { return r.ext.GEV.Scale }))
	f64("gev_shape", "1", "GEV shape, Coles (2001) sign: positive = heavy upper tail", ext(func(r *cellResult) float64 { return r.ext.GEV.Shape }))
	gy := make([]int64, n)
	gv := make([]bool, n)
	for i, r := range byID {
		if r != nil && r.hasExt {
			gy[i], gv[i] = int64(r.ext.Years), true
		}
	}
	cols = append(cols, export.Int64Column("gev_years", "1", "complete years whose maxima entered the GEV fit", gy, gv))
	for k, T := range e.spec.Extremes.ReturnPeriodsY {
		k, tag := k, periodTag(T)
		lvl := func(m func(r *cellResult) *extremes.MethodResult, get func(l extremes.Level) float64) func(r *cellResult) float64 {
			return ext(func(r *cellResult) float64 {
				mr := m(r)
				if k >= len(mr.Levels) {
					return math.NaN()
				}
				return get(mr.Levels[k])
			})
		}
		gev := func(r *cellResult) *extremes.MethodResult { return &r.ext.GEV }
		f64("hm0_rl"+tag+"y_m", "m", fmt.Sprintf("%g-year return level of Hm0, GEV on annual maxima (screening estimate)", T), lvl(gev, func(l extremes.Level) float64 { return l.Hm0 }))
		f64("hm0_rl"+tag+"y_lo_m", "m", "lower end of its 95% delta-method interval", lvl(gev, func(l extremes.Level) float64 { return l.Lower }))
		f64("hm0_rl"+tag+"y_hi_m", "m", "upper end of its 95% delta-method interval", lvl(gev, func(l extremes.Level) float64 { return l.Upper }))
		f64("te_rl"+tag+"y_s", "s", "energy period associated with the GEV return level (see README)", lvl(gev, func(l extremes.Level) float64 { return l.Te }))
	}
	f64("gpd_threshold_m", "m", "peaks-over-threshold threshold of Hm0", ext(func(r *cellResult) float64 { return r.ext.Threshold }))
	f64("gpd_scale_m", "m", "GPD scale of storm-peak excesses", ext(func(r *cellResult) float64 { return r.ext.GPD.Scale }))
	f64("gpd_shape", "1", "GPD shape, Coles (2001) sign: positive = heavy upper tail", ext(func(r *cellResult) float64 { return r.ext.GPD.Shape }))
	f64("gpd_peaks_per_year", "1/yr", "declustered storm peaks per year above the threshold", ext(func(r *cellResult) float64 { return r.ext.PeaksPerYear }))
	for k, T := range e.spec.Extremes.ReturnPeriodsY {
		k, tag := k, periodTag(T)
		get := func(f func(l extremes.Level) float64) func(r *cellResult) float64 {
			return ext(func(r *cellResult) float64 {
				if k >= len(r.ext.GPD.Levels) {
					return math.NaN()
				}
				return f(r.ext.GPD.Levels[k])
			})
		}
		f64("hm0_pot_rl"+tag+"y_m", "m", fmt.Sprintf("%g-year return level of Hm0, GPD on storm peaks (screening estimate)", T), get(func(l extremes.Level) float64 { return l.Hm0 }))
		f64("hm0_pot_rl"+tag+"y_lo_m", "m", "lower end of its 95% delta-method interval", get(func(l extremes.Level) float64 { return l.Lower }))
		f64("hm0_pot_rl"+tag+"y_hi_m", "m", "upper end of its 95% delta-method interval", get(func(l extremes.Level) float64 { return l.Upper }))
	}
	for k, d := range e.ccfg.Devices {
		k := k
		dev := func(f func(d climate.DeviceSummary) float64) func(r *cellResult) float64 {
			return func(r *cellResult) float64 { return f(r.sum.Devices[k]) }
		}
		f64("aep_"+d.Name+"_mwh", "MWh/yr", "mean annual energy of device "+d.Name+" from its power matrix", dev(func(d climate.DeviceSummary) float64 { return d.AEPMWh }))
		f64("cf_"+d.Name, "1", "capacity factor of device "+d.Name, dev(func(d climate.DeviceSummary) float64 { return d.CapacityFactor }))
		f64("above_rated_"+d.Name, "1", "share of incident wave energy arriving while "+d.Name+" is at rated power", dev(func(d climate.DeviceSummary) float64 { return d.AboveRatedEnergyShare }))
		f64("below_cutin_"+d.Name, "1", "share of incident wave energy arriving while "+d.Name+" is below cut-in", dev(func(d climate.DeviceSummary) float64 { return d.BelowCutInEnergyShare }))
	}
	bad := make([]int64, n)
	for i, r := range byID {
		if r != nil {
			bad[i] = r.badBins
		}
	}
	cols = append(cols, export.Int64Column("bad_bins", "1", "missing, negative or non-finite spectral densities seen, each set to 0", bad, valid))
	inv := make([]int64, n)
	rej := make([]int64, n)
	for i, r := range byID {
		if r != nil {
			inv[i], rej[i] = int64(r.sum.InvalidValues), int64(r.sum.RejectedSteps)
		}
	}
	cols = append(cols, export.Int64Column("invalid_values", "1", "values that were present but unusable (negative, infinite or out of range), left out", inv, valid))
	cols = append(cols, export.Int64Column("rejected_steps", "1", "time steps that could not be placed in the calendar, left out", rej, valid))
	flags := make([]string, n)
	for i, r := range byID {
		flags[i] = strings.Join(e.cellFlags(i, r), ",")
	}
	cols = append(cols, export.StringColumn("qc_flags", "", "comma-separated quality flags (see README)", flags, nil))
	return &export.Table{Columns: cols, Meta: map[string]string{"swellgrid:caution": Caution}, RowGroupRows: 65536}
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
	if e.cat.Masked[id] {
		out = append(out, "masked")
	}
	if r == nil || r.sum.Steps == 0 {
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
	if r.hasExt {
		for _, n := range r.ext.GEV.Flags.Names() {
			out = append(out, "gev_"+n)
		}
		for _, n := range r.ext.GPD.Flags.Names() {
			out = append(out, "gpd_"+n)
		}
	}
	return out
}

// longTables builds the long tables, keyed by cell_id, rows in cell order.
func (e *engine) longTables(res []*cellResult) map[string]*export.Table {
	sort.Slice(res, func(i, j int) bool { return res[i].id < res[j].id })
	out := map[string]*export.Table{}
	{ // monthly.parquet (each year-month, then the calendar-month climatology with year 0) and seasons
		var id, year, month []int64
		var pw, hm, hrs, cov []float64
		var excl []bool
		var kind []string
		for _, r := range res {
			for _, m := range r.monthly {
				id, year, month = append(id, int64(r.id)), append(year, int64(m.Year)), append(month, int64(m.Month))
				pw, hm, hrs, cov = append(pw, m.PowerMeanKWm), append(hm, m.Hm0MeanM), append(hrs, m.ValidHours), append(cov, m.Coverage)
				excl = append(excl, m.Excluded)
				k := "year_month"
				if m.Year == 0 {
					k = "calendar_month"
				}
				kind = append(kind, k)
			}
			for _, s := range r.season {
				id, year, month = append(id, int64(r.id)), append(year, 0), append(month, 0)
				pw, hm, hrs, cov = append(pw, s.PowerMeanKWm), append(hm, s.Hm0MeanM), append(hrs, s.ValidHours), append(cov, math.NaN())
				excl = append(excl, false)
				kind = append(kind, "season_"+s.Season)
			}
		}
		out["monthly"] = &export.Table{Columns: []export.Column{
			export.Int64Column("cell_id", "1", "cell id", id, nil),
			export.StringColumn("period", "", "year_month, calendar_month (climatology over included years) or season_<DJF|MAM|JJA|SON>", kind, nil),
			export.Int64Column("year", "1", "year (0 for climatology and season rows)", year, nil),
			export.Int64Column("month", "1", "month 1..12 (0 for season rows)", month, nil),
			export.Float64Column("power_mean_kw_m", "kW/m", "mean wave power", pw),
			export.Float64Column("hm0_mean_m", "m", "mean Hm0", hm),
			export.Float64Column("valid_hours", "h", "time with a valid wave power", hrs),
			export.Float64Column("coverage", "1", "year-month: valid share of the month (0: no data; every year-month of the record has a row); climatology: share of year-months included", cov),
			export.BoolColumn("excluded", "", "year-month below the coverage threshold, left out of climatology and indices", excl, nil),
		}, RowGroupRows: 1 << 17}
	}
	{
		var id []int64
		var hl, hh, tl, th, hrs, share, pw []float64
		for _, r := range res {
			for _, s := range r.scatter {
				id = append(id, int64(r.id))
				hl, hh, tl, th = append(hl, s.Hm0LoM), append(hh, s.Hm0HiM), append(tl, s.TeLoS), append(th, s.TeHiS)
				hrs, share, pw = append(hrs, s.Hours), append(share, s.TimeShare), append(pw, s.PowerMeanKWm)
			}
		}
		out["scatter"] = &export.Table{Columns: []export.Column{
			export.Int64Column("cell_id", "1", "cell id", id, nil),
			export.Float64Column("hm0_lo_m", "m", "Hm0 bin lower edge", hl), export.Float64Column("hm0_hi_m", "m", "Hm0 bin upper edge (null: open bin)", hh),
			export.Float64Column("te_lo_s", "s", "Te bin lower edge", tl), export.Float64Column("te_hi_s", "s", "Te bin upper edge (null: open bin)", th),
			export.Float64Column("hours", "h", "time in the bin", hrs), export.Float64Column("time_share", "1", "share of the table's time", share),
			export.Float64Column("power_mean_kw_m", "kW/m", "mean wave power in the bin", pw),
		}, RowGroupRows: 1 << 17}
	}
	{
		var id []int64
		var vr []string
		var val, sh []float64
		for _, r := range res {
			for _, x := range r.exceed {
				id, vr, val, sh = append(id, int64(r.id)), append(vr, x.Variable), append(val, x.Value), append(sh, x.ShareExceeded)
			}
		}
		out["exceedance"] = &export.Table{Columns: []export.Column{
			export.Int64Column("cell_id", "1", "cell id", id, nil),
			export.StringColumn("variable", "", "hm0_m or power_kw_m", vr, nil),
			export.Float64Column("value", "m or kW/m", "level (histogram bin edge)", val),
			export.Float64Column("share_exceeded", "1", "share of valid time above the level", sh),
		}, RowGroupRows: 1 << 17}
	}
	{
		var id, month, nwin []int64
		var lim, dur, wh, vh, frac, wpm []float64
		for _, r := range res {
			for _, w := range r.windows {
				id, month, nwin = append(id, int64(r.id)), append(month, int64(w.Month)), append(nwin, int64(w.Windows))
				lim, dur, wh, vh = append(lim, w.LimitM), append(dur, w.DurationH), append(wh, w.WindowHours), append(vh, w.ValidHours)
				frac, wpm = append(frac, w.FractionInWindows), append(wpm, w.WindowsPerMonth)
			}
		}
		out["windows"] = &export.Table{Columns: []export.Column{
			export.Int64Column("cell_id", "1", "cell id", id, nil),
			export.Float64Column("hm0_limit_m", "m", "Hm0 limit of the window", lim),
			export.Float64Column("min_duration_h", "h", "minimum window duration", dur),
			export.Int64Column("month", "1", "calendar month 1..12", month, nil),
			export.Float64Column("window_hours", "h", "time inside windows", wh),
			export.Float64Column("valid_hours", "h", "time with a valid Hm0", vh),
			export.Float64Column("fraction_in_windows", "1", "window_hours / valid_hours", frac),
			export.Int64Column("windows", "1", "windows beginning in this calendar month", nwin, nil),
			export.Float64Column("windows_per_month", "1", "mean number of windows per month", wpm),
		}, RowGroupRows: 1 << 17}
	}
	{
		var id, n []int64
		var method []string
		var T, lvl, lo, hi, blo, bhi, te, tp, loc, scale, shape []float64
		var flags []string
		for _, r := range res {
			if !r.hasExt {
				continue
			}
			for _, m := range []*extremes.MethodResult{&r.ext.GEV, &r.ext.GPD} {
				for _, l := range m.Levels {
					id, n, method = append(id, int64(r.id)), append(n, int64(m.N)), append(method, m.Method)
					T, lvl, lo, hi = append(T, l.PeriodYears), append(lvl, l.Hm0), append(lo, l.Lower), append(hi, l.Upper)
					blo, bhi, te, tp = append(blo, l.BootLower), append(bhi, l.BootUpper), append(te, l.Te), append(tp, l.Tp)
					loc, scale, shape = append(loc, m.Loc), append(scale, m.Scale), append(shape, m.Shape)
					flags = append(flags, strings.Join(m.Flags.Names(), ","))
				}
			}
		}
		out["extremes"] = &export.Table{Columns: []export.Column{
			export.Int64Column("cell_id", "1", "cell id", id, nil),
			export.StringColumn("method", "", "gev_annual_maxima or gpd_storm_peaks", method, nil),
			export.Float64Column("return_period_y", "yr", "return period", T),
			export.Float64Column("hm0_m", "m", "return level of Hm0 (screening estimate; see caution)", lvl),
			export.Float64Column("hm0_lo_m", "m", "95% delta-method interval, lower", lo),
			export.Float64Column("hm0_hi_m", "m", "95% delta-method interval, upper", hi),
			export.Float64Column("hm0_boot_lo_m", "m", "95% parametric-bootstrap interval, lower (null unless asked)", blo),
			export.Float64Column("hm0_boot_hi_m", "m", "95% parametric-bootstrap interval, upper (null unless asked)", bhi),
			export.Float64Column("te_s", "s", "associated energy period", te),
			export.Float64Column("tp_s", "s", "associated peak period", tp),
			export.Float64Column("loc_or_threshold_m", "m", "GEV location or GPD threshold", loc),
			export.Float64Column("scale_m", "m", "scale", scale),
			export.Float64Column("shape", "1", "shape, Coles (2001) sign", shape),
			export.Int64Column("n", "1", "maxima or exceedances fitted", n, nil),
			export.StringColumn("qc_flags", "", "fit-quality flags", flags, nil),
		}, Meta: map[string]string{"swellgrid:caution": Caution}, RowGroupRows: 1 << 17}
	}
	return out
}

// Caution is carried by every output with return levels or resource figures.
const Caution = "Resource figures and extreme sea states from swellgrid are screening estimates from a model hindcast. " + extremes.Caution +
	" Sites chosen from these maps need site measurements and review under the applicable standards."
