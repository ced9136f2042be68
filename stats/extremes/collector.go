package extremes

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"sort"
)

// CollectorConfig sets how a Collector forms years and storm peaks.
type CollectorConfig struct {
	// YearStartMonth is the first month (1-12) of the analysis year; 1 = calendar
	// year. A year starting in month m > 1 is labelled by the calendar year in
	// which it starts (a year starting in July 1999 is "1999"), so one winter is
	// not split between two annual maxima.
	YearStartMonth int
	// SeparationHours is the minimum time between two independent storm peaks
	// (default 48 h).
	SeparationHours float64
	// MaxPeaksPerYear bounds the stored storm peaks per year: the largest are
	// kept (default 50). Peaks dropped by this bound are reported per year so that
	// a threshold below them can be flagged.
	MaxPeaksPerYear int
	// PeakFloor is the smallest Hm0 (m) a storm peak may have (default 0: none).
	PeakFloor float64
}

func (c CollectorConfig) withDefaults() CollectorConfig {
	if c.YearStartMonth < 1 || c.YearStartMonth > 12 {
		c.YearStartMonth = 1
	}
	if !(c.SeparationHours > 0) {
		c.SeparationHours = 48
	}
	if c.MaxPeaksPerYear <= 0 {
		c.MaxPeaksPerYear = 50
	}
	if !(c.PeakFloor >= 0) {
		c.PeakFloor = 0
	}
	return c
}

// Maximum is one time step of a record: an annual maximum or a storm peak.
type Maximum struct {
	Year  int     // analysis year (see CollectorConfig.YearStartMonth)
	Hours float64 // time of the step, hours on the caller's continuous time axis
	Hm0   float64 // m
	Te    float64 // s (NaN if missing)
	Tp    float64 // s (NaN if missing)
}

// yearStats is the per-year part of the state. Times are whole minutes (see
// StepMinutes), so that sums of parts are exact and merges are byte-identical.
type yearStats struct {
	Max        Maximum // largest Hm0 of the year (earliest on ties)
	Minutes    int64   // covered time: durations of the steps seen (valid or missing), minutes
	ValidMin   int64   // valid time: durations of the steps with finite Hm0, minutes
	Dropped    int64   // storm peaks dropped by MaxPeaksPerYear
	DroppedMax float64 // largest dropped peak Hm0 (NaN if none)
}

// Collector gathers the annual maxima and declustered storm peaks of one cell
// from steps fed in time order. Its size grows with the number of years (at most
// MaxPeaksPerYear peaks and one maximum per year) plus the steps within one
// separation window, never with the number of steps. Collectors of consecutive
// parts of a record merge exactly (Merge).
//
// Storm peaks (declustering). A step i with finite Hm0 is a storm peak when its
// Hm0 is strictly larger than every finite Hm0 in the preceding SeparationHours
// (t_i - sep, t_i) and not smaller than any in the following (t_i, t_i + sep),
// and Hm0 >= PeakFloor. Two peaks are thus at least SeparationHours apart, and
// the earlier of equal values wins. This is the separation-time criterion for
// independent storm peaks (common practice in metocean peaks-over-threshold
// analysis; cf. Coles 2001, section 5.3.2 on declustering). A peak within the
// last SeparationHours of the data is provisional: later data may remove it.
type Collector struct {
	cfg     CollectorConfig
	started bool
	t0      float64 // hours of the first step
	last    float64 // hours of the last step
	lastOK  float64 // hours of the last finite step (NaN if none)
	years   []yearStats
	head    []Maximum // finite steps with t < t0 + sep (for exact merging)
	window  []Maximum // monotone (decreasing Hm0) queue of finite steps within sep of last
	// wbuf is the array window was last allocated in (window is a slice of
	// it): feedPeak moves the queue back to its front instead of allocating
	// when the queue has reached the end of the array. Never shared (clone
	// and UnmarshalBinary leave it nil).
	wbuf    []Maximum
	hasPend bool
	pend    Maximum   // candidate peak not yet confirmed
	peaks   []Maximum // confirmed peaks, time order
	err     error
}

// NewCollector returns an empty Collector; zero fields of cfg take their defaults.
func NewCollector(cfg CollectorConfig) *Collector {
	return &Collector{cfg: cfg.withDefaults(), lastOK: math.NaN()}
}

// Config returns the configuration in use (with defaults filled in).
func (c *Collector) Config() CollectorConfig { return c.cfg }

// Err returns the first input error (a step out of time order, or a step
// without a usable duration); such steps are ignored.
func (c *Collector) Err() error { return c.err }

// analysisYear maps a calendar (year, month) to the analysis year.
func (c *Collector) analysisYear(year, month int) int {
	if month < c.cfg.YearStartMonth {
		return year - 1
	}
	return year
}

// maxStepMinutes is the longest step duration Add accepts, 2^20 minutes
// (about 728 days), the bound of stats/climate's time weights.
const maxStepMinutes = 1 << 20

// StepMinutes is the duration of a step in whole minutes, the unit in which a
// Collector counts time:
//
//	m = round(weightH x 60), accepted when 1 <= m <= 2^20 (30 s to about 728 days);
//
// it returns 0 for any other weightH (not finite, not positive, too short or
// too long). Whole minutes make the per-year sums integers, exact under merging
// in any split; stats/climate weights its sums by the same whole minutes.
func StepMinutes(weightH float64) int64 {
	m := math.Round(weightH * 60)
	if !(m >= 1 && m <= maxStepMinutes) {
		return 0
	}
	return int64(m)
}

// Add feeds one time step: calendar year and month of the step, its time in
// hours on a continuous axis (the data calendar's), its duration weightH in
// hours (the time the step stands for, from the time axis's duration rule;
// counted in whole minutes, see StepMinutes), and Hm0 (m), Te, Tp (s). A NaN
// (or infinite) Hm0 marks a missing step: its duration counts as covered time
// but not as valid time. Steps must come in strictly increasing time; an
// out-of-order step, or one whose duration is not usable (StepMinutes 0), is
// ignored and recorded in Err.
func (c *Collector) Add(year, month int, hours, weightH, hm0, te, tp float64) {
	w := StepMinutes(weightH)
	if w == 0 {
		if c.err == nil {
			c.err = fmt.Errorf("extremes: step at %g h has duration %g h, outside 30 s .. 728 days; give every step its duration in hours from the time axis", hours, weightH)
		}
		return
	}
	if c.started && !(hours > c.last) {
		if c.err == nil {
			c.err = fmt.Errorf("extremes: step at %g h is not after the previous step at %g h; feed each cell in time order", hours, c.last)
		}
		return
	}
	if !c.started {
		c.started, c.t0 = true, hours
	}
	c.last = hours
	y := c.analysisYear(year, month)
	ys := c.yearFor(y)
	ys.Minutes += w
	if math.IsNaN(hm0) || math.IsInf(hm0, 0) {
		return
	}
	first := ys.ValidMin == 0
	ys.ValidMin += w
	s := Maximum{Year: y, Hours: hours, Hm0: hm0, Te: te, Tp: tp}
	if first || hm0 > ys.Max.Hm0 {
		ys.Max = s
	}
	c.feedPeak(s)
}

// yearFor returns the stats of year y, appending it (years arrive in order).
func (c *Collector) yearFor(y int) *yearStats {
	n := len(c.years)
	if n > 0 && c.years[n-1].Max.Year == y {
		return &c.years[n-1]
	}
	if n > 0 && y < c.years[n-1].Max.Year {
		// Time order implies year order; keep the state consistent anyway.
		for i := range c.years {
			if c.years[i].Max.Year == y {
				return &c.years[i]
			}
		}
	}
	c.years = append(c.years, yearStats{Max: Maximum{Year: y, Hm0: math.NaN(), Te: math.NaN(), Tp: math.NaN(), Hours: math.NaN()}, DroppedMax: math.NaN()})
	return &c.years[len(c.years)-1]
}

// feedPeak runs the declustering state machine on one finite step.
func (c *Collector) feedPeak(s Maximum) {
	sep := c.cfg.SeparationHours
	if s.Hours < c.t0+sep {
		c.head = append(c.head, s)
	}
	c.lastOK = s.Hours
	// Confirm or kill the pending candidate.
	if c.hasPend {
		if s.Hours-c.pend.Hours >= sep {
			c.confirm(c.pend)
			c.hasPend = false
		} else if s.Hm0 > c.pend.Hm0 {
			c.hasPend = false
		}
	}
	// Drop steps older than sep from the window; is s larger than all remaining?
	i := 0
	for i < len(c.window) && s.Hours-c.window[i].Hours >= sep {
		i++
	}
	c.window = c.window[i:]
	cand := len(c.window) == 0 || s.Hm0 > c.window[0].Hm0
	j := len(c.window)
	for j > 0 && c.window[j-1].Hm0 <= s.Hm0 {
		j--
	}
	if j == cap(c.window) && j < cap(c.wbuf) {
		c.window = c.wbuf[:copy(c.wbuf[:j], c.window[:j])]
	}
	if j == cap(c.window) {
		c.window = append(c.window[:j], s)
		c.wbuf = c.window[:0]
	} else {
		c.window = append(c.window[:j], s)
	}
	if cand {
		// Any pending candidate is within sep and smaller: it was removed above.
		c.hasPend, c.pend = true, s
	}
}

// confirm appends a confirmed peak, enforcing the per-year bound on peaks that
// cannot change any more (those at least one separation after the first step).
func (c *Collector) confirm(p Maximum) {
	if p.Hm0 < c.cfg.PeakFloor {
		return
	}
	c.peaks = append(c.peaks, p)
	if p.Hours < c.t0+c.cfg.SeparationHours {
		return
	}
	// Count settled peaks of this year (they are contiguous at the end).
	lo := len(c.peaks) - 1
	for lo > 0 && c.peaks[lo-1].Year == p.Year && c.peaks[lo-1].Hours >= c.t0+c.cfg.SeparationHours {
		lo--
	}
	if len(c.peaks)-lo <= c.cfg.MaxPeaksPerYear {
		return
	}
	// Drop the smallest (latest on ties).
	k := lo
	for i := lo + 1; i < len(c.peaks); i++ {
		if c.peaks[i].Hm0 <= c.peaks[k].Hm0 {
			k = i
		}
	}
	d := c.peaks[k]
	c.peaks = append(c.peaks[:k], c.peaks[k+1:]...)
	ys := c.yearFor(d.Year)
	ys.Dropped++
	if math.IsNaN(ys.DroppedMax) || d.Hm0 > ys.DroppedMax {
		ys.DroppedMax = d.Hm0
	}
}

// AnnualMaxima returns the largest Hm0 of each analysis year with data, in year
// order, with its time and the Te/Tp of that step.
func (c *Collector) AnnualMaxima() []Maximum {
	out := make([]Maximum, 0, len(c.years))
	for _, y := range c.years {
		if y.ValidMin > 0 {
			out = append(out, y.Max)
		}
	}
	return out
}

// YearCoverage describes the data of one analysis year. Times are whole
// minutes (hours = Minutes / 60), the sums of the steps' durations (see Add).
type YearCoverage struct {
	Year int
	// Minutes is the covered time (steps valid or missing), ValidMinutes the
	// time of the steps with a finite Hm0.
	Minutes, ValidMinutes int64
	// DroppedPeaks is the number of storm peaks dropped by MaxPeaksPerYear and
	// DroppedMaxHm0 the largest of them (NaN if none).
	DroppedPeaks  int64
	DroppedMaxHm0 float64
}

// Years returns the per-year covered and valid time, in year order.
func (c *Collector) Years() []YearCoverage {
	out := make([]YearCoverage, len(c.years))
	for i, y := range c.years {
		out[i] = YearCoverage{Year: y.Max.Year, Minutes: y.Minutes, ValidMinutes: y.ValidMin, DroppedPeaks: y.Dropped, DroppedMaxHm0: y.DroppedMax}
	}
	return out
}

// Peaks returns the declustered storm peaks in time order, at most
// MaxPeaksPerYear per year (the largest), including a provisional last peak.
func (c *Collector) Peaks() []Maximum {
	all := append([]Maximum(nil), c.peaks...)
	if c.hasPend && c.pend.Hm0 >= c.cfg.PeakFloor {
		all = append(all, c.pend)
	}
	out := make([]Maximum, 0, len(all))
	for lo := 0; lo < len(all); {
		hi := lo
		for hi < len(all) && all[hi].Year == all[lo].Year {
			hi++
		}
		yr := all[lo:hi]
		if len(yr) > c.cfg.MaxPeaksPerYear {
			idx := make([]int, len(yr))
			for i := range idx {
				idx[i] = i
			}
			sort.SliceStable(idx, func(a, b int) bool { return yr[idx[a]].Hm0 > yr[idx[b]].Hm0 })
			keep := idx[:c.cfg.MaxPeaksPerYear]
			sort.Ints(keep)
			for _, i := range keep {
				out = append(out, yr[i])
			}
		} else {
			out = append(out, yr...)
		}
		lo = hi
	}
	return out
}

// ErrMerge is wrapped by every Merge error.
var ErrMerge = errors.New("extremes: cannot merge collectors")

// Merge appends the state of later, a Collector fed with the steps that follow
// those fed to c, so that c becomes exactly (byte for byte, see MarshalBinary)
// the state of one Collector fed with the whole record. Both must have the same
// configuration and later's first step must come after c's last.
func (c *Collector) Merge(later *Collector) error {
	if later == nil || !later.started {
		return nil
	}
	if c.cfg != later.cfg {
		return fmt.Errorf("%w: configurations differ (%+v vs %+v); use one CollectorConfig for all parts of a run", ErrMerge, c.cfg, later.cfg)
	}
	if c.err == nil && later.err != nil {
		c.err = later.err
	}
	if !c.started {
		*c = *later.clone()
		return nil
	}
	if !(later.t0 > c.last) {
		return fmt.Errorf("%w: later part starts at %g h, not after this part's last step at %g h; merge parts in time order", ErrMerge, later.t0, c.last)
	}
	sep := c.cfg.SeparationHours
	// 1. Years: combine a year split between the parts, append the rest.
	lb := later.years
	if n := len(c.years); n > 0 && len(lb) > 0 && c.years[n-1].Max.Year == lb[0].Max.Year {
		a, b := &c.years[n-1], lb[0]
		if b.ValidMin > 0 && (a.ValidMin == 0 || b.Max.Hm0 > a.Max.Hm0) {
			a.Max = b.Max
		}
		a.Minutes += b.Minutes
		a.ValidMin += b.ValidMin
		a.Dropped += b.Dropped
		if !math.IsNaN(b.DroppedMax) && (math.IsNaN(a.DroppedMax) || b.DroppedMax > a.DroppedMax) {
			a.DroppedMax = b.DroppedMax
		}
		lb = lb[1:]
	}
	c.years = append(c.years, lb...)
	// 2. Peaks: replay later's head (all its finite steps within sep of its start)
	// through this state machine; that decides everything the boundary can change.
	for _, s := range later.head {
		c.feedPeak(s)
	}
	c.last = later.last
	hb := later.t0 + sep // end of later's head
	if math.IsNaN(later.lastOK) || later.lastOK < hb {
		// later has nothing after its head: the replayed state is the whole story.
		return c.err
	}
	// later has finite steps after its head. Resolve the replayed pending candidate.
	if c.hasPend {
		p := c.pend
		c.hasPend = false
		switch {
		case p.Hours < later.t0:
			c.confirm(p) // a step after later's head is more than sep after p
		case later.hasPend && later.pend.Hours == p.Hours:
			c.hasPend, c.pend = true, p
		case later.hasPeakAt(p.Hours):
			c.confirm(p)
		}
	}
	for _, p := range later.peaks {
		if p.Hours >= hb {
			c.confirm(p)
		}
	}
	if later.hasPend && later.pend.Hours >= hb {
		c.hasPend, c.pend = true, later.pend
	}
	c.window = append(c.window[:0], later.window...)
	c.lastOK = later.lastOK
	return c.err
}

func (c *Collector) hasPeakAt(h float64) bool {
	for _, p := range c.peaks {
		if p.Hours == h {
			return true
		}
		if p.Hours > h {
			return false
		}
	}
	return false
}

func (c *Collector) clone() *Collector {
	d := *c
	d.years = append([]yearStats(nil), c.years...)
	d.head = append([]Maximum(nil), c.head...)
	d.window = append([]Maximum(nil), c.window...)
	d.wbuf = nil
	d.peaks = append([]Maximum(nil), c.peaks...)
	return &d
}

// Binary layout: magic "SGXC", version 2, then little-endian fields in a
// fixed order. Version 2 (issue 27) stores each year's covered and valid time
// in minutes where version 1 stored step counts; a version-1 state is refused.
var collectorMagic = [4]byte{'S', 'G', 'X', 'C'}

const collectorVersion = 2

// MarshalBinary encodes the complete state; equal states give equal bytes.
// Input errors (Err) are not stored.
func (c *Collector) MarshalBinary() ([]byte, error) {
	var b bytes.Buffer
	w := func(v any) { _ = binary.Write(&b, binary.LittleEndian, v) }
	b.Write(collectorMagic[:])
	w(uint16(collectorVersion))
	w(int32(c.cfg.YearStartMonth))
	w(c.cfg.SeparationHours)
	w(int32(c.cfg.MaxPeaksPerYear))
	w(c.cfg.PeakFloor)
	w(c.started)
	w(c.t0)
	w(c.last)
	w(c.lastOK)
	w(uint32(len(c.years)))
	for _, y := range c.years {
		writeMax(w, y.Max)
		w(y.Minutes)
		w(y.ValidMin)
		w(y.Dropped)
		w(y.DroppedMax)
	}
	for _, list := range [][]Maximum{c.head, c.window, c.peaks} {
		w(uint32(len(list)))
		for _, m := range list {
			writeMax(w, m)
		}
	}
	w(c.hasPend)
	pend := Maximum{}
	if c.hasPend {
		pend = c.pend
	}
	writeMax(w, pend) // a cleared candidate is written as zeros: equal states, equal bytes
	return b.Bytes(), nil
}

func writeMax(w func(any), m Maximum) {
	w(int32(m.Year))
	w(m.Hours)
	w(m.Hm0)
	w(m.Te)
	w(m.Tp)
}

// UnmarshalBinary restores a state written by MarshalBinary.
func (c *Collector) UnmarshalBinary(data []byte) error {
	r := bytes.NewReader(data)
	var err error
	rd := func(v any) {
		if err == nil {
			err = binary.Read(r, binary.LittleEndian, v)
		}
	}
	var magic [4]byte
	rd(&magic)
	var ver uint16
	rd(&ver)
	if err == nil && magic == collectorMagic && ver == 1 {
		return fmt.Errorf("extremes: collector state of version 1 (years counted in steps), but this swellgrid reads version %d (years counted in hours of covered time); the checkpoint or shard comes from an older swellgrid: rerun from the start", collectorVersion)
	}
	if err != nil || magic != collectorMagic || ver != collectorVersion {
		return fmt.Errorf("extremes: not a collector state of version %d (bad header); the checkpoint may come from another swellgrid version: rerun from the start", collectorVersion)
	}
	var d Collector
	var i32 int32
	rd(&i32)
	d.cfg.YearStartMonth = int(i32)
	rd(&d.cfg.SeparationHours)
	rd(&i32)
	d.cfg.MaxPeaksPerYear = int(i32)
	rd(&d.cfg.PeakFloor)
	rd(&d.started)
	rd(&d.t0)
	rd(&d.last)
	rd(&d.lastOK)
	readMax := func() Maximum {
		var m Maximum
		var y int32
		rd(&y)
		m.Year = int(y)
		rd(&m.Hours)
		rd(&m.Hm0)
		rd(&m.Te)
		rd(&m.Tp)
		return m
	}
	var n uint32
	rd(&n)
	if err == nil && int64(n) > int64(len(data)) {
		return fmt.Errorf("extremes: corrupt collector state (%d years in %d bytes)", n, len(data))
	}
	for k := uint32(0); k < n && err == nil; k++ {
		var y yearStats
		y.Max = readMax()
		rd(&y.Minutes)
		rd(&y.ValidMin)
		rd(&y.Dropped)
		rd(&y.DroppedMax)
		d.years = append(d.years, y)
	}
	for _, dst := range []*[]Maximum{&d.head, &d.window, &d.peaks} {
		rd(&n)
		if err == nil && int64(n) > int64(len(data)) {
			return fmt.Errorf("extremes: corrupt collector state (list of %d in %d bytes)", n, len(data))
		}
		for k := uint32(0); k < n && err == nil; k++ {
			*dst = append(*dst, readMax())
		}
	}
	rd(&d.hasPend)
	d.pend = readMax()
	if err != nil {
		return fmt.Errorf("extremes: truncated or corrupt collector state: %v", err)
	}
	if r.Len() != 0 {
		return fmt.Errorf("extremes: %d trailing bytes after collector state", r.Len())
	}
	*c = d
	return nil
}
