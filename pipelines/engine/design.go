package engine

import (
	"fmt"
	"math"

	"swellgrid/ingest"
	"swellgrid/stats/climate"
	"swellgrid/stats/design"
	"swellgrid/stats/extremes"
)

// cellDesign is the design sea-state result of one cell.
type cellDesign struct {
	ok       bool
	why      string // flag when not ok
	model    design.Joint
	periods  []float64        // design.return_periods_y
	largest  []design.Point   // per design.return_periods_y
	contours [][]design.Point // per design.return_periods_y
	belowMax bool             // some contour's largest Hm0, for T >= the record, lies below the record's largest Hm0
}

// seaStateHours is the duration of one sea state for the contours: the
// spec's design.sea_state_h, else the data's time step; when the step
// changes, the step of the segment that covers the most time (seaStateNote
// says so in the manifest).
func (e *engine) seaStateHours() float64 {
	if h := e.spec.Design.SeaStateH; h > 0 {
		return h
	}
	if sg := e.longestSegment(); sg != nil {
		return sg.StepHours
	}
	if e.cat.StepSeconds > 0 {
		return float64(e.cat.StepSeconds) / 3600
	}
	return 3 // no step known (a single step): the common 3-hour sea state
}

// longestSegment is the segment of constant step covering the most time
// (the earliest of equals), nil when none has a constant step or the record
// has one step.
func (e *engine) longestSegment() *ingest.Segment {
	if e.cat.Steps < 2 {
		return nil
	}
	var best *ingest.Segment
	for i := range e.cat.Segments {
		sg := &e.cat.Segments[i]
		if sg.StepHours > 0 && (best == nil || sg.Hours > best.Hours) {
			best = sg
		}
	}
	return best
}

// seaStateNote says which sea-state duration the design contours use when
// the record's step changes ("" when it does not, or the spec sets it).
func (e *engine) seaStateNote() string {
	segs := e.cat.Segments
	constant := len(segs) == 0 || len(segs) == 1 && segs[0].StepHours > 0
	if constant || e.spec.Design.SeaStateH > 0 {
		return ""
	}
	return fmt.Sprintf("the time step changes (%d segments): the design contours take a sea state of %g h, the step of the segment covering the most time; set design.sea_state_h to choose another", len(e.cat.Segments), e.seaStateHours())
}

// designInputs turns a cell's Hm0 exceedance curve and joint Hm0 x Te
// occurrence table (both bounded, exactly mergeable parts of its state) into
// the binned inputs of design.FitJoint.
func designInputs(exceed []climate.ExceedRow, scatter []climate.ScatterRow) (design.Hist, []design.Cell) {
	var h design.Hist
	var prev *climate.ExceedRow
	for i := range exceed {
		x := &exceed[i]
		if x.Variable != "hm0_m" {
			continue
		}
		if prev != nil {
			h.Edges = append(h.Edges, prev.Value)
			h.Weights = append(h.Weights, math.Max(prev.ShareExceeded-x.ShareExceeded, 0))
		}
		prev = x
	}
	if prev != nil {
		h.Edges = append(h.Edges, prev.Value)
		if prev.ShareExceeded > 0 { // the open top bin
			h.Weights = append(h.Weights, prev.ShareExceeded)
			h.Edges = append(h.Edges, math.Inf(1))
		}
	}
	cells := make([]design.Cell, 0, len(scatter))
	for _, s := range scatter {
		cells = append(cells, design.Cell{Hm0Lo: s.Hm0LoM, Hm0Hi: s.Hm0HiM, TeLo: s.TeLoS, TeHi: s.TeHiS, Weight: s.Hours})
	}
	return h, cells
}

// designFor fits the joint model of a cell and its contours.
func (e *engine) designFor(r *cellResult) *cellDesign {
	d := &cellDesign{}
	if !e.spec.Design.Enabled {
		return d
	}
	h, cells := designInputs(r.exceed, r.scatter)
	m, err := design.FitJoint(h, cells)
	if err != nil {
		d.why = "design_few_data"
		return d
	}
	d.ok, d.model = true, m
	dur := e.seaStateHours()
	years := r.ext.RecordYears
	for _, T := range e.spec.Design.ReturnPeriodsY {
		big := m.Largest(T, dur)
		c := m.Contour(T, dur, e.spec.Design.ContourPoints)
		if g := e.spec.Physics.G; !seaStates(c, g) || !seaStates([]design.Point{big}, g) {
			return &cellDesign{why: "design_implausible"}
		}
		d.periods = append(d.periods, T)
		d.largest = append(d.largest, big)
		d.contours = append(d.contours, c)
		if T >= years && big.Hm0 < r.sum.Hm0MaxM {
			d.belowMax = true
		}
	}
	return d
}

// seaStates reports whether every point is a sea state: Hm0 positive and
// below maxSeaHm0M, Te below climate.MaxSeaPeriodS, and the deep-water
// steepness no more than the limit of a breaking wave (g: the run's
// physics.g),
//
//	2 pi Hm0 / (g Te^2) <= 1/7
//
// (Michell 1893's limiting steepness H/L = 1/7, with the deep-water length
// L = g T^2 / (2 pi); common practice, quoted from memory, and loose for a
// sea state, whose Hm0 over the length of its energy period stays far
// below it). A contour beyond them (the conditional mean of ln Te, A0 + A1
// Hm0^A2, extrapolated far past the record's rows with a large A2) is no
// design sea state: the cell's design is withheld and flagged
// design_implausible rather than published.
func seaStates(ps []design.Point, g float64) bool {
	const limit = 1.0 / 7
	for _, p := range ps {
		if !(p.Hm0 > 0 && p.Hm0 < maxSeaHm0M && p.Te > 0 && p.Te < climate.MaxSeaPeriodS) ||
			2*math.Pi*p.Hm0/(g*p.Te*p.Te) > limit {
			return false
		}
	}
	return true
}

// designFlags lists the design flags of a cell.
func (d *cellDesign) flags() []string {
	var out []string
	if d == nil {
		return nil
	}
	if d.why != "" {
		out = append(out, d.why)
	}
	if d.belowMax {
		out = append(out, "design_below_record_max")
	}
	return out
}

// ladderFor evaluates the threshold diagnostics of a cell at the Hm0
// quantiles of extremes.LadderQuantiles.
func ladderFor(r *cellResult, c *cell) []extremes.ThresholdRow {
	us := make([]float64, len(extremes.LadderQuantiles))
	for i, q := range extremes.LadderQuantiles {
		us[i] = percentileOf(r.sum, 100*q)
	}
	return extremes.ThresholdDiagnostics(c.col, extremes.LadderQuantiles, us, r.ext.GPDFit)
}
