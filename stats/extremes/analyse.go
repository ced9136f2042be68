package extremes

import (
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// ThresholdRule says how the peaks-over-threshold level is chosen.
type ThresholdRule int

const (
	// ThresholdPeaksPerYear chooses the threshold so that about
	// TargetPeaksPerYear storm peaks per year exceed it.
	ThresholdPeaksPerYear ThresholdRule = iota
	// ThresholdHm0 uses ThresholdValue (m) as given.
	ThresholdHm0
	// ThresholdQuantile uses the ThresholdQuantile quantile of the cell's
	// Hm0 over all its valid time steps, which the caller supplies through
	// AnalysisConfig.Hm0Quantile (the record's Hm0 distribution is not
	// part of a Collector); see POTThreshold.
	ThresholdQuantile
)

// Bootstrap asks for seeded parametric-bootstrap intervals (N = 0: none).
type Bootstrap struct {
	N    int    // number of resamples (e.g. 500)
	Seed uint64 // seed; the same seed gives the same intervals
}

// AnalysisConfig sets the fits and checks of Analyse; zero fields take defaults.
type AnalysisConfig struct {
	ReturnPeriods      []float64 // years; default 1, 5, 10, 25, 50, 100
	Threshold          ThresholdRule
	ThresholdValue     float64 // m, for ThresholdHm0
	TargetPeaksPerYear float64 // for ThresholdPeaksPerYear; default 3
	ThresholdQuantile  float64 // for ThresholdQuantile, in (0.5, 1); default 0.99
	// Hm0Quantile returns the q-quantile of the cell's Hm0 over all valid
	// time steps (NaN if unknown), for ThresholdQuantile; the caller sets it
	// per cell, for every q of Hm0Quantiles.
	Hm0Quantile        func(q float64) float64
	MinYears           int     // GEV: fewer analysed years publish no level; default 10
	MinPeaks           int     // GPD: fewer exceedances publish no level; default 20
	ShapeMin, ShapeMax float64 // shape range of a publishable fit; default -0.5, 0.5 (common practice for wave heights)
	// MaxExtrapolation: no level is published for a return period longer than
	// this many times the analysed record (GEV: analysed years; GPD: record
	// years); default 4 (common practice).
	MaxExtrapolation float64
	// MinYearCoverage is the share of a full year's time (the largest covered
	// time of any year) that a year's valid time must reach for its maximum to
	// count; default 0.8 (see Analyse).
	MinYearCoverage float64
	// YearHours, if set, gives the hours of analysis year y in the data's
	// calendar (8760, 8784, 8640 ...): the length of a full year (see
	// Analyse). Without it the fullest year of the record stands for one.
	YearHours func(year int) float64
	// RecordYears is the record length in years for the peak rate; default
	// the record's years of covered time (see Analyse).
	RecordYears float64
	// DepthM is the water depth of the cell (m; 0, NaN or +Inf: deep or
	// unknown, no limit). BreakingRatio (default 0.6) times DepthM is the
	// depth-limited Hm0 (see DepthLimit).
	DepthM        float64
	BreakingRatio float64
	Bootstrap     Bootstrap
}

func (c AnalysisConfig) withDefaults() AnalysisConfig {
	if len(c.ReturnPeriods) == 0 {
		c.ReturnPeriods = []float64{1, 5, 10, 25, 50, 100}
	}
	if !(c.TargetPeaksPerYear > 0) {
		c.TargetPeaksPerYear = 3
	}
	if !(c.ThresholdQuantile > 0) {
		c.ThresholdQuantile = 0.99
	}
	if c.MinYears <= 0 {
		c.MinYears = 10
	}
	if c.MinPeaks <= 0 {
		c.MinPeaks = 20
	}
	if c.ShapeMin == 0 && c.ShapeMax == 0 {
		c.ShapeMin, c.ShapeMax = -0.5, 0.5
	}
	if !(c.MaxExtrapolation > 0) {
		c.MaxExtrapolation = 4
	}
	if !(c.MinYearCoverage > 0) {
		c.MinYearCoverage = 0.8
	}
	if !(c.BreakingRatio > 0) {
		c.BreakingRatio = 0.6
	}
	return c
}

// DepthLimit returns the depth-limited significant wave height ratio x depth
// (NaN for deep or unknown depth: depth <= 0, NaN or +Inf). The default ratio
// 0.6 is common practice for the largest Hm0 a sea state reaches in shallow
// water: irregular waves on a gentle or flat bed saturate at about 0.5-0.6 of
// the depth (from memory: Nelson 1994, Coastal Engineering 23, 0.55 on
// horizontal beds; the Coastal Engineering Manual's surf-zone guidance), well
// below the 0.78 of a single breaking solitary wave (McCowan 1894).
func DepthLimit(depth, ratio float64) float64 {
	if !(depth > 0) || math.IsInf(depth, 1) {
		return math.NaN()
	}
	return ratio * depth
}

// Flag is a bitmask of fit-quality flags; a flagged fit still reports what it has.
type Flag uint32

const (
	FlagFewYears            Flag = 1 << iota // GEV: fewer analysed years than MinYears (no levels)
	FlagFewPeaks                             // GPD: fewer exceedances than MinPeaks (no levels)
	FlagShapeImplausible                     // shape outside [ShapeMin, ShapeMax] (no levels)
	FlagNoConvergence                        // the optimiser did not converge (no levels, no parameters)
	FlagSingularInformation                  // observed information not positive definite (no levels)
	FlagNoFit                                // too few values to fit at all
	FlagIncompleteYears                      // a year inside the record left out of the annual maxima for low coverage
	FlagPeaksTruncated                       // peaks above the threshold were dropped by MaxPeaksPerYear
	FlagPeriodOutsideModel                   // some return period has no level (GEV: T <= 1 y; GPD: below threshold)
	FlagExtrapolation                        // some return period exceeds MaxExtrapolation x the record (no level for it)
	FlagDepthLimited                         // a level, or its profile upper end, exceeds BreakingRatio x depth
	FlagBelowRecordMax                       // GEV: a level for T >= the record length lies below the largest analysed annual maximum
	FlagOpenInterval                         // a profile-likelihood upper end is not bounded by the data below PlausibleFactor x the record maximum (null)
)

var flagNames = []string{"few_years", "few_peaks", "shape_implausible", "no_convergence",
	"singular_information", "no_fit", "incomplete_years", "peaks_truncated", "period_outside_model",
	"extrapolation_limit", "depth_limited", "below_record_maximum", "open_interval"}

// PlausibleFactor times the record's largest Hm0 is the highest upper
// interval end reported: a profile-likelihood interval still open there is
// reported open (null, FlagOpenInterval). Common sense, not a standard: no sea
// state three times the largest of a multi-year record is a useful bound.
const PlausibleFactor = 3

// LevelFlags are the flags that describe one return level rather than its
// fit: one level of a fit may carry them while another does not.
const LevelFlags = FlagPeriodOutsideModel | FlagExtrapolation | FlagDepthLimited | FlagBelowRecordMax | FlagOpenInterval

// Withheld are the flags that stop a return level being published.
const Withheld = FlagFewYears | FlagFewPeaks | FlagShapeImplausible | FlagNoConvergence |
	FlagSingularInformation | FlagNoFit | FlagExtrapolation

// Names returns the names of the set flags, in bit order.
func (f Flag) Names() []string {
	var out []string
	for i, n := range flagNames {
		if f&(1<<i) != 0 {
			out = append(out, n)
		}
	}
	return out
}

// Level is one return level. Every field is NaN when the level is not
// published (see Publication).
type Level struct {
	PeriodYears float64
	Hm0         float64 // m
	ProfLower   float64 // 95% profile-likelihood interval, m (the default interval)
	ProfUpper   float64 // NaN when the data do not bound it (FlagOpenInterval)
	Lower       float64 // 95% delta-method interval, m, truncated at 0 (GEV) or the threshold (GPD)
	Upper       float64
	BootLower   float64 // 95% parametric-bootstrap percentile interval, m (NaN if not asked)
	BootUpper   float64
	Te          float64 // associated energy period, s (see Association)
	Tp          float64 // associated peak period, s
	Flags       Flag    // why this level is withheld, or what is flagged about it
}

// MethodResult is one method's fit and levels. For the GPD, Loc holds the
// threshold and StdErr[0] is NaN. Parameters are NaN unless the fit converged.
// Flags is the union of the levels' flags and the method's own.
type MethodResult struct {
	Method       string // "gev_annual_maxima" or "gpd_storm_peaks"
	Loc          float64
	Scale        float64
	Shape        float64
	StdErr       [3]float64
	LogLik       float64
	Converged    bool
	N            int     // maxima or exceedances used
	PeaksPerYear float64 // GPD: exceedances per year
	Levels       []Level
	BootFailed   int // bootstrap resamples whose fit failed (left out)
	Flags        Flag
}

// Association is the fitted relation of the periods to Hm0 over the largest
// storm peaks: T = exp(A + B ln Hm0), by least squares of ln T on ln Hm0.
type Association struct {
	TeA, TeB float64
	TpA, TpB float64
	N        int // peaks used
}

// Result is everything Analyse reports for one cell.
type Result struct {
	RecordYears  float64 // record length used for the peak rate, years of covered time
	Years        int     // complete years (by covered time) whose maxima entered the GEV fit
	MaxAnnual    float64 // largest analysed annual maximum, m (NaN if none)
	Threshold    float64 // m
	PeaksPerYear float64 // exceedances of the threshold per year of record (RecordYears)
	DepthLimit   float64 // BreakingRatio x depth, m (NaN: deep or unknown)
	GEV          MethodResult
	GPD          MethodResult
	GEVFit       GEVFit
	GPDFit       GPDFit
	Association  Association
	Flags        Flag // union of both methods' flags
	Caution      string
	// AnnualMaxima are the GEV's input as Analyse chose it: one entry per
	// analysis year with valid data, in year order, the ones with InGEV in
	// the fit (so that the fit can be audited and refitted elsewhere).
	AnnualMaxima []AnnualMax
}

// AnnualMax is one analysis year's maximum as the GEV sees it.
type AnnualMax struct {
	Maximum            // the year's largest Hm0 (earliest on ties), its time and the Te/Tp of that step
	ValidMinutes int64 // V_y: the year's valid time (steps with a finite Hm0), minutes
	FullMinutes  int64 // F: the length of a full year (see Analyse), minutes
	Coverage     float64
	// InGEV: the maximum entered the GEV fit (Coverage >= MinYearCoverage).
	InGEV bool
}

// FitQuality is what the publication policy needs to know about one fit.
type FitQuality struct {
	Fitted    bool    // a fit was attempted and returned (enough values for the parameters)
	Converged bool    // the optimiser converged at a finite optimum
	InfoOK    bool    // the observed information matrix is positive definite
	Shape     float64 // fitted shape, Coles (2001) sign
	N         int     // GEV: analysed years; GPD: exceedances
	Record    float64 // analysed record, years (GEV: analysed years; GPD: record length)
	PerPeaks  bool    // N counts peaks (GPD), not years (GEV)
}

// Publication is the one publication policy of return levels, for the GEV and
// the GPD alike. It returns the reasons (flags, one per reason) why the T-year
// level of a fit may not be published; zero means it may. A level is published
// only if the fit converged with a regular (positive definite) information
// matrix, its shape lies in [ShapeMin, ShapeMax], T is at most
// MaxExtrapolation times the analysed record, and there are at least MinYears
// annual maxima (GEV) or MinPeaks exceedances (GPD). The shape range, the
// extrapolation factor of 4 and the minimum counts are common practice for
// wave heights (e.g. Coles 2001, sections 2.6 and 4.3.4, on how uncertainty
// grows beyond the record; no single standard fixes the numbers).
func Publication(q FitQuality, T float64, cfg AnalysisConfig) Flag {
	cfg = cfg.withDefaults()
	if !q.Fitted {
		return FlagNoFit
	}
	var f Flag
	if !q.Converged {
		f |= FlagNoConvergence
	}
	if !q.InfoOK {
		f |= FlagSingularInformation
	}
	if !(q.Shape >= cfg.ShapeMin && q.Shape <= cfg.ShapeMax) {
		f |= FlagShapeImplausible
	}
	if !(T <= cfg.MaxExtrapolation*q.Record) {
		f |= FlagExtrapolation
	}
	if q.PerPeaks {
		if q.N < cfg.MinPeaks {
			f |= FlagFewPeaks
		}
	} else if q.N < cfg.MinYears {
		f |= FlagFewYears
	}
	return f
}

func nanLevel(T float64) Level {
	n := math.NaN()
	return Level{PeriodYears: T, Hm0: n, ProfLower: n, ProfUpper: n, Lower: n, Upper: n, BootLower: n, BootUpper: n, Te: n, Tp: n}
}

// Analyse fits both methods to a Collector's maxima and peaks and reports
// return levels with intervals, associated periods and flags. It never fails:
// problems are flags. Levels follow Publication; parameters are reported
// wherever the fit converged.
//
// Years are measured in time, not in steps (a record whose step changes has
// years of equal length but unequal step counts). With F the length of a
// full year — the longest calendar length (cfg.YearHours) of the record's
// years, or, without a calendar, the largest covered time of any year —,
// V_y the valid time of year y and sum V the valid time of the record
// (Collector.Years, whole minutes):
//
//	year y is complete, and its maximum enters the GEV, when V_y / F >= MinYearCoverage;
//	RecordYears = sum V / F (years of covered time), unless cfg.RecordYears > 0;
//	PeaksPerYear = exceedances / RecordYears.
//
// Both ratios are of integers, so a record of one constant step with a
// complete year of the longest length gives the same figures as counting
// steps (the step cancels exactly). With the calendar, a record of a few
// months has no complete year and the few months' length in years (a rate
// per year of its covered time); a gap in the fullest year counts as missing.
// The 0.8 default share is common practice, not a standard.
func Analyse(c *Collector, cfg AnalysisConfig) Result {
	cfg = cfg.withDefaults()
	res := Result{Caution: Caution, MaxAnnual: math.NaN(), DepthLimit: DepthLimit(cfg.DepthM, cfg.BreakingRatio)}

	// Annual maxima of sufficiently covered years. The first and last years of
	// a record are usually partial: leaving them out is normal and not flagged;
	// a year left out inside the record is.
	years := c.Years()
	var full int64  // F, minutes
	var valid int64 // sum V, minutes
	for _, y := range years {
		full = max(full, y.Minutes)
		if cfg.YearHours != nil {
			full = max(full, int64(math.Round(cfg.YearHours(y.Year)*60)))
		}
		valid += y.ValidMinutes
	}
	am := c.AnnualMaxima()
	var amx []float64
	var incomplete bool
	cov := map[int]int64{}
	for _, y := range years {
		cov[y.Year] = y.ValidMinutes
	}
	res.AnnualMaxima = make([]AnnualMax, len(am))
	for i, m := range am {
		share := float64(cov[m.Year]) / float64(full)
		res.AnnualMaxima[i] = AnnualMax{Maximum: m, ValidMinutes: cov[m.Year], FullMinutes: full, Coverage: share}
		if share >= cfg.MinYearCoverage {
			res.AnnualMaxima[i].InGEV = true
			amx = append(amx, m.Hm0)
			if !(m.Hm0 <= res.MaxAnnual) {
				res.MaxAnnual = m.Hm0
			}
		} else if i > 0 && i < len(am)-1 {
			incomplete = true
		}
	}
	res.Years = len(amx)
	// Interval upper ends are searched up to PlausibleFactor x the record's
	// largest Hm0; beyond, the interval is open (FlagOpenInterval).
	recMax := math.Inf(-1)
	for _, m := range am {
		recMax = math.Max(recMax, m.Hm0)
	}
	upLimit := PlausibleFactor * recMax
	res.RecordYears = cfg.RecordYears
	if !(res.RecordYears > 0) && full > 0 {
		res.RecordYears = float64(valid) / float64(full)
	}

	peaks := c.Peaks()
	res.Threshold = POTThreshold(peaks, cfg, res.RecordYears)
	var px []float64
	var exc []Maximum
	for _, p := range peaks {
		if p.Hm0 > res.Threshold {
			px = append(px, p.Hm0)
			exc = append(exc, p)
		}
	}
	if res.RecordYears > 0 {
		res.PeaksPerYear = float64(len(px)) / res.RecordYears
	}
	assocSet := exc
	if len(assocSet) < 5 {
		assocSet = am
	}
	res.Association = associate(assocSet)

	// GEV on annual maxima.
	g := MethodResult{Method: "gev_annual_maxima"}
	if incomplete {
		g.Flags |= FlagIncompleteYears
	}
	gf, err := FitGEV(amx)
	res.GEVFit = gf
	g.N = gf.N
	g.Loc, g.Scale, g.Shape, g.LogLik = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	g.StdErr = [3]float64{math.NaN(), math.NaN(), math.NaN()}
	if err == nil && gf.Converged {
		g.Loc, g.Scale, g.Shape, g.StdErr, g.LogLik, g.Converged = gf.Loc, gf.Scale, gf.Shape, gf.StdErr, gf.LogLik, true
	}
	gq := FitQuality{Fitted: err == nil, Converged: gf.Converged, InfoOK: gf.InfoOK, Shape: gf.Shape, N: len(amx), Record: float64(len(amx))}
	for _, T := range cfg.ReturnPeriods {
		lv := nanLevel(T)
		lv.Flags = Publication(gq, T, cfg)
		if lv.Flags&Withheld == 0 {
			lv.Hm0, lv.Lower, lv.Upper = gf.ReturnLevel(T)
			if math.IsNaN(lv.Hm0) {
				lv.Flags |= FlagPeriodOutsideModel
			} else {
				lv.ProfLower, lv.ProfUpper = gf.ProfileGEV(T, amx, upLimit)
				lv.Lower = math.Max(lv.Lower, 0)
				lv.ProfLower = math.Max(lv.ProfLower, 0)
				if T >= float64(res.Years) && lv.Hm0 < res.MaxAnnual {
					lv.Flags |= FlagBelowRecordMax
				}
			}
		}
		g.Levels = append(g.Levels, lv)
	}
	if cfg.Bootstrap.N > 0 && anyPublished(g.Levels) {
		g.BootFailed = bootstrapGEV(gf, cfg, g.Levels)
	}

	// GPD on storm peaks above the threshold.
	p := MethodResult{Method: "gpd_storm_peaks", Loc: res.Threshold, PeaksPerYear: res.PeaksPerYear}
	for _, y := range years {
		if y.DroppedPeaks > 0 && y.DroppedMaxHm0 > res.Threshold {
			p.Flags |= FlagPeaksTruncated
		}
	}
	pf, perr := FitGPD(px, res.Threshold, res.PeaksPerYear)
	res.GPDFit = pf
	p.N = pf.N
	p.StdErr = [3]float64{math.NaN(), math.NaN(), math.NaN()}
	p.Scale, p.Shape, p.LogLik = math.NaN(), math.NaN(), math.NaN()
	if perr == nil && pf.Converged {
		p.Scale, p.Shape, p.LogLik, p.Converged = pf.Scale, pf.Shape, pf.LogLik, true
		p.StdErr[1], p.StdErr[2] = pf.StdErr[0], pf.StdErr[1]
	}
	pq := FitQuality{Fitted: perr == nil, Converged: pf.Converged, InfoOK: pf.InfoOK, Shape: pf.Shape, N: len(px), Record: res.RecordYears, PerPeaks: true}
	for _, T := range cfg.ReturnPeriods {
		lv := nanLevel(T)
		lv.Flags = Publication(pq, T, cfg)
		if lv.Flags&Withheld == 0 {
			lv.Hm0, lv.Lower, lv.Upper = pf.ReturnLevel(T)
			if math.IsNaN(lv.Hm0) {
				lv.Flags |= FlagPeriodOutsideModel
			} else {
				lv.ProfLower, lv.ProfUpper = pf.ProfileGPD(T, px, upLimit)
				lv.Lower = math.Max(lv.Lower, res.Threshold)
			}
		}
		p.Levels = append(p.Levels, lv)
	}
	if cfg.Bootstrap.N > 0 && anyPublished(p.Levels) {
		p.BootFailed = bootstrapGPD(pf, res.RecordYears, cfg, p.Levels)
	}

	for _, m := range []*MethodResult{&g, &p} {
		for i := range m.Levels {
			lv := &m.Levels[i]
			if math.IsNaN(lv.Hm0) {
				lv.Lower, lv.Upper, lv.BootLower, lv.BootUpper = math.NaN(), math.NaN(), math.NaN(), math.NaN()
				lv.ProfLower, lv.ProfUpper = math.NaN(), math.NaN()
				m.Flags |= lv.Flags
				continue
			}
			if math.IsInf(lv.ProfUpper, 1) {
				lv.ProfUpper = math.NaN()
				lv.Flags |= FlagOpenInterval
			}
			// The bootstrap interval passes the same common-sense bounds as
			// the published level's other intervals: its upper end at most
			// PlausibleFactor x the record maximum (else open, null), its
			// lower end not below 0 (GEV) or the threshold (GPD). The
			// resamples themselves are not filtered by the shape policy (see
			// bootstrapGEV).
			if lv.BootUpper > upLimit {
				lv.BootUpper = math.NaN()
				lv.Flags |= FlagOpenInterval
			}
			if m == &g {
				lv.BootLower = math.Max(lv.BootLower, 0)
			} else {
				lv.BootLower = math.Max(lv.BootLower, res.Threshold)
			}
			if lim := res.DepthLimit; lv.Hm0 > lim || lv.ProfUpper > lim {
				lv.Flags |= FlagDepthLimited
			}
			lv.Te = res.Association.Te(lv.Hm0)
			lv.Tp = res.Association.Tp(lv.Hm0)
			m.Flags |= lv.Flags
		}
	}
	res.GEV, res.GPD = g, p
	res.Flags = g.Flags | p.Flags
	return res
}

func anyPublished(levels []Level) bool {
	for _, l := range levels {
		if !math.IsNaN(l.Hm0) {
			return true
		}
	}
	return false
}

// Hm0Quantiles returns the quantiles of a cell's Hm0 distribution (over all
// valid time steps) that the threshold rule needs from the caller through
// Hm0Quantile: the ThresholdQuantile for that rule, none for the others.
func (c AnalysisConfig) Hm0Quantiles() []float64 {
	c = c.withDefaults()
	if c.Threshold == ThresholdQuantile {
		return []float64{c.ThresholdQuantile}
	}
	return nil
}

// POTThreshold is the one threshold rule of the peaks-over-threshold (GPD)
// analysis of a cell, given its declustered storm peaks and the record
// length in years:
//
//   - ThresholdQuantile: u = Q(q), the q-quantile of the cell's Hm0 over all
//     valid time steps (cfg.Hm0Quantile(cfg.ThresholdQuantile); default
//     q = 0.99). A high quantile of the full record is common practice for
//     wave heights (threshold choice: Coles 2001, section 4.3.1; the 0.99
//     quantile is a customary metocean starting point, to be checked on the
//     threshold diagnostics).
//   - ThresholdPeaksPerYear: with k = round(TargetPeaksPerYear x years),
//     clamped to [1, n-1] for n peaks, u is the (k+1)-th largest storm peak,
//     so that (without ties) exactly k peaks exceed it, about
//     TargetPeaksPerYear a year; with one peak, u is that peak (common
//     practice: a target exceedance rate of a few storms a year).
//   - ThresholdHm0: u = cfg.ThresholdValue as given.
//
// NaN when the rule has no value (no peaks; no quantile supplied).
func POTThreshold(peaks []Maximum, cfg AnalysisConfig, years float64) float64 {
	cfg = cfg.withDefaults()
	switch cfg.Threshold {
	case ThresholdHm0:
		return cfg.ThresholdValue
	case ThresholdQuantile:
		if cfg.Hm0Quantile == nil {
			return math.NaN()
		}
		return cfg.Hm0Quantile(cfg.ThresholdQuantile)
	}
	if len(peaks) == 0 {
		return math.NaN()
	}
	v := make([]float64, len(peaks))
	for i, p := range peaks {
		v[i] = p.Hm0
	}
	sort.Sort(sort.Reverse(sort.Float64Slice(v)))
	if len(v) == 1 {
		return v[0]
	}
	k := int(math.Round(cfg.TargetPeaksPerYear * years))
	k = max(1, min(k, len(v)-1))
	return v[k]
}

// associate fits ln Te = A + B ln Hm0 (and the same for Tp) by ordinary least
// squares (gonum stat.LinearRegression) over the given storm peaks, skipping
// steps without a positive period. Evaluated at a return level, exp(A + B ln H)
// is the median period given Hm0 = H if ln T given ln Hm0 is normal with a
// linear mean: the conditional model of a log-normal wave period (common
// practice in metocean joint descriptions of Hm0 and period). With fewer than
// 3 usable peaks, or no spread in Hm0, B = 0 and exp(A) is the geometric mean.
func associate(set []Maximum) Association {
	fit := func(get func(Maximum) float64) (a, b float64, n int) {
		var x, y []float64
		for _, m := range set {
			t := get(m)
			if t > 0 && m.Hm0 > 0 {
				x = append(x, math.Log(m.Hm0))
				y = append(y, math.Log(t))
			}
		}
		if len(x) == 0 {
			return math.NaN(), math.NaN(), 0
		}
		if len(x) < 3 || stat.Variance(x, nil) == 0 {
			return stat.Mean(y, nil), 0, len(x)
		}
		a, b = stat.LinearRegression(x, y, nil, false)
		return a, b, len(x)
	}
	var as Association
	as.TeA, as.TeB, as.N = fit(func(m Maximum) float64 { return m.Te })
	as.TpA, as.TpB, _ = fit(func(m Maximum) float64 { return m.Tp })
	return as
}

// Te returns the associated energy period exp(TeA + TeB ln hm0) (see associate).
func (a Association) Te(hm0 float64) float64 { return math.Exp(a.TeA + a.TeB*math.Log(hm0)) }

// Tp returns the associated peak period exp(TpA + TpB ln hm0).
func (a Association) Tp(hm0 float64) float64 { return math.Exp(a.TpA + a.TpB*math.Log(hm0)) }

// percentile95 fills the 2.5% and 97.5% points of each level's bootstrap sample
// (gonum stat.Quantile, empirical definition) into levels.
func percentile95(samples [][]float64, levels []Level) {
	for i := range levels {
		s := samples[i]
		if len(s) < 2 {
			continue
		}
		sort.Float64s(s)
		levels[i].BootLower = stat.Quantile(0.025, stat.Empirical, s, nil)
		levels[i].BootUpper = stat.Quantile(0.975, stat.Empirical, s, nil)
	}
}

// bootstrapGEV draws cfg.Bootstrap.N samples of size N from the fitted GEV
// (inverse-CDF sampling with a PCG source seeded by Seed), refits each and
// takes percentile intervals of the return levels. Returns the failed refits
// (no converged optimum), which are left out. Resamples are deliberately not
// passed through the publication policy (Publication): a parametric
// bootstrap replicates the estimator, and the estimator here is the plain
// maximum-likelihood fit, whose shape is not restricted to [ShapeMin,
// ShapeMax]; the policy decides whether the original fit's level is
// published at all. Dropping resamples with a shape outside the range would
// cut the tail of the bootstrap distribution and narrow the interval below
// the estimator's real uncertainty (Davison and Hinkley 1997, Bootstrap
// Methods and their Application, section 2.2, on the parametric bootstrap).
// The interval's ends pass Analyse's common-sense bounds instead.
func bootstrapGEV(f GEVFit, cfg AnalysisConfig, levels []Level) int {
	r := rand.New(rand.NewPCG(cfg.Bootstrap.Seed, 0x9e3779b97f4a7c15))
	samples := make([][]float64, len(levels))
	x := make([]float64, f.N)
	failed := 0
	for b := 0; b < cfg.Bootstrap.N; b++ {
		for i := range x {
			x[i] = f.GEV.Quantile(openUnit(r))
		}
		bf, err := FitGEV(x)
		if err != nil || !bf.Converged {
			failed++
			continue
		}
		for i, lv := range levels {
			if math.IsNaN(lv.Hm0) {
				continue // not published: no interval either
			}
			z, _ := bf.GEV.ReturnLevel(lv.PeriodYears)
			if !math.IsNaN(z) {
				samples[i] = append(samples[i], z)
			}
		}
	}
	percentile95(samples, levels)
	return failed
}

// bootstrapGPD is bootstrapGEV for the GPD; each resample also draws its
// number of exceedances from a Poisson law of mean lambda*years (gonum distuv),
// so the rate uncertainty enters the intervals.
func bootstrapGPD(f GPDFit, years float64, cfg AnalysisConfig, levels []Level) int {
	r := rand.New(rand.NewPCG(cfg.Bootstrap.Seed, 0x6a09e667f3bcc909))
	pois := distuv.Poisson{Lambda: f.PeaksPerYear * years, Src: r}
	samples := make([][]float64, len(levels))
	failed := 0
	for b := 0; b < cfg.Bootstrap.N; b++ {
		n := int(pois.Rand())
		x := make([]float64, n)
		for i := range x {
			x[i] = f.GPD.Quantile(openUnit(r))
		}
		bf, err := FitGPD(x, f.Threshold, float64(n)/years)
		if err != nil || !bf.Converged {
			failed++
			continue
		}
		for i, lv := range levels {
			if math.IsNaN(lv.Hm0) {
				continue
			}
			z, _ := bf.GPD.ReturnLevel(lv.PeriodYears, bf.PeaksPerYear)
			if !math.IsNaN(z) {
				samples[i] = append(samples[i], z)
			}
		}
	}
	percentile95(samples, levels)
	return failed
}

// openUnit returns a uniform variate in (0, 1).
func openUnit(r *rand.Rand) float64 {
	for {
		if u := r.Float64(); u > 0 {
			return u
		}
	}
}
