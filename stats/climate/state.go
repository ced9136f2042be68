package climate

import (
	"math"
	"slices"
)

// Step is one sea state at one cell. Times are in the file's own calendar
// (which may be 360_day or noleap): the caller supplies calendar fields and a
// continuous time axis.
type Step struct {
	Year, Month int     // calendar year and month 1..12 in the data's calendar
	Hours       float64 // continuous time in hours since a fixed reference (same for the whole record)
	DtHours     float64 // nominal step length in hours (time weight)
	// J in W/m, Hm0 in m, Te and Tp in s, DirDeg in degrees nautical
	// ("coming from", clockwise from north); NaN marks a missing value.
	J, Hm0, Te, Tp, DirDeg float64
}

// ymRec holds the sums of one year-month.
type ymRec struct {
	wJ, wH uint32 // minutes with a valid J, Hm0
	sJ, sH uint64 // sum of w*q
}

// ydRec holds the sums of one device in one year-month: the minutes with
// a valid Hm0 and matrix period, and the sum of w * power quantum (128 bits:
// a step's whole weight goes to its month, so no month bound is assumed).
type ydRec struct {
	w  uint32
	sP u128
}

// run is a calm spell (consecutive contiguous steps with Hm0 below a limit).
// While it is shorter than the longest window duration its time is also kept
// split by calendar month (at most two months, see MaxWindowHours), so that
// it can be credited when it turns out long enough, also after a Merge.
type run struct {
	len     int64 // minutes
	startCM int8  // calendar month 0..11 of its first step
	nseg    int8
	segCM   [3]int8
	segMin  [3]uint32
}

// dropSegs forgets the split by month once the run is longer than every
// duration (it is no longer needed, and forgetting it keeps the state
// canonical, so that merged and whole states are byte-identical).
func (r *run) dropSegs() {
	r.nseg, r.segCM, r.segMin = 0, [3]int8{}, [3]uint32{}
}

func (r *run) addSeg(cm int8, w uint32) {
	if r.nseg > 0 && r.segCM[r.nseg-1] == cm {
		r.segMin[r.nseg-1] += w
		return
	}
	if int(r.nseg) == len(r.segCM) { // cannot happen with durations <= 28 days
		r.segMin[r.nseg-1] += w
		return
	}
	r.segCM[r.nseg], r.segMin[r.nseg] = cm, w
	r.nseg++
}

// devAcc holds the sums of one device.
type devAcc struct {
	w      uint64 // minutes with Hm0 and Te valid
	sP     u128   // sum of w * power quantum
	wAbove uint64 // minutes at or above rated
	wBelow uint64 // minutes below cut-in
	wOut   uint64 // minutes outside the matrix
	wE     uint64 // minutes of the above with J valid too
	eAll   uint64 // sum of w*qJ over those
	eAbove uint64
	eBelow uint64
	eOut   uint64
}

// CellState is the mergeable climate state of one cell (see the package
// comment for what it holds and its size). Create it with NewCellState.
// It is not safe for concurrent use.
type CellState struct {
	cfg *Config

	nSteps, nRejected, nInvalid, nBackwards uint64
	hasAcc, startBroken, endBroken          bool
	firstStart, lastEnd                     int64 // minutes
	wAll                                    uint64

	wJ, sJ     uint64
	s2J        u128
	minJ, maxJ float64
	wH, sH     uint64
	s2H        u128
	minH, maxH float64
	wTe, sTe   uint64
	wTp, sTp   uint64
	wDir       uint64
	sSin, sCos int64

	histH []uint32
	histJ []uint32
	scW   []uint32
	scJ   []uint64
	// ys lists the years with at least one step, ascending; ym holds 12
	// records per entry of ys, in the same order. Only years with data
	// take room, so a record with a long gap (a reference year mistyped
	// as 9000 in one file) costs two years, not seven thousand.
	ys []int
	ym []ymRec
	// yd holds 12 x len(Config.Devices) records per entry of ys (year,
	// month, device), for the year-by-year device energy.
	yd     []ydRec
	winCnt []uint32
	winMin []uint32
	runs   []run
	leads  []run
	// leadOpen[l]: every step so far was calm for limit l (the lead run is
	// then runs[l]); otherwise leads[l] is the run that began at the first
	// step (len 0 if that step was not calm).
	leadOpen []bool
	dev      []devAcc
	rose     roseAcc       // directional distribution, see directions.go
	acc      []AccessState // one per Config.AccessRules, see access.go
}

// NewCellState returns an empty state for cfg, which must have passed
// Validate (NewCellState panics otherwise: that is a programming error).
func NewCellState(cfg *Config) *CellState {
	if cfg == nil || !cfg.valid {
		panic("climate.NewCellState: config not validated (call Config.Validate first)")
	}
	l := &cfg.lay
	s := &CellState{cfg: cfg}
	s.histH = make([]uint32, l.nHm0Hist+1)
	s.histJ = make([]uint32, l.nPowerHist+1)
	s.scW = make([]uint32, l.nScH*l.nScT)
	s.scJ = make([]uint64, l.nScH*l.nScT)
	s.winCnt = make([]uint32, l.nLim*l.nDur*12)
	s.winMin = make([]uint32, l.nLim*l.nDur*12)
	s.runs = make([]run, l.nLim)
	s.leads = make([]run, l.nLim)
	s.leadOpen = make([]bool, l.nLim)
	s.dev = make([]devAcc, l.nDev)
	s.rose = newRoseAcc(l.nRose)
	s.acc = make([]AccessState, l.nAcc)
	for k, r := range cfg.AccessRules {
		s.acc[k] = AccessState{rule: r, d: int64(math.Round(r.RepairH * 60))}
	}
	s.Reset()
	return s
}

// Reset empties the state, keeping its allocations.
func (s *CellState) Reset() {
	*s = CellState{cfg: s.cfg, histH: s.histH, histJ: s.histJ, scW: s.scW, scJ: s.scJ, ys: s.ys[:0], ym: s.ym[:0], yd: s.yd[:0],
		winCnt: s.winCnt, winMin: s.winMin, runs: s.runs, leads: s.leads, leadOpen: s.leadOpen, dev: s.dev, rose: s.rose, acc: s.acc}
	for k := range s.acc {
		s.acc[k].Reset()
	}
	s.rose.clear()
	clear(s.histH)
	clear(s.histJ)
	clear(s.scW)
	clear(s.scJ)
	clear(s.winCnt)
	clear(s.winMin)
	clear(s.runs)
	clear(s.leads)
	clear(s.dev)
	for i := range s.leadOpen {
		s.leadOpen[i] = true
	}
	s.firstStart, s.lastEnd = noTim, noTim
	s.minJ, s.maxJ = math.Inf(1), math.Inf(-1)
	s.minH, s.maxH = math.Inf(1), math.Inf(-1)
}

// maxYears bounds the number of distinct years one state holds.
const maxYears = 10000

// ymIndex returns the index of (year, month 0..11) in s.ym, adding the year
// when it is new; -1 when the state already holds maxYears years.
func (s *CellState) ymIndex(year, cm int) int {
	if n := len(s.ys); n > 0 && s.ys[n-1] == year {
		return (n-1)*12 + cm // steps come in time order: nearly always the last year
	}
	i := s.yearSlot(year)
	if i < 0 {
		return -1
	}
	return i*12 + cm
}

// yearSlot returns the position of year in s.ys, inserting it (with twelve
// empty months) when it is new; -1 when the state holds maxYears years.
func (s *CellState) yearSlot(year int) int {
	i, found := slices.BinarySearch(s.ys, year)
	if found {
		return i
	}
	if len(s.ys) >= maxYears {
		return -1
	}
	s.ys = slices.Insert(s.ys, i, year)
	var empty [12]ymRec
	s.ym = slices.Insert(s.ym, i*12, empty[:]...)
	if nd := s.cfg.lay.nDev; nd > 0 {
		s.yd = slices.Insert(s.yd, i*12*nd, make([]ydRec, 12*nd)...)
	}
	return i
}

// findYear returns the position of year in s.ys, or -1.
func (s *CellState) findYear(year int) int {
	if i, found := slices.BinarySearch(s.ys, year); found {
		return i
	}
	return -1
}

// reject records a step that cannot be placed (bad month, step length or
// time): it breaks calm runs and time contiguity.
func (s *CellState) reject() {
	s.nRejected++
	s.breakRuns()
	for k := range s.acc {
		s.acc[k].brk()
	}
	if !s.hasAcc {
		s.startBroken = true
	}
	s.endBroken = true
}

// breakRuns ends every calm run (a gap, a rejected step).
func (s *CellState) breakRuns() {
	for l := range s.runs {
		s.endRun(l)
	}
}

func (s *CellState) endRun(l int) {
	r := &s.runs[l]
	if s.leadOpen[l] {
		s.leads[l] = *r
		s.leadOpen[l] = false
	}
	if r.len != 0 {
		*r = run{}
	}
}

// StepTime is the part of a step that every cell at that time shares: the
// calendar month, the start and the weight in whole minutes, checked once
// (PrepareTime) so that the per-cell update does not redo it.
type StepTime struct {
	Year  int
	cm    int8 // calendar month 0..11
	bad   bool // rejected: bad month, step length or time
	start int64
	w     uint64
}

// PrepareTime checks and converts the time fields of a step (see Add): a
// month outside 1..12, a step length that is not positive (or under 30 s,
// or over 728 days) or a non-finite time makes the step rejected.
func PrepareTime(year, month int, hours, dtHours float64) StepTime {
	t := StepTime{Year: year, cm: int8(month - 1)}
	cm := month - 1
	if cm < 0 || cm > 11 || !(dtHours > 0) || dtHours*60 > maxW || !(math.Abs(hours) < 1e14) {
		t.bad = true
		return t
	}
	t.w = uint64(dtHours*60 + 0.5)
	if t.w == 0 {
		t.bad = true
		return t
	}
	t.start = int64(math.Floor(hours*60 + 0.5))
	return t
}

// Add feeds one step. Steps of one state must come in time order (a step
// earlier than the previous one is counted and treated as a gap). Missing
// values (NaN) are skipped per variable; negative, infinite or absurdly large
// values are counted as invalid and skipped. A step with a month outside
// 1..12, a step length that is not positive (or under 30 s, or over 728
// days) or a non-finite time is rejected and counted. Add does not allocate
// except when a step brings a new year. It is PrepareTime then AddAt.
func (s *CellState) Add(st *Step) {
	t := PrepareTime(st.Year, st.Month, st.Hours, st.DtHours)
	s.AddAt(&t, st.J, st.Hm0, st.Te, st.Tp, st.DirDeg)
}

// ScreenStep applies the rule for values present but unusable to one
// step's J (W/m), Hm0 (m), Te, Tp (s) and direction (degrees), before any
// statistic sees them. A present (not NaN) value is unusable when
//
//	Hm0, Te, Tp:  v < 0, v >= 64 or infinite (64 m and 64 s: beyond any sea
//	              state, and the bounds of the state's fixed point, fixed.go);
//	direction:    infinite or |d| >= 1e9;
//	J:            J < 0 or J >= 2^26 W/m (fixed.go),
//
// and it is returned as NaN and counted in invalid. J is also NaN, but not
// counted, when Hm0 or Te is present and unusable: the power of a step is
// left out with the height or period it comes from. Missing values (NaN)
// stay missing and are not counted. The bounds are limits of what a value
// can be, not quality-control thresholds (common practice: the physical
// definitions of the quantities).
func ScreenStep(j, h, te, tp, d float64) (j2, h2, te2, tp2, d2 float64, invalid int) {
	nan := math.NaN()
	bad := false
	if !(h >= 0 && h < maxH) && h == h {
		h, bad = nan, true
		invalid++
	}
	if !(te >= 0 && te < maxT) && te == te {
		te, bad = nan, true
		invalid++
	}
	if !(tp >= 0 && tp < maxT) && tp == tp {
		tp = nan
		invalid++
	}
	if !(d-d == 0 && math.Abs(d) < 1e9) && d == d {
		d = nan
		invalid++
	}
	if bad {
		j = nan
	} else if !(j >= 0 && j < maxJ) && j == j {
		j = nan
		invalid++
	}
	return j, h, te, tp, d, invalid
}

// AddAt feeds one step whose time fields were prepared by PrepareTime (shared
// by all cells of a time step), with J (W/m), Hm0 (m), Te, Tp (s) and the
// direction (degrees); exactly as Add. The values are screened first
// (ScreenStep: unusable values counted and left out), and AddAt returns
// them as screened, for the step's other statistics (directions, storm
// peaks), which must leave out what the state left out.
func (s *CellState) AddAt(t *StepTime, j, h, te, tp, d float64) (j2, h2, te2, tp2, d2 float64) {
	j, h, te, tp, d, bad := ScreenStep(j, h, te, tp, d)
	s.nSteps++
	if t.bad {
		s.reject()
		return j, h, te, tp, d
	}
	cm := int(t.cm)
	wi := t.w
	yi := s.ymIndex(t.Year, cm)
	if yi < 0 {
		s.reject()
		return j, h, te, tp, d
	}
	s.nInvalid += uint64(bad)
	start := t.start
	contiguous := s.hasAcc && !s.endBroken && s.lastEnd == start
	if s.hasAcc {
		if start < s.lastEnd {
			s.nBackwards++
		}
		if !contiguous {
			s.breakRuns()
		}
	} else {
		s.hasAcc = true
		s.firstStart = start
	}
	s.endBroken = false
	s.lastEnd = start + int64(wi)
	s.wAll += wi
	lay := &s.cfg.lay
	rec := &s.ym[yi]
	w32 := uint32(wi)

	// Every value is screened (ScreenStep above): one that is not NaN lies
	// within the fixed-point bounds.

	// J (values are below 2^63 here, so the float-to-int64 conversion,
	// cheaper than to uint64, gives the same integer)
	jOK := false
	var qj uint64
	if j == j {
		jOK = true
		qj = uint64(int64(j*qJ + 0.5))
		s.wJ += wi
		s.sJ += wi * qj
		s.s2J.addMul(wi, qj*qj)
		if j < s.minJ {
			s.minJ = j
		}
		if j > s.maxJ {
			s.maxJ = j
		}
		rec.wJ += w32
		rec.sJ += wi * qj
		s.histJ[powerBin(j/1000, lay.powerBits, lay.nPowerHist)] += w32
	}

	// Hm0
	hOK := false
	if h == h {
		hOK = true
		qh := uint64(int64(h*qH + 0.5))
		s.wH += wi
		s.sH += wi * qh
		s.s2H.addMul(wi, qh*qh)
		if h < s.minH {
			s.minH = h
		}
		if h > s.maxH {
			s.maxH = h
		}
		rec.wH += w32
		rec.sH += wi * qh
		b := int(h * lay.invHm0Res)
		if b > lay.nHm0Hist {
			b = lay.nHm0Hist
		}
		s.histH[b] += w32
	}

	// Te, Tp
	teOK := false
	if te == te {
		teOK = true
		s.wTe += wi
		s.sTe += wi * uint64(int64(te*qT+0.5))
	}
	if tp == tp {
		s.wTp += wi
		s.sTp += wi * uint64(int64(tp*qT+0.5))
	}

	// direction
	if d == d {
		k := dirIndex(d)
		s.wDir += wi
		s.sSin += int64(wi) * int64(dirTable[k].sin)
		s.sCos += int64(wi) * int64(dirTable[k].cos)
	}

	// joint occurrence
	if jOK && hOK && teOK {
		r := int(h * lay.invScH)
		if r >= lay.nScH {
			r = lay.nScH - 1
		}
		c := int(te * lay.invScT)
		if c >= lay.nScT {
			c = lay.nScT - 1
		}
		k := r*lay.nScT + c
		s.scW[k] += w32
		s.scJ[k] += wi * qj
	}

	// weather windows
	if lay.nLim > 0 {
		s.addWindows(hOK, h, int8(cm), int64(wi))
	}

	// repair access
	for k := range s.acc {
		a := &s.acc[k]
		a.add(start, int64(wi), int8(cm), a.rule.calm(h, te))
	}

	// devices
	if hOK {
		for k, d := range s.cfg.Devices {
			x, xOK := d.period(te, teOK, tp)
			if !xOK {
				continue
			}
			a := &s.dev[k]
			p, class := d.power(h, x)
			qp := uint64(p*qP + 0.5)
			a.w += wi
			a.sP.addMul(wi, qp)
			ydr := &s.yd[yi*lay.nDev+k]
			ydr.w += w32
			ydr.sP.addMul(wi, qp)
			above := class == devInside && p >= d.ratedKW*(1-1e-12)
			switch {
			case above:
				a.wAbove += wi
			case class == devBelowCutIn:
				a.wBelow += wi
			case class == devOutside:
				a.wOut += wi
			}
			if jOK {
				e := wi * qj
				a.wE += wi
				a.eAll += e
				if above {
					a.eAbove += e
				} else if class == devBelowCutIn {
					a.eBelow += e
				} else if class == devOutside {
					a.eOut += e
				}
			}
		}
	}
	return j, h, te, tp, d
}

// powerBin returns the power histogram bin of v (kW/m, >= 0); see
// powerBinEdges for the layout.
func powerBin(v float64, bits uint, n int) int {
	sub := 1 << bits
	if v < 1 {
		return int(v * float64(sub))
	}
	b := math.Float64bits(v)
	e := int(b>>52) - 1023
	k := int(b>>(52-bits)) & (sub - 1)
	i := sub + e*sub + k
	if i > n {
		i = n
	}
	return i
}

// addWindows advances the calm runs of every limit by one accepted step of
// w minutes in calendar month cm. Contiguity has been handled by Add.
func (s *CellState) addWindows(hOK bool, h float64, cm int8, w int64) {
	lay := &s.cfg.lay
	nD := lay.nDur
	for l, lim := range s.cfg.WindowLimitsM {
		if !(hOK && h < lim) {
			s.endRun(l)
			continue
		}
		r := &s.runs[l]
		if r.len == 0 {
			r.startCM, r.nseg = cm, 0
		}
		prev := r.len
		r.len += w
		if prev < lay.maxDurMin {
			r.addSeg(cm, uint32(w))
		}
		base := l * nD * 12
		for d := 0; d < nD; d++ {
			D := lay.durMin[d]
			if r.len < D {
				break
			}
			idx := base + d*12
			if prev < D {
				s.winCnt[idx+int(r.startCM)]++
				for k := int8(0); k < r.nseg; k++ {
					s.winMin[idx+int(r.segCM[k])] += r.segMin[k]
				}
			} else {
				s.winMin[idx+int(cm)] += uint32(w)
			}
		}
		if prev < lay.maxDurMin && r.len >= lay.maxDurMin {
			r.dropSegs()
		}
	}
}

// Directions are rounded to DirResDeg before their sines and cosines are
// summed (a table lookup: the sums stay exact integers and the hot path
// avoids trigonometry). The circular mean is thus within DirResDeg/2 of the
// mean of the unrounded directions.
const DirResDeg = 0.1

const dirBins = 3600 // 360 / DirResDeg

type sinCos struct{ sin, cos int32 }

// dirTable holds sin and cos of k*DirResDeg, rounded to the quantum 2^-28.
var dirTable = func() [dirBins]sinCos {
	var t [dirBins]sinCos
	for k := range t {
		sn, cs := math.Sincos(float64(k) * DirResDeg * math.Pi / 180)
		t[k] = sinCos{int32(math.Round(sn * qDir)), int32(math.Round(cs * qDir))}
	}
	return t
}()

// dirIndex returns the table index of direction d (degrees, any finite value).
func dirIndex(d float64) int {
	if d >= 0 && d < 360 { // the usual case: truncation is the floor
		k := int(d*(1/DirResDeg) + 0.5)
		if k >= dirBins {
			k -= dirBins
		}
		return k
	}
	k := int64(math.Floor(d*(1/DirResDeg) + 0.5))
	k %= dirBins
	if k < 0 {
		k += dirBins
	}
	return int(k)
}
