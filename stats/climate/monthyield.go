package climate

import (
	"math"
	"slices"
)

// MonthYieldRow is one device's energy in one month of a cell: a month of
// the record (Year > 0) or, with Year 0, a calendar month over the record
// (its climatology, pooled over the included year-months).
type MonthYieldRow struct {
	// Device is the index in Config.Devices.
	Device      int
	Year, Month int
	// MeanPowerKW is the duration-weighted mean device power over the
	// steps with a valid Hm0 and matrix period (pooled over the included
	// year-months on a climatology row); ValidHours their time.
	MeanPowerKW, ValidHours float64
	// Hours is the month's length in the data's calendar (climatology: the
	// mean length of the included year-months); EnergyMWh = MeanPowerKW x
	// Hours / 1000 (see yearEnergyMWh: time the record does not cover is
	// taken at the month's mean).
	Hours, EnergyMWh float64
	// CoverageFrac is ValidHours / Hours (at most 1) on a year-month;
	// on a climatology row the included year-months divided by those
	// with the device's data. Excluded: a year-month whose CoverageFrac is
	// below Config.CoverageMin (left out of the climatology).
	CoverageFrac float64
	Excluded     bool
	// YearsUsed: climatology rows, the number of year-months pooled.
	YearsUsed int
}

// MonthlyYieldIn returns, for each device in Config.Devices order, twelve
// climatology rows (Year 0) and then one row per year-month of the spans
// (as MonthlyIn: k = 12 year + month-1, inclusive) and every year-month
// with the device's data, in time order. A year-month without the device's
// data has NaN power and energy, coverage 0 and is Excluded. It reads the
// year-month device sums of the state, so its size is bounded by the years.
func (s *CellState) MonthlyYieldIn(spans [][2]int) []MonthYieldRow {
	nd := s.cfg.lay.nDev
	if nd == 0 {
		return nil
	}
	var ks []int
	for _, sp := range spans {
		for k := sp[0]; k <= sp[1]; k++ {
			ks = append(ks, k)
		}
	}
	for i := range s.ym {
		for d := 0; d < nd; d++ {
			if s.yd[i*nd+d].w > 0 {
				ks = append(ks, s.ys[i/12]*12+i%12)
				break
			}
		}
	}
	slices.Sort(ks)
	ks = slices.Compact(ks)
	var out []MonthYieldRow
	for d := 0; d < nd; d++ {
		var sP [12]u128
		var w, with, used [12]uint64
		var hours [12]float64
		for i := range s.ym {
			r := s.yd[i*nd+d]
			if r.w == 0 {
				continue
			}
			cm := i % 12
			with[cm]++
			h := s.monthHours(s.ys[i/12], cm+1)
			if math.Min(1, float64(r.w)/60/h) < s.cfg.CoverageMin {
				continue
			}
			used[cm]++
			sP[cm].add(r.sP)
			w[cm] += uint64(r.w)
			hours[cm] += h
		}
		for m := 0; m < 12; m++ {
			row := MonthYieldRow{Device: d, Month: m + 1, MeanPowerKW: devMean(sP[m], w[m]), ValidHours: float64(w[m]) / 60,
				Hours: math.NaN(), CoverageFrac: math.NaN(), YearsUsed: int(used[m])}
			if used[m] > 0 {
				row.Hours = hours[m] / float64(used[m])
			}
			if with[m] > 0 {
				row.CoverageFrac = float64(used[m]) / float64(with[m])
			}
			row.EnergyMWh = yearEnergyMWh(row.MeanPowerKW, row.Hours)
			out = append(out, row)
		}
		for _, k := range ks {
			y, cm := floorDiv(k, 12), k-12*floorDiv(k, 12)
			row := MonthYieldRow{Device: d, Year: y, Month: cm + 1, Hours: s.monthHours(y, cm+1), MeanPowerKW: math.NaN()}
			if yi := s.findYear(y); yi >= 0 {
				r := s.yd[(yi*12+cm)*nd+d]
				row.MeanPowerKW, row.ValidHours = devMean(r.sP, uint64(r.w)), float64(r.w)/60
			}
			row.CoverageFrac = math.Min(1, row.ValidHours/row.Hours)
			row.Excluded = row.ValidHours == 0 || row.CoverageFrac < s.cfg.CoverageMin
			row.EnergyMWh = yearEnergyMWh(row.MeanPowerKW, row.Hours)
			out = append(out, row)
		}
	}
	return out
}

// monthHours is the length of month m (1..12) of year y in the data's
// calendar, in hours.
func (s *CellState) monthHours(y, m int) float64 {
	return float64(s.cfg.lay.cal.daysInMonth(y, m) * 24)
}

// devMean is the duration-weighted mean device power in kW from the sum of
// w x power quanta and the minutes w; NaN without time.
func devMean(sP u128, w uint64) float64 {
	if w == 0 {
		return math.NaN()
	}
	v, _ := sP.bigFloat().Float64()
	return v / float64(w) / qP
}
