package ingest

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// The record's time axis knows durations: each step stands for an interval of
// time (its weight), found from the times alone, so that a record whose step
// changes (a hindcast extended with a finer run), an irregular record and a
// record with gaps are all weighted by time, never by steps.
//
// The rule (README, "Time steps, durations and gaps"), for record times
// t_0 < ... < t_{n-1} and differences d_i = t_{i+1} - t_i:
//
//   - local step q_i: the larger of the upper quartiles (nearest rank, the
//     ceil(0.75 m)-th smallest of m values) of the gapWindow differences
//     before d_i and of the gapWindow differences after it (a side with no
//     difference is left out);
//   - d_i is a gap when d_i > gapFactor * q_i (a difference longer than one
//     and a half times the longer steps on either side of it);
//   - step i stands for w_i = d_i when d_i is not a gap; before a gap and at
//     the end of the record for its previous difference d_{i-1} (when that is
//     not a gap itself), else for q_i; a record of one step for one hour;
//   - the time a gap leaves uncovered is d_i - w_i.
//
// Each step is thus the interval from its time to the next step's time,
// [t_i, t_{i+1}): the intervals tile the covered time without overlap, the
// hours of a month are the hours its steps stand for, a constant-step record
// weights every step by its step (as before durations), and a change of step
// at a file boundary (3-hourly then hourly) gives each side its own step. The
// upper quartile, not the median, sets the local step so that steps of mixed
// length interleaved (1.5 h, 3 h, 1.5 h, ...) are an irregular record, not a
// series of gaps; a step missing from a regular record (one difference of
// twice the step among equal ones) is a gap. Each side is taken on its own,
// and the larger kept, so that a difference next to a change of step (hourly
// then 1.5/3 h interleaved, 3-hourly then hourly) is judged by the steps of
// its own side, not by a mixture that the change dominates.
const (
	gapWindow = 12
	gapFactor = 1.5
	// minSegmentRun is the fewest consecutive steps of one duration that make
	// a segment of constant step; shorter runs together are irregular.
	minSegmentRun = 3
)

// Segment is a stretch of the record with one step duration (StepHours), or
// an irregular stretch whose steps vary between MinStepHours and
// MaxStepHours (StepHours 0). Gaps do not end a segment.
type Segment struct {
	First        string  `json:"first"`
	Last         string  `json:"last"`
	Steps        int     `json:"steps"`
	StepHours    float64 `json:"step_hours"` // 0: irregular
	MinStepHours float64 `json:"min_step_hours"`
	MaxStepHours float64 `json:"max_step_hours"`
	Hours        float64 `json:"hours"` // the time its steps stand for
	first, last  int     // step indices
}

// String describes the segment for people: "2001-01-01 00:00:00 to
// 2002-12-31 21:00:00 every 3 h (5840 steps)".
func (s Segment) String() string {
	if s.StepHours > 0 {
		return fmt.Sprintf("%s to %s every %s h (%d steps)", s.First, s.Last, hoursText(s.StepHours), s.Steps)
	}
	return fmt.Sprintf("%s to %s irregular, steps of %s to %s h (%d steps)", s.First, s.Last, hoursText(s.MinStepHours), hoursText(s.MaxStepHours), s.Steps)
}

// hoursText writes hours briefly: 3, 1.5, 0.25.
func hoursText(h float64) string { return strconv.FormatFloat(h, 'f', -1, 64) }

// Duplicate is a time held by two files (for the roles both hold): used
// once. Identical is true when every role's values are the same in both.
type Duplicate struct {
	Roles     []string `json:"roles"`
	Time      string   `json:"time"`
	Files     []string `json:"files"`
	Identical bool     `json:"identical"`
	// Used is the file whose values the record uses.
	Used  string `json:"used"`
	stamp Stamp
	a, b  int // indices into Catalog.Files
}

// DuplicatePolicy says which file's values a time held by two files takes.
type DuplicatePolicy string

// The duplicate policies (spec key input.duplicate_steps).
const (
	DuplicatesRefuse DuplicatePolicy = ""      // identical values are used once; different values are refused
	DuplicatesFirst  DuplicatePolicy = "first" // the earlier file's values
	DuplicatesLast   DuplicatePolicy = "last"  // the later file's values
)

// stepDurations gives each step's duration in seconds and whether a gap
// follows it, for the increasing times ts (see the rule above).
func stepDurations(ts []Stamp) (dur []int64, gapAfter []bool) {
	n := len(ts)
	dur = make([]int64, n)
	gapAfter = make([]bool, n)
	if n == 0 {
		return
	}
	if n == 1 {
		dur[0] = 3600
		return
	}
	d := make([]int64, n-1)
	for i := range d {
		d[i] = int64(ts[i+1] - ts[i])
	}
	q := make([]int64, n-1)
	win := make([]int64, 0, gapWindow)
	// upper is the upper quartile (nearest rank) of d[a:b], 0 when empty.
	upper := func(a, b int) int64 {
		a, b = max(a, 0), min(b, len(d))
		if a >= b {
			return 0
		}
		win = append(win[:0], d[a:b]...)
		slices.Sort(win)
		return win[int(math.Ceil(0.75*float64(len(win))))-1]
	}
	for i := range d {
		q[i] = max(upper(i-gapWindow, i), upper(i+1, i+1+gapWindow))
		if q[i] == 0 { // a record of two steps
			q[i] = d[i]
			continue
		}
		gapAfter[i] = float64(d[i]) > gapFactor*float64(q[i])
	}
	for i := 0; i < n; i++ {
		switch {
		case i < n-1 && !gapAfter[i]:
			dur[i] = d[i]
		case i >= 1 && !gapAfter[i-1]:
			dur[i] = d[i-1]
		case i < n-1:
			dur[i] = q[i]
		default:
			dur[i] = q[n-2]
		}
	}
	return dur, gapAfter
}

// segments groups steps into segments of one duration (runs of at least
// minSegmentRun steps) and irregular segments (shorter runs together).
func (c *Catalog) segments() []Segment {
	var out []Segment
	n := len(c.dur)
	add := func(a, b int, constant bool) {
		s := Segment{First: c.Date(c.times[a]).String(), Last: c.Date(c.times[b-1]).String(), Steps: b - a, first: a, last: b - 1}
		lo, hi, sum := c.dur[a], c.dur[a], int64(0)
		for _, w := range c.dur[a:b] {
			lo, hi, sum = min(lo, w), max(hi, w), sum+w
		}
		s.MinStepHours, s.MaxStepHours, s.Hours = float64(lo)/3600, float64(hi)/3600, float64(sum)/3600
		if constant {
			s.StepHours = s.MinStepHours
		}
		out = append(out, s)
	}
	irr := -1 // start of the pending irregular stretch
	for i := 0; i < n; {
		j := i
		for j < n && c.dur[j] == c.dur[i] {
			j++
		}
		if j-i >= minSegmentRun {
			if irr >= 0 {
				add(irr, i, false)
				irr = -1
			}
			add(i, j, true)
		} else if irr < 0 {
			irr = i
		}
		i = j
	}
	if irr >= 0 {
		add(irr, n, false)
	}
	return out
}

// StepHours returns the duration in hours that step i (an index into Times)
// stands for.
func (c *Catalog) StepHours(i int) float64 { return float64(c.dur[i]) / 3600 }

// GapAfter reports whether time no step covers follows step i.
func (c *Catalog) GapAfter(i int) bool { return c.gapAfter[i] }

// CoveredHours is the time the record's steps stand for.
func (c *Catalog) CoveredHours() float64 {
	var s int64
	for _, w := range c.dur {
		s += w
	}
	return float64(s) / 3600
}

// SegmentsText lists the segments on one line each (at most max, then a
// count), for inspect and warnings.
func SegmentsText(segs []Segment, max int) string {
	var b strings.Builder
	for i, s := range segs {
		if i == max {
			fmt.Fprintf(&b, "; and %d more segments", len(segs)-max)
			break
		}
		if i > 0 {
			b.WriteString("; ")
		}
		b.WriteString(s.String())
	}
	return b.String()
}

// timeDurations finds every step's duration, the gaps (in hours) and the
// segments of the record, and warns when the step changes.
func (c *Catalog) timeDurations() {
	secs, gapAfter := stepDurations(c.times)
	c.dur, c.gapAfter = secs, gapAfter
	for i, g := range gapAfter {
		if !g {
			continue
		}
		t := c.times[i]
		c.Gaps = append(c.Gaps, Gap{After: c.Date(t).String(), Before: c.Date(c.times[i+1]).String(),
			First: c.Date(t + Stamp(secs[i])).String(), Hours: float64(int64(c.times[i+1]-t)-secs[i]) / 3600})
	}
	c.Segments = c.segments()
	if len(c.Segments) > 1 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("the time step changes: %s; every statistic is weighted by each step's duration", SegmentsText(c.Segments, 6)))
	} else if len(c.Segments) == 1 && c.Segments[0].StepHours == 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("the time step is irregular: %s; every statistic is weighted by each step's duration", c.Segments[0]))
	}
	if len(c.Gaps) > 0 {
		h := 0.0
		for _, g := range c.Gaps {
			h += g.Hours
		}
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d gaps in the time axis, %s hours not covered in all", len(c.Gaps), hoursText(math.Round(h*1000)/1000)))
	}
}

// Durations is a record of the durations of a record's first Steps steps:
// an update continues saved states only when the steps they were fed keep
// their durations (a step's duration depends on the steps after it).
type Durations struct {
	Steps  int    `json:"steps"`
	SHA256 string `json:"sha256"` // of the durations in seconds, int64 little-endian
}

// DurationsOf records the durations of the first n steps.
func (c *Catalog) DurationsOf(n int) Durations {
	h := sha256.New()
	var b [8]byte
	for _, w := range c.dur[:min(n, len(c.dur))] {
		binary.LittleEndian.PutUint64(b[:], uint64(w))
		h.Write(b[:])
	}
	return Durations{Steps: min(n, len(c.dur)), SHA256: hex.EncodeToString(h.Sum(nil))}
}

// DurationsChange says how the durations of the first old.Steps steps differ
// from old ("" when they are the same): the first step whose duration is
// not what it was. constant > 0 stands for a record made before durations
// were recorded, whose steps all stood for constant seconds.
func (c *Catalog) DurationsChange(old Durations, constant int64) string {
	if old.Steps > len(c.dur) {
		return fmt.Sprintf("the record now has %d steps, fewer than the %d the earlier run read", len(c.dur), old.Steps)
	}
	if old.SHA256 != "" {
		if c.DurationsOf(old.Steps).SHA256 == old.SHA256 {
			return ""
		}
		return fmt.Sprintf("the durations of the earlier run's %d steps changed with the new files (each step stands for the time until the next: a step shared at the boundary, or a new step length, changes them)", old.Steps)
	}
	for i, w := range c.dur[:old.Steps] {
		if w != constant {
			return fmt.Sprintf("step %s now stands for %s h, but the earlier run weighted every step by its step of %s h", c.Date(c.times[i]), hoursText(float64(w)/3600), hoursText(float64(constant)/3600))
		}
	}
	return ""
}
