package climate

import (
	"math"
	"slices"
)

// MonthRow is one row of the monthly table. Year 0 marks a calendar-month
// climatology row (pooled over the included year-months of that month);
// other rows are one year-month each.
type MonthRow struct {
	Year, Month  int
	PowerMeanKWm float64
	Hm0MeanM     float64
	ValidHours   float64 // time with a valid J
	// Coverage: for a year-month its valid-J share of the month's nominal
	// calendar time; for a climatology row the number of included
	// year-months divided by the number with data.
	Coverage  float64
	Excluded  bool // year-month below Config.CoverageMin (left out of climatology, seasons and indices)
	YearsUsed int  // climatology rows: included year-months pooled
}

// Monthly returns twelve climatology rows (Year 0) followed by one row per
// year-month with data, in time order. MonthlyOver also gives the months
// of a record that have no data.
func (s *CellState) Monthly() []MonthRow { return s.monthly(nil, false) }

// MonthlyOver returns twelve climatology rows (Year 0) followed by one row
// per year-month from (y0, m0) to (y1, m1) inclusive (months 1..12: the
// record's span), in time order. A year-month with no data has Coverage 0,
// ValidHours 0, NaN means and is Excluded (it takes no part in the
// climatology, seasons and indices, as before). Year-months with data outside
// the span are listed too, in their place.
func (s *CellState) MonthlyOver(y0, m0, y1, m1 int) []MonthRow {
	return s.MonthlyIn([][2]int{{y0*12 + m0 - 1, y1*12 + m1 - 1}})
}

// MonthlyIn is MonthlyOver for a record in several spans: spans[i] are the
// first and last year-month k = 12 year + month-1 of a span (inclusive). A
// record with a gap of whole years gives one span per run of years with
// data, so that the table is sized by the years that have data.
func (s *CellState) MonthlyIn(spans [][2]int) []MonthRow { return s.monthly(spans, true) }

// monthly lists the climatology and the year-months k = 12 year + month-1
// of the spans, with every year-month with data added; with all false only
// those with data.
func (s *CellState) monthly(spans [][2]int, all bool) []MonthRow {
	cl := s.climatology()
	var withData [12]int
	var ks []int
	if all {
		for _, sp := range spans {
			for k := sp[0]; k <= sp[1]; k++ {
				ks = append(ks, k)
			}
		}
	}
	for i, r := range s.ym {
		if r.wJ > 0 || r.wH > 0 {
			withData[i%12]++
			ks = append(ks, s.ys[i/12]*12+i%12)
		}
	}
	slices.Sort(ks)
	ks = slices.Compact(ks)
	rows := make([]MonthRow, 0, 12+len(ks))
	for m := 0; m < 12; m++ {
		cov := math.NaN()
		if withData[m] > 0 {
			cov = float64(cl.monthYears[m]) / float64(withData[m])
		}
		rows = append(rows, MonthRow{Month: m + 1, PowerMeanKWm: cl.monthJ[m], Hm0MeanM: cl.monthH[m],
			ValidHours: float64(cl.monthW[m]) / 60, Coverage: cov, YearsUsed: cl.monthYears[m]})
	}
	for _, k := range ks {
		y, cm := floorDiv(k, 12), k-12*floorDiv(k, 12)
		i := -1
		if yi := s.findYear(y); yi >= 0 {
			i = yi*12 + cm
		}
		if i < 0 || (s.ym[i].wJ == 0 && s.ym[i].wH == 0) {
			rows = append(rows, MonthRow{Year: y, Month: cm + 1, PowerMeanKWm: math.NaN(), Hm0MeanM: math.NaN(), Excluded: true})
			continue
		}
		r := s.ym[i]
		cov := s.ymCoverage(i)
		rows = append(rows, MonthRow{Year: y, Month: cm + 1,
			PowerMeanKWm: weightedMean(r.sJ, uint64(r.wJ), qJ*1000), Hm0MeanM: weightedMean(r.sH, uint64(r.wH), qH),
			ValidHours: float64(r.wJ) / 60, Coverage: cov, Excluded: cov < s.cfg.CoverageMin})
	}
	return rows
}

func floorDiv(a, b int) int {
	q := a / b
	if a%b != 0 && (a < 0) != (b < 0) {
		q--
	}
	return q
}

// SeasonRow is one meteorological season (DJF, MAM, JJA, SON; named for the
// northern hemisphere), pooled over its included year-months.
type SeasonRow struct {
	Season       string
	PowerMeanKWm float64
	Hm0MeanM     float64
	ValidHours   float64
	MonthsUsed   int
}

// Seasonal returns the four season rows.
func (s *CellState) Seasonal() []SeasonRow {
	cl := s.climatology()
	rows := make([]SeasonRow, 4)
	for k, se := range seasons {
		rows[k] = SeasonRow{Season: se.name, PowerMeanKWm: cl.seasonJ[k], Hm0MeanM: cl.seasonH[k],
			ValidHours: float64(cl.seasonW[k]) / 60, MonthsUsed: cl.seasonMonths[k]}
	}
	return rows
}

// ScatterRow is one non-empty bin of the joint occurrence of Hm0 and Te
// (steps where J, Hm0 and Te are all valid). Bins are closed below and open
// above; the last row and column are open-ended (upper edge +Inf).
type ScatterRow struct {
	Hm0LoM, Hm0HiM float64
	TeLoS, TeHiS   float64
	Hours          float64
	TimeShare      float64 // of the time in the whole table
	PowerMeanKWm   float64
}

// Scatter returns the non-empty bins, Hm0 rows then Te columns ascending.
func (s *CellState) Scatter() []ScatterRow {
	lay, c := &s.cfg.lay, s.cfg
	var total uint64
	for _, w := range s.scW {
		total += uint64(w)
	}
	var rows []ScatterRow
	for k, w := range s.scW {
		if w == 0 {
			continue
		}
		r, col := k/lay.nScT, k%lay.nScT
		row := ScatterRow{Hm0LoM: float64(r) * c.ScatterHm0StepM, Hm0HiM: float64(r+1) * c.ScatterHm0StepM,
			TeLoS: float64(col) * c.ScatterTeStepS, TeHiS: float64(col+1) * c.ScatterTeStepS,
			Hours: float64(w) / 60, TimeShare: float64(w) / float64(total),
			PowerMeanKWm: weightedMean(s.scJ[k], uint64(w), qJ*1000)}
		if r == lay.nScH-1 {
			row.Hm0HiM = math.Inf(1)
		}
		if col == lay.nScT-1 {
			row.TeHiS = math.Inf(1)
		}
		rows = append(rows, row)
	}
	return rows
}

// ExceedRow is one point of an exceedance curve: the share of the valid time
// during which Variable was at or above Value. Points lie on the histogram
// bin edges, where the share is exact.
type ExceedRow struct {
	Variable      string // "hm0_m" or "power_kw_m"
	Value         float64
	ShareExceeded float64
}

// Exceedance returns the curves of Hm0 (every Hm0HistResM) and of J (on the
// power histogram edges), each from 0 up to the first edge above the maximum
// (share 0).
func (s *CellState) Exceedance() []ExceedRow {
	lay := &s.cfg.lay
	var rows []ExceedRow
	curve := func(name string, counts []uint32, total uint64, lo func(int) float64, max float64) {
		if total == 0 {
			return
		}
		rem := total
		for i, c := range counts {
			v := lo(i)
			rows = append(rows, ExceedRow{Variable: name, Value: v, ShareExceeded: float64(rem) / float64(total)})
			if v > max || rem == 0 {
				return
			}
			rem -= uint64(c)
		}
	}
	curve("hm0_m", s.histH, s.wH, func(i int) float64 { a, _ := s.hm0Edges(i); return a }, s.maxH)
	curve("power_kw_m", s.histJ, s.wJ, func(i int) float64 {
		a, _ := powerBinEdges(i, lay.powerBits, lay.nPowerHist)
		return a
	}, s.maxJ/1000)
	return rows
}

// WindowRow gives, for one Hm0 limit, minimum duration and calendar month,
// the weather windows: spells of consecutive steps, contiguous in time, with
// a valid Hm0 below the limit, lasting at least the duration. A window is
// counted in the month it begins; its time is credited to the months its
// steps fall in. A spell still open at the start or end of the record counts
// with the part observed.
type WindowRow struct {
	LimitM, DurationH float64
	Month             int
	WindowHours       float64 // time inside windows
	ValidHours        float64 // time with a valid Hm0
	FractionInWindows float64 // WindowHours / ValidHours
	Windows           int     // windows beginning in this calendar month
	// MonthsEquivalent sums the valid-Hm0 coverage of every year-month of
	// this calendar month; WindowsPerMonth = Windows / MonthsEquivalent.
	MonthsEquivalent float64
	WindowsPerMonth  float64
}

// Windows returns limits x durations x 12 months rows.
func (s *CellState) Windows() []WindowRow {
	lay, c := &s.cfg.lay, s.cfg
	var valid [12]uint64
	var monthsEq [12]float64
	for i, r := range s.ym {
		if r.wH == 0 {
			continue
		}
		y, m := s.ys[i/12], i%12
		valid[m] += uint64(r.wH)
		monthsEq[m] += math.Min(1, float64(r.wH)/float64(lay.cal.daysInMonth(y, m+1)*1440))
	}
	rows := make([]WindowRow, 0, lay.nLim*lay.nDur*12)
	for l, lim := range c.WindowLimitsM {
		for d, dur := range c.WindowDurationsH {
			for m := 0; m < 12; m++ {
				idx := (l*lay.nDur+d)*12 + m
				row := WindowRow{LimitM: lim, DurationH: dur, Month: m + 1,
					WindowHours: float64(s.winMin[idx]) / 60, ValidHours: float64(valid[m]) / 60,
					Windows: int(s.winCnt[idx]), MonthsEquivalent: monthsEq[m],
					FractionInWindows: math.NaN(), WindowsPerMonth: math.NaN()}
				if valid[m] > 0 {
					row.FractionInWindows = math.Min(1, float64(s.winMin[idx])/float64(valid[m]))
					row.WindowsPerMonth = float64(s.winCnt[idx]) / monthsEq[m]
				}
				rows = append(rows, row)
			}
		}
	}
	return rows
}
