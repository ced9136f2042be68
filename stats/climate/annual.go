package climate

import "math"

// YearRow is one analysis year of a cell: the wave power and each device's
// energy, every figure weighted by the steps' durations.
type YearRow struct {
	// Year is the analysis year, named by the calendar year in which it
	// begins (its first month is the startMonth given to Annual; 1 is the
	// calendar year).
	Year int
	// Hours is the length of the analysis year in the data's calendar.
	Hours float64
	// PowerMeanKWm is the duration-weighted mean J over the year's steps
	// with a valid J; ValidHours their time; CoverageFrac = ValidHours /
	// Hours (at most 1); Excluded: CoverageFrac below Config.CoverageMin.
	PowerMeanKWm, ValidHours, CoverageFrac float64
	Excluded                               bool
	// Per device (Config.Devices order): the year's energy (see
	// yearEnergyMWh), the hours with a valid Hm0 and matrix period, and
	// their share of Hours.
	DeviceEnergyMWh, DeviceValidHours, DeviceCoverageFrac []float64
}

// Annual returns one row per analysis year with data (a step with a valid
// J, Hm0 or device period), in time order. An analysis year begins in
// startMonth (1..12; 1: the calendar year) and is named by the calendar year
// in which it begins, as the extremes' annual maxima are. It reads the
// year-month sums of the state, so its size is bounded by the years.
func (s *CellState) Annual(startMonth int) []YearRow {
	if startMonth < 1 || startMonth > 12 {
		startMonth = 1
	}
	nd := s.cfg.lay.nDev
	type acc struct {
		year    int
		sJ, wJ  uint64
		wH      uint64
		devW    []uint64
		devS    []u128
		hasData bool
	}
	var accs []*acc
	for i, r := range s.ym {
		y, m := s.ys[i/12], i%12+1
		ay := y
		if m < startMonth {
			ay = y - 1
		}
		if len(accs) == 0 || accs[len(accs)-1].year != ay {
			accs = append(accs, &acc{year: ay, devW: make([]uint64, nd), devS: make([]u128, nd)})
		}
		a := accs[len(accs)-1]
		a.sJ += r.sJ
		a.wJ += uint64(r.wJ)
		a.wH += uint64(r.wH)
		if r.wJ > 0 || r.wH > 0 {
			a.hasData = true
		}
		for k := 0; k < nd; k++ {
			d := s.yd[i*nd+k]
			a.devW[k] += uint64(d.w)
			a.devS[k].add(d.sP)
			if d.w > 0 {
				a.hasData = true
			}
		}
	}
	var rows []YearRow
	for _, a := range accs {
		if !a.hasData {
			continue
		}
		hours := 0.0
		for k := 0; k < 12; k++ {
			y, m := a.year, startMonth+k
			if m > 12 {
				y, m = y+1, m-12
			}
			hours += float64(s.cfg.lay.cal.daysInMonth(y, m) * 24)
		}
		row := YearRow{Year: a.year, Hours: hours, PowerMeanKWm: weightedMean(a.sJ, a.wJ, qJ*1000),
			ValidHours: float64(a.wJ) / 60}
		row.CoverageFrac = math.Min(1, row.ValidHours/hours)
		row.Excluded = row.CoverageFrac < s.cfg.CoverageMin
		for k := 0; k < nd; k++ {
			mean := math.NaN()
			if a.devW[k] > 0 {
				v, _ := a.devS[k].bigFloat().Float64()
				mean = v / float64(a.devW[k]) / qP
			}
			vh := float64(a.devW[k]) / 60
			row.DeviceEnergyMWh = append(row.DeviceEnergyMWh, yearEnergyMWh(mean, hours))
			row.DeviceValidHours = append(row.DeviceValidHours, vh)
			row.DeviceCoverageFrac = append(row.DeviceCoverageFrac, math.Min(1, vh/hours))
		}
		rows = append(rows, row)
	}
	return rows
}
