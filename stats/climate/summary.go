package climate

import (
	"math"
)

// DeviceSummary is the yield of one device at one cell.
type DeviceSummary struct {
	Name    string
	Lookup  string  // "bin" or "bilinear"
	RatedKW float64 // the device's rated power (Device.Rated), else the largest entry of the power matrix
	Period  string  // "te" or "tp": the period of the matrix's columns
	// MeanPowerKW is the time-weighted mean device power over the steps with
	// valid Hm0 and matrix period; AEPMWh = MeanPowerKW * 8766 h / 1000;
	// CapacityFactor = MeanPowerKW / RatedKW.
	MeanPowerKW, AEPMWh, CapacityFactor float64
	// Shares of time (of the steps with valid Hm0 and Te) the device is at
	// rated power, below cut-in (zero power inside the matrix, or Hm0 below
	// its lowest bin), or outside the matrix (shut down).
	AboveRatedTimeShare, BelowCutInTimeShare, OutsideMatrixTimeShare float64
	// Shares of the incident wave energy (sum of J dt) arriving while the
	// device is at rated power, below cut-in, or in sea states outside its
	// matrix (Hm0 above the top row's edge, or the period beyond the outer
	// column edges): the resource it cannot use beyond rating, in seas too
	// small for it, and in seas its matrix does not cover (zero power).
	AboveRatedEnergyShare, BelowCutInEnergyShare, OutsideMatrixEnergyShare float64
	// CoverageFrac is the share of the accepted step time with valid Hm0 and
	// matrix period (Te, or Tp for a matrix over Tp).
	CoverageFrac float64
	// MonthEnergyShare[m] is the share of the device's energy over the
	// record produced in calendar month m+1 (all years; NaN without energy),
	// the weights of the energy-weighted availability.
	MonthEnergyShare [12]float64
}

// Summary holds the scalar results of one cell. Power (J) is in kW per metre
// of wave crest; field names carry units. NaN marks a figure that cannot be
// computed (no data, or too few included months/years).
type Summary struct {
	Steps, RejectedSteps, InvalidValues, BackwardSteps uint64
	// RecordHours spans the first step's start to the last step's end;
	// CoverageFrac is the share of it with a valid J.
	RecordHours, ValidPowerHours, CoverageFrac float64

	PowerMeanKWm, PowerStdKWm, PowerCoV, PowerMinKWm, PowerMaxKWm float64
	Hm0MeanM, Hm0StdM, Hm0CoV, Hm0MinM, Hm0MaxM                   float64
	// Percentile levels (Config.Percentiles) and values, from histograms:
	// within one bin (Hm0HistResM; PowerHistRelRes of the value above
	// PowerHistLowResKWm, PowerHistLowResKWm below) of the sample percentile.
	PercentileLevels    []float64
	PowerPercentilesKWm []float64
	Hm0PercentilesM     []float64
	Hm0HistResM         float64
	PowerHistRelRes     float64
	PowerHistLowResKWm  float64

	TeMeanS, TpMeanS float64
	// DirMeanDeg is the time-weighted circular mean of the direction (nautical,
	// coming from); DirResultantLength in [0,1] is how concentrated it is
	// (1: always the same direction).
	DirMeanDeg, DirResultantLength float64

	// AnnualMeanPowerKWm is the time-weighted mean over the included
	// year-months; MVI and SVI are the monthly and seasonal variability
	// indices against it; InterannualCoV is the coefficient of variation
	// (population std / mean) of the annual means of the included years.
	AnnualMeanPowerKWm, MVI, SVI, InterannualCoV float64
	YearsUsed                                    int
	ExcludedYears                                []int
	MonthsUsed, MonthsExcluded                   int

	Devices []DeviceSummary

	// Access holds the repair-access waiting time of each of
	// Config.AccessRules (access.go), in order.
	Access []AccessResult
}

// Summary computes the scalar results. It does not change the state.
func (s *CellState) Summary() Summary {
	c, lay := s.cfg, &s.cfg.lay
	out := Summary{Steps: s.nSteps, RejectedSteps: s.nRejected, InvalidValues: s.nInvalid, BackwardSteps: s.nBackwards}
	if s.hasAcc {
		out.RecordHours = float64(s.lastEnd-s.firstStart) / 60
	}
	out.ValidPowerHours = float64(s.wJ) / 60
	out.CoverageFrac = math.NaN()
	if out.RecordHours > 0 {
		out.CoverageFrac = math.Min(1, out.ValidPowerHours/out.RecordHours)
	}
	nan := math.NaN()
	orNaN := func(x float64, w uint64) float64 {
		if w == 0 {
			return nan
		}
		return x
	}
	out.PowerMeanKWm = weightedMean(s.sJ, s.wJ, qJ*1000)
	out.PowerStdKWm = weightedStd(s.sJ, s.s2J, s.wJ, qJ*1000)
	out.PowerCoV = coefficientOfVariation(out.PowerStdKWm, out.PowerMeanKWm)
	out.PowerMinKWm, out.PowerMaxKWm = orNaN(s.minJ/1000, s.wJ), orNaN(s.maxJ/1000, s.wJ)
	out.Hm0MeanM = weightedMean(s.sH, s.wH, qH)
	out.Hm0StdM = weightedStd(s.sH, s.s2H, s.wH, qH)
	out.Hm0CoV = coefficientOfVariation(out.Hm0StdM, out.Hm0MeanM)
	out.Hm0MinM, out.Hm0MaxM = orNaN(s.minH, s.wH), orNaN(s.maxH, s.wH)
	out.PercentileLevels = append([]float64(nil), c.Percentiles...)
	out.Hm0HistResM = c.Hm0HistResM
	out.PowerHistRelRes = math.Ldexp(1, -c.PowerHistBitsPerOctave)
	out.PowerHistLowResKWm = out.PowerHistRelRes
	hEdges := s.hm0Edges
	jEdges := func(i int) (float64, float64) { return powerBinEdges(i, lay.powerBits, lay.nPowerHist) }
	for _, p := range c.Percentiles {
		out.PowerPercentilesKWm = append(out.PowerPercentilesKWm, histPercentile(s.histJ, s.wJ, p, jEdges, out.PowerMinKWm, out.PowerMaxKWm))
		out.Hm0PercentilesM = append(out.Hm0PercentilesM, histPercentile(s.histH, s.wH, p, hEdges, out.Hm0MinM, out.Hm0MaxM))
	}
	out.TeMeanS = weightedMean(s.sTe, s.wTe, qT)
	out.TpMeanS = weightedMean(s.sTp, s.wTp, qT)
	out.DirMeanDeg, out.DirResultantLength = circularMeanDeg(s.sSin, s.sCos, s.wDir)

	cl := s.climatology()
	out.AnnualMeanPowerKWm = cl.annual
	out.MVI, out.SVI = nan, nan
	if lo, hi, ok := extremesOf(cl.monthJ[:]); ok {
		out.MVI = variabilityIndex(hi, lo, cl.annual)
	}
	if lo, hi, ok := extremesOf(cl.seasonJ[:]); ok {
		out.SVI = variabilityIndex(hi, lo, cl.annual)
	}
	out.InterannualCoV = nan
	var yearMeans []float64
	for _, y := range cl.years {
		if y.excluded {
			out.ExcludedYears = append(out.ExcludedYears, y.year)
		} else if !math.IsNaN(y.meanJ) {
			yearMeans = append(yearMeans, y.meanJ)
		}
	}
	out.YearsUsed = len(yearMeans)
	if len(yearMeans) >= 2 {
		m, sd := meanStd(yearMeans)
		out.InterannualCoV = coefficientOfVariation(sd, m)
	}
	out.MonthsUsed, out.MonthsExcluded = cl.monthsUsed, cl.monthsExcluded

	for k, d := range c.Devices {
		a := &s.dev[k]
		ds := DeviceSummary{Name: d.Name, Lookup: d.Lookup.String(), RatedKW: d.ratedKW, Period: d.Period.String()}
		share := func(x, w uint64) float64 {
			if w == 0 {
				return nan
			}
			return float64(x) / float64(w)
		}
		ds.MeanPowerKW = nan
		if a.w > 0 {
			v, _ := a.sP.bigFloat().Float64()
			ds.MeanPowerKW = v / float64(a.w) / qP
		}
		ds.AEPMWh = annualEnergyMWh(ds.MeanPowerKW)
		ds.CapacityFactor = capacityFactor(ds.MeanPowerKW, d.ratedKW)
		ds.AboveRatedTimeShare = share(a.wAbove, a.w)
		ds.BelowCutInTimeShare = share(a.wBelow, a.w)
		ds.OutsideMatrixTimeShare = share(a.wOut, a.w)
		ds.AboveRatedEnergyShare = share(a.eAbove, a.eAll)
		ds.BelowCutInEnergyShare = share(a.eBelow, a.eAll)
		ds.OutsideMatrixEnergyShare = share(a.eOut, a.eAll)
		ds.CoverageFrac = share(a.w, s.wAll)
		ds.MonthEnergyShare = s.monthEnergyShare(k)
		out.Devices = append(out.Devices, ds)
	}
	for k := range s.acc {
		out.Access = append(out.Access, s.acc[k].Result())
	}
	return out
}

// monthEnergyShare returns the share of device k's energy (sum over the
// years of w x power) in each calendar month; NaN without energy.
func (s *CellState) monthEnergyShare(k int) [12]float64 {
	nd := s.cfg.lay.nDev
	var e [12]float64
	var tot float64
	for yi := range s.ys {
		for m := 0; m < 12; m++ {
			v, _ := s.yd[(yi*12+m)*nd+k].sP.bigFloat().Float64()
			e[m] += v
			tot += v
		}
	}
	for m := range e {
		if tot > 0 {
			e[m] /= tot
		} else {
			e[m] = math.NaN()
		}
	}
	return e
}

// meanStd returns the mean and the population standard deviation (ddof 0,
// as numpy.std) of x, by the two-pass formula sum((x - mean)^2) / n.
func meanStd(x []float64) (float64, float64) {
	var m float64
	for _, v := range x {
		m += v
	}
	m /= float64(len(x))
	var ss float64
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return m, math.Sqrt(ss / float64(len(x)))
}

func extremesOf(v []float64) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if math.IsNaN(x) {
			return 0, 0, false
		}
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return lo, hi, len(v) > 0
}

func (s *CellState) hm0Edges(i int) (float64, float64) {
	r := s.cfg.Hm0HistResM
	if i >= s.cfg.lay.nHm0Hist {
		return float64(s.cfg.lay.nHm0Hist) * r, math.Inf(1)
	}
	return float64(i) * r, float64(i+1) * r
}

// seasons are the meteorological seasons (named for the northern hemisphere).
var seasons = [4]struct {
	name   string
	months [3]int
}{{"DJF", [3]int{12, 1, 2}}, {"MAM", [3]int{3, 4, 5}}, {"JJA", [3]int{6, 7, 8}}, {"SON", [3]int{9, 10, 11}}}

type yearClim struct {
	year     int
	coverage float64
	excluded bool
	meanJ    float64 // kW/m, all its valid steps
	hasData  bool
}

type climate struct {
	monthJ, monthH   [12]float64 // kW/m, m: pooled over included year-months
	monthW, monthHW  [12]uint64
	monthSJ, monthSH [12]uint64
	monthYears       [12]int
	seasonJ, seasonH [4]float64
	seasonW          [4]uint64
	seasonMonths     [4]int
	annual           float64
	years            []yearClim
	monthsUsed       int
	monthsExcluded   int
}

// ymCoverage returns the coverage of year-month index i: valid-J minutes over
// the nominal minutes of that month in the calendar (at most 1).
func (s *CellState) ymCoverage(i int) float64 {
	y, m := s.ys[i/12], i%12+1
	nom := float64(s.cfg.lay.cal.daysInMonth(y, m) * 1440)
	return math.Min(1, float64(s.ym[i].wJ)/nom)
}

func (s *CellState) climatology() climate {
	var cl climate
	minCov := s.cfg.CoverageMin
	var aJ, aW uint64
	for i, r := range s.ym {
		if r.wJ == 0 && r.wH == 0 {
			continue
		}
		cm := i % 12
		if s.ymCoverage(i) < minCov {
			cl.monthsExcluded++
			continue
		}
		cl.monthsUsed++
		cl.monthSJ[cm] += r.sJ
		cl.monthW[cm] += uint64(r.wJ)
		cl.monthSH[cm] += r.sH
		cl.monthHW[cm] += uint64(r.wH)
		cl.monthYears[cm]++
		aJ += r.sJ
		aW += uint64(r.wJ)
	}
	for m := 0; m < 12; m++ {
		cl.monthJ[m] = weightedMean(cl.monthSJ[m], cl.monthW[m], qJ*1000)
		cl.monthH[m] = weightedMean(cl.monthSH[m], cl.monthHW[m], qH)
	}
	for k, se := range seasons {
		var sj, w, sh, wh uint64
		for _, m := range se.months {
			sj += cl.monthSJ[m-1]
			w += cl.monthW[m-1]
			sh += cl.monthSH[m-1]
			wh += cl.monthHW[m-1]
			cl.seasonMonths[k] += cl.monthYears[m-1]
		}
		cl.seasonJ[k] = weightedMean(sj, w, qJ*1000)
		cl.seasonH[k] = weightedMean(sh, wh, qH)
		cl.seasonW[k] = w
	}
	cl.annual = weightedMean(aJ, aW, qJ*1000)
	for yi, y := range s.ys {
		var sj, w uint64
		nom := 0
		for m := 0; m < 12; m++ {
			r := s.ym[yi*12+m]
			sj += r.sJ
			w += uint64(r.wJ)
			nom += s.cfg.lay.cal.daysInMonth(y, m+1) * 1440
		}
		yc := yearClim{year: y, meanJ: weightedMean(sj, w, qJ*1000), hasData: w > 0}
		yc.coverage = math.Min(1, float64(w)/float64(nom))
		yc.excluded = yc.coverage < minCov
		if !yc.hasData {
			continue
		}
		cl.years = append(cl.years, yc)
	}
	return cl
}
