package climate

import (
	"errors"
	"fmt"
	"hash/fnv"
	"math"
	"strconv"
	"unsafe"
)

// Config fixes the resolution and the settings of every statistic a CellState
// keeps. Build one with DefaultConfig, change what is needed and call
// Validate before NewCellState; do not change it afterwards (the states share
// it and its fingerprint, which Merge and UnmarshalBinary check).
type Config struct {
	// Calendar of the data, as the CF "calendar" attribute spells it:
	// standard, gregorian, proleptic_gregorian, julian, noleap, 365_day,
	// all_leap, 366_day or 360_day. It sets the nominal length of each month,
	// the denominator of the coverage of a month or a year.
	Calendar string

	// Hm0HistResM is the bin width (m) of the Hm0 histogram behind the Hm0
	// percentiles and exceedance curve; Hm0HistMaxM is where the last regular
	// bin ends (one open bin collects everything above).
	Hm0HistResM, Hm0HistMaxM float64
	// PowerHistBitsPerOctave sets the resolution of the power histogram: each
	// doubling of J above 1 kW/m is split into 2^bits bins (relative bin width
	// at most 2^-bits), and 0..1 kW/m into 2^bits bins of 2^-bits kW/m.
	// PowerHistOctaves is the number of doublings above 1 kW/m that get bins
	// (the regular bins end at 2^octaves kW/m; one open bin above).
	PowerHistBitsPerOctave, PowerHistOctaves int
	// Percentiles (0..100, increasing) reported for J and Hm0.
	Percentiles []float64

	// Joint occurrence (scatter) table of Hm0 x Te: bin widths and the upper
	// end of the regular bins (one open row/column collects the rest).
	ScatterHm0StepM, ScatterHm0MaxM float64
	ScatterTeStepS, ScatterTeMaxS   float64

	// Weather windows: Hm0 limits (m, strictly increasing) and minimum
	// durations (h, strictly increasing, at most MaxWindowHours).
	WindowLimitsM    []float64
	WindowDurationsH []float64

	// CoverageMin (0..1]: a year-month or a year whose share of nominal
	// calendar time with a valid J is below this is excluded from the monthly,
	// seasonal and inter-annual statistics, and flagged.
	CoverageMin float64

	// Devices whose yield is computed per cell (may be empty).
	Devices []*Device

	// AccessRules are the repair-access rules whose waiting time is kept
	// per cell (access.go; at most 16, may be empty).
	AccessRules []AccessRule

	// DirectionSectors is the number of equal direction sectors of the
	// directional distribution of power and occurrence (directions.go),
	// MinDirectionSectors..MaxDirectionSectors.
	DirectionSectors int

	// set by Validate
	valid       bool
	fingerprint uint64
	lay         layout
}

// MaxWindowHours is the longest weather-window duration accepted (28 days,
// the shortest calendar month). It keeps the per-cell state bounded: a calm
// run shorter than every duration spans at most two calendar months.
const MaxWindowHours = 28 * 24

// DefaultConfig returns the default settings: standard calendar; Hm0
// histogram 0.05 m up to 20 m; power histogram 32 bins per doubling (relative
// resolution 3.1 %) up to 16384 kW/m; percentiles 10, 50, 90, 99; scatter
// 0.5 m x 1 s up to 10 m x 20 s; window limits 1.5, 2.0, 2.5 m and durations
// 6, 12, 24, 48 h; coverage threshold 0.8; no devices; 16 direction
// sectors.
func DefaultConfig() *Config {
	return &Config{
		Calendar:               "standard",
		Hm0HistResM:            0.05,
		Hm0HistMaxM:            20,
		PowerHistBitsPerOctave: 5,
		PowerHistOctaves:       14,
		Percentiles:            []float64{10, 50, 90, 99},
		ScatterHm0StepM:        0.5,
		ScatterHm0MaxM:         10,
		ScatterTeStepS:         1,
		ScatterTeMaxS:          20,
		WindowLimitsM:          []float64{1.5, 2.0, 2.5},
		WindowDurationsH:       []float64{6, 12, 24, 48},
		CoverageMin:            0.8,
		DirectionSectors:       DefaultDirectionSectors,
	}
}

// layout holds the array sizes and derived constants of a validated Config.
type layout struct {
	cal            calendar
	nHm0Hist       int // regular bins; index nHm0Hist is the open bin
	invHm0Res      float64
	powerBits      uint
	nPowerHist     int // regular bins; index nPowerHist is the open bin
	powerTop       float64
	nScH, nScT     int // rows/cols including the open one
	invScH, invScT float64
	nLim, nDur     int
	durMin         []int64
	maxDurMin      int64
	nDev           int
	nRose          int
	nAcc           int
}

func positiveFinite(x float64) bool { return x > 0 && !math.IsInf(x, 1) }

// Validate checks the settings and prepares the derived constants. Bad
// values are errors naming the field and what to do.
func (c *Config) Validate() error {
	c.valid = false
	var errs []error
	bad := func(format string, a ...any) { errs = append(errs, fmt.Errorf("climate config: "+format, a...)) }
	cal, err := parseCalendar(c.Calendar)
	if err != nil {
		errs = append(errs, err)
	}
	if !positiveFinite(c.Hm0HistResM) || !positiveFinite(c.Hm0HistMaxM) || c.Hm0HistMaxM < c.Hm0HistResM {
		bad("Hm0HistResM=%g, Hm0HistMaxM=%g: need 0 < resolution <= max, both finite", c.Hm0HistResM, c.Hm0HistMaxM)
	} else if c.Hm0HistMaxM/c.Hm0HistResM > 1e5 {
		bad("Hm0 histogram would have %.0f bins (max 100000): use a coarser Hm0HistResM", c.Hm0HistMaxM/c.Hm0HistResM)
	}
	if c.PowerHistBitsPerOctave < 1 || c.PowerHistBitsPerOctave > 8 {
		bad("PowerHistBitsPerOctave=%d: must be 1..8", c.PowerHistBitsPerOctave)
	}
	if c.PowerHistOctaves < 1 || c.PowerHistOctaves > 20 {
		bad("PowerHistOctaves=%d: must be 1..20", c.PowerHistOctaves)
	}
	for i, p := range c.Percentiles {
		if !(p >= 0 && p <= 100) {
			bad("Percentiles[%d]=%g: must be within 0..100", i, p)
		} else if i > 0 && !(p > c.Percentiles[i-1]) {
			bad("Percentiles must be strictly increasing (%g after %g)", p, c.Percentiles[i-1])
		}
	}
	if !positiveFinite(c.ScatterHm0StepM) || !positiveFinite(c.ScatterHm0MaxM) || c.ScatterHm0MaxM < c.ScatterHm0StepM ||
		!positiveFinite(c.ScatterTeStepS) || !positiveFinite(c.ScatterTeMaxS) || c.ScatterTeMaxS < c.ScatterTeStepS {
		bad("scatter bins %g m to %g m x %g s to %g s: need 0 < step <= max, all finite",
			c.ScatterHm0StepM, c.ScatterHm0MaxM, c.ScatterTeStepS, c.ScatterTeMaxS)
	} else if (c.ScatterHm0MaxM/c.ScatterHm0StepM+1)*(c.ScatterTeMaxS/c.ScatterTeStepS+1) > 1e5 {
		bad("scatter table would exceed 100000 bins: use coarser steps")
	}
	if len(c.WindowLimitsM) > 16 || len(c.WindowDurationsH) > 16 {
		bad("at most 16 window limits and 16 durations (got %d and %d)", len(c.WindowLimitsM), len(c.WindowDurationsH))
	}
	for i, v := range c.WindowLimitsM {
		if !positiveFinite(v) {
			bad("WindowLimitsM[%d]=%g: must be a positive finite height in m", i, v)
		} else if i > 0 && !(v > c.WindowLimitsM[i-1]) {
			bad("WindowLimitsM out of order: %g after %g (list them strictly increasing)", v, c.WindowLimitsM[i-1])
		}
	}
	var durMin []int64
	for i, v := range c.WindowDurationsH {
		m := math.Round(v * 60)
		switch {
		case !(v > 0) || math.IsInf(v, 0):
			bad("WindowDurationsH[%d]=%g: durations must be positive hours", i, v)
		case v > MaxWindowHours:
			bad("WindowDurationsH[%d]=%g h exceeds the maximum of %d h", i, v, MaxWindowHours)
		case math.Abs(m-v*60) > 1e-6 || m < 1:
			bad("WindowDurationsH[%d]=%g h is not a whole number of minutes", i, v)
		case i > 0 && !(v > c.WindowDurationsH[i-1]):
			bad("WindowDurationsH out of order: %g after %g (list them strictly increasing)", v, c.WindowDurationsH[i-1])
		default:
			durMin = append(durMin, int64(m))
		}
	}
	if !(c.CoverageMin > 0 && c.CoverageMin <= 1) {
		bad("CoverageMin=%g: must be in (0, 1]", c.CoverageMin)
	}
	if c.DirectionSectors < MinDirectionSectors || c.DirectionSectors > MaxDirectionSectors {
		bad("DirectionSectors=%d: must be %d..%d", c.DirectionSectors, MinDirectionSectors, MaxDirectionSectors)
	}
	if len(c.AccessRules) > 16 {
		bad("at most 16 access rules (got %d)", len(c.AccessRules))
	}
	for i, r := range c.AccessRules {
		if err := r.Validate(); err != nil {
			errs = append(errs, fmt.Errorf("climate config: AccessRules[%d]: %w", i, err))
		}
	}
	seen := map[string]bool{}
	for i, d := range c.Devices {
		if d == nil {
			bad("Devices[%d] is nil", i)
			continue
		}
		if err := d.prepare(); err != nil {
			errs = append(errs, fmt.Errorf("climate config: Devices[%d]: %w", i, err))
		}
		if seen[d.Name] {
			bad("two devices named %q: give each device its own name", d.Name)
		}
		seen[d.Name] = true
	}
	if len(errs) > 0 {
		return errors.Join(errs...)
	}
	l := layout{cal: cal}
	l.nHm0Hist = int(math.Ceil(c.Hm0HistMaxM/c.Hm0HistResM - 1e-9))
	l.invHm0Res = 1 / c.Hm0HistResM
	l.powerBits = uint(c.PowerHistBitsPerOctave)
	l.nPowerHist = (1 << l.powerBits) * (c.PowerHistOctaves + 1)
	l.powerTop = math.Ldexp(1, c.PowerHistOctaves)
	l.nScH = int(math.Ceil(c.ScatterHm0MaxM/c.ScatterHm0StepM-1e-9)) + 1
	l.nScT = int(math.Ceil(c.ScatterTeMaxS/c.ScatterTeStepS-1e-9)) + 1
	l.invScH = 1 / c.ScatterHm0StepM
	l.invScT = 1 / c.ScatterTeStepS
	l.nLim = len(c.WindowLimitsM)
	l.nDur = len(durMin)
	l.durMin = durMin
	if l.nDur > 0 {
		l.maxDurMin = durMin[l.nDur-1]
	}
	l.nDev = len(c.Devices)
	l.nRose = c.DirectionSectors
	l.nAcc = len(c.AccessRules)
	c.lay = l
	c.fingerprint = c.computeFingerprint()
	c.valid = true
	return nil
}

// computeFingerprint hashes (FNV-1a, 64 bit) a canonical text of every
// setting, device matrices included, so that states made with different
// settings are never merged.
func (c *Config) computeFingerprint() uint64 {
	h := fnv.New64a()
	w := func(s string) { h.Write([]byte(s)); h.Write([]byte{0}) }
	f := func(x float64) { w(strconv.FormatFloat(x, 'g', -1, 64)) }
	w("swellgrid climate config v1")
	w(c.Calendar)
	w("direction sectors " + strconv.Itoa(c.DirectionSectors))
	f(c.Hm0HistResM)
	f(c.Hm0HistMaxM)
	w(strconv.Itoa(c.PowerHistBitsPerOctave))
	w(strconv.Itoa(c.PowerHistOctaves))
	for _, group := range [][]float64{c.Percentiles, {c.ScatterHm0StepM, c.ScatterHm0MaxM, c.ScatterTeStepS, c.ScatterTeMaxS},
		c.WindowLimitsM, c.WindowDurationsH, {c.CoverageMin}} {
		w(strconv.Itoa(len(group)))
		for _, x := range group {
			f(x)
		}
	}
	for _, d := range c.Devices {
		w(d.Name)
		w(strconv.Itoa(int(d.Lookup)))
		w(d.Period.String())
		f(d.TeOverTp)
		f(d.Rated)
		for _, group := range [][]float64{d.Hm0M, d.TeS, d.PowerKW} {
			w(strconv.Itoa(len(group)))
			for _, x := range group {
				f(x)
			}
		}
	}
	if len(c.AccessRules) > 0 { // configs without access rules keep their fingerprint
		w("access rules " + strconv.Itoa(len(c.AccessRules)))
		for _, r := range c.AccessRules {
			f(r.Hm0M)
			f(r.TeS)
			f(r.RepairH)
		}
	}
	return h.Sum64()
}

// StateBytes returns the memory (bytes) one CellState with this validated
// Config takes for a record with data in the given number of years (arrays
// and fixed fields; Go's allocation rounding aside). A year without data
// takes no room. CellMemory is the model a run plans its memory with.
func (c *Config) StateBytes(years int) int {
	l := &c.lay
	return int(unsafe.Sizeof(CellState{})) +
		4*(l.nHm0Hist+1) + 4*(l.nPowerHist+1) + 12*l.nScH*l.nScT +
		8*l.nLim*l.nDur*12 + (2*int(unsafe.Sizeof(run{}))+1)*l.nLim +
		int(unsafe.Sizeof(devAcc{}))*l.nDev +
		(int(unsafe.Sizeof(ymRec{}))*12+int(unsafe.Sizeof(ydRec{}))*12*l.nDev+8)*years + 16*l.nRose +
		int(unsafe.Sizeof(AccessState{}))*l.nAcc
}

// CellMemory is the memory model of one cell of a run, in bytes: what a
// pass holds per cell while it reads (State) and what the results of one
// cell take between its fit and their export (Result).
type CellMemory struct {
	State  int
	Result int
}

// CellMemory returns the memory model of one cell for a record of the given
// number of years with data, beside an extremes collector that keeps at most
// maxPeaksPerYear storm peaks a year (stats/extremes; 0 means its default,
// 50). The figures are sizes of the Go structures on a 64-bit platform
// (unsafe.Sizeof of this package's types; the extremes types by their
// fields), rounded up, with Go's allocation rounding:
//
//	State  = 1.125 StateBytes(years) + 16 per slice of the state (10)
//	         + collector: 72 a year (its yearStats) + 40 per peak
//	           (extremes.Maximum, 5 words) x maxPeaksPerYear a year
//	           + 2 KiB (the separation window of the last steps)
//	         + 2 KiB (the cell's other parts: pointers, spectral means)
//	Result = 2 x (rows of the cell's long tables, each by its Go size:
//	         monthly (12 + 12 years) x 72, scatter bins (all of them) x 56,
//	         exceedance edges x 40, windows (limits x durations x 12) x 80,
//	         seasons 4 x 64, analysis years (years + 1) x (YearRow +
//	         3 x 8 x devices), AEP bands MaxHorizons x devices x AEPBand)
//	         + 16 KiB (summary, fits, return levels,
//	         threshold ladder, design contour)
//
// The factor 1.125 is the worst rounding of Go's size classes above 1 KiB
// (runtime/sizeclasses.go: classes at most 12.5 % apart); the factor 2 of
// Result counts the rows once as Go values and once as the table columns
// built from them before they are written. BenchmarkCellMemory in
// pipelines reports the heap measured per cell beside this model.
func (c *Config) CellMemory(years, maxPeaksPerYear int) CellMemory {
	if maxPeaksPerYear <= 0 {
		maxPeaksPerYear = 50
	}
	years = max(years, 1)
	l := &c.lay
	state := c.StateBytes(years)*9/8 + 16*10 +
		years*(72+40*maxPeaksPerYear) + 2048 + 2048
	rows := (12+12*years)*int(unsafe.Sizeof(MonthRow{})) +
		l.nScH*l.nScT*int(unsafe.Sizeof(ScatterRow{})) +
		(l.nHm0Hist+l.nPowerHist+2)*int(unsafe.Sizeof(ExceedRow{})) +
		l.nLim*l.nDur*12*int(unsafe.Sizeof(WindowRow{})) + 4*int(unsafe.Sizeof(SeasonRow{})) +
		(years+1)*(int(unsafe.Sizeof(YearRow{}))+24*l.nDev) + MaxHorizons*l.nDev*int(unsafe.Sizeof(AEPBand{}))
	return CellMemory{State: state, Result: 2*rows + 16<<10}
}
