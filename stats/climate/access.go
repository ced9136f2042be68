package climate

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/bits"
)

// Access windows for repairs: the waiting time from a failure to the start
// of a repair, computed exactly from a cell's own record by duration.
//
// A repair of duration D can start at an instant x when the sea stays calm
// (Hm0 below the access limit and, if set, Te below the Te limit) over the
// whole interval [x, x+D) without a break in the covered time. For a failure
// at instant x the wait is w(x) = (first such instant >= x) - x, in real
// (calendar) time: a gap in the record holds no failure instant and no
// start, but its time passes while one waits. Over a stretch of length G of
// covered time with no start instant, the wait falls linearly from G to 0,
// so its integral over the stretch is G^2/2; the mean wait of a record is
// the sum of these integrals over the record's covered time (with gaps, each
// covered piece [p, q) of a stretch ending at E contributes
// ((E-p)^2 - (E-q)^2)/2). A failure in the last stretch of the record,
// after the last start instant, waits until the end of the record (a lower
// bound; AccessResult.CensoredShare says how much of the record that is).
// The waits are also split by the calendar month of the failure instant
// (each step's whole time goes to the month of its start, as everywhere in
// this package).
//
// Per-cell state is bounded: besides the closed sums (12 months), it keeps
// the open stretch after the last known start instant (by month: covered
// minutes and the sum of squares relative to its first instant, which is
// all that closing it at a later start E needs), the calm run open at the
// end (its start and the last min(length, D) of its time split by month:
// D <= MaxWindowHours, so at most a few month segments) and, for joins, the
// calm run that began at the state's first step and its first start
// instant. All sums are integers (whole minutes, 128-bit), so Merge is exact
// and a record split anywhere gives the state of the whole record.

// AccessRule is the access limit and repair duration of one device.
type AccessRule struct {
	// Hm0M: a step is calm when Hm0 < Hm0M (m, > 0).
	Hm0M float64
	// TeS: when > 0, a calm step also needs Te < TeS (s); a step without a
	// valid Te is then not calm.
	TeS float64
	// RepairH is the repair duration (h, a whole number of minutes, at most
	// MaxWindowHours).
	RepairH float64
}

// Validate checks the rule; errors name the field and what to do.
func (r AccessRule) Validate() error {
	var errs []error
	if !positiveFinite(r.Hm0M) {
		errs = append(errs, fmt.Errorf("access rule: Hm0 limit %g m: give a positive finite height", r.Hm0M))
	}
	if !(r.TeS >= 0) || math.IsInf(r.TeS, 0) {
		errs = append(errs, fmt.Errorf("access rule: Te limit %g s: give a positive finite period, or 0 for none", r.TeS))
	}
	m := math.Round(r.RepairH * 60)
	switch {
	case !positiveFinite(r.RepairH):
		errs = append(errs, fmt.Errorf("access rule: repair duration %g h: give a positive duration in hours", r.RepairH))
	case r.RepairH > MaxWindowHours:
		errs = append(errs, fmt.Errorf("access rule: repair duration %g h exceeds the maximum of %d h", r.RepairH, MaxWindowHours))
	case math.Abs(m-r.RepairH*60) > 1e-6 || m < 1:
		errs = append(errs, fmt.Errorf("access rule: repair duration %g h is not a whole number of minutes", r.RepairH))
	}
	return errors.Join(errs...)
}

// calm says whether a step with Hm0 h and Te te (NaN when missing) lets a
// repair go on.
func (r AccessRule) calm(h, te float64) bool {
	return h < r.Hm0M && (r.TeS == 0 || te < r.TeS)
}

// i128 is a signed 128-bit integer in two's complement.
type i128 struct{ hi, lo uint64 }

func (a *i128) addMul(x, y int64) {
	hi, lo := bits.Mul64(uint64(x), uint64(y))
	if x < 0 {
		hi -= uint64(y)
	}
	if y < 0 {
		hi -= uint64(x)
	}
	var c uint64
	a.lo, c = bits.Add64(a.lo, lo, 0)
	a.hi += hi + c
}

func (a *i128) add(b i128) {
	var c uint64
	a.lo, c = bits.Add64(a.lo, b.lo, 0)
	a.hi += b.hi + c
}

func (a *i128) sub(b i128) {
	var c uint64
	a.lo, c = bits.Sub64(a.lo, b.lo, 0)
	a.hi -= b.hi + c
}

func (a i128) float() float64 {
	z := new(big.Int).SetUint64(a.hi)
	z.Lsh(z, 64)
	z.Or(z, new(big.Int).SetUint64(a.lo))
	if a.hi>>63 == 1 {
		z.Sub(z, new(big.Int).Lsh(big.NewInt(1), 128))
	}
	f, _ := new(big.Float).SetInt(z).Float64()
	return f
}

// pend is a set of covered pieces [p, q) waiting for the same next start
// instant E: per month the covered minutes c and m = sum of (q-ref)^2 -
// (p-ref)^2, so that closing at E adds 2 (E-ref) c - m = sum of (E-p)^2 -
// (E-q)^2, twice the integral of the wait over the pieces.
type pend struct {
	has bool
	ref int64
	c   [12]int64
	m   [12]i128
}

func (p *pend) add(cm int8, a, b int64) {
	if b <= a {
		return
	}
	if !p.has {
		p.has, p.ref = true, a
	}
	p.c[cm] += b - a
	p.m[cm].addMul(b-a, b+a-2*p.ref)
}

// absorb adds o's pieces (rebased to p's reference: (q-a)^2 - (p-a)^2 =
// (q-b)^2 - (p-b)^2 + 2 (b-a) (q-p)).
func (p *pend) absorb(o *pend) {
	if !o.has {
		return
	}
	if !p.has {
		*p = *o
		return
	}
	for k := range p.c {
		if o.c[k] == 0 {
			continue
		}
		p.c[k] += o.c[k]
		p.m[k].add(o.m[k])
		p.m[k].addMul(2*(o.ref-p.ref), o.c[k])
	}
}

// closeAt adds twice the wait integral of every piece, all waiting for the
// start instant e, to dst and empties p; it returns the covered minutes.
func (p *pend) closeAt(e int64, dst *[12]i128) int64 {
	if !p.has {
		return 0
	}
	var n int64
	for k := range p.c {
		if p.c[k] == 0 {
			continue
		}
		n += p.c[k]
		dst[k].addMul(2*(e-p.ref), p.c[k])
		dst[k].sub(p.m[k])
	}
	*p = pend{}
	return n
}

// accSeg is a stretch [p, q) of a calm run in calendar month cm.
type accSeg struct {
	cm   int8
	p, q int64
}

// accRun is a calm run [start, end) with the last min(end-start, D) of its
// time split by month (older segments are dropped).
type accRun struct {
	start, end int64
	nseg       int8
	seg        [4]accSeg
}

func (r *accRun) length() int64 { return r.end - r.start }

// extend adds [p, q) in month cm at the end of the run and drops the
// segments that end before the last d minutes. With more than four month
// segments inside d (only with steps much shorter than their month at both
// ends of d), the two oldest are folded into one under the later month.
func (r *accRun) extend(cm int8, p, q, d int64) {
	if r.end == r.start {
		r.start, r.nseg = p, 0
	}
	r.end = q
	if r.nseg > 0 && r.seg[r.nseg-1].cm == cm && r.seg[r.nseg-1].q == p {
		r.seg[r.nseg-1].q = q
	} else {
		if int(r.nseg) == len(r.seg) {
			r.seg[1].p = r.seg[0].p
			copy(r.seg[:], r.seg[1:])
			r.nseg--
		}
		r.seg[r.nseg] = accSeg{cm, p, q}
		r.nseg++
	}
	k := int8(0)
	for k < r.nseg-1 && r.seg[k].q <= r.end-d {
		k++
	}
	if k > 0 {
		copy(r.seg[:], r.seg[k:r.nseg])
		r.nseg -= k
		for i := r.nseg; i < int8(len(r.seg)); i++ {
			r.seg[i] = accSeg{}
		}
	}
}

// tail adds the part of the run from lo on (clipped to the segments) to p.
func (r *accRun) tail(lo int64, p *pend) {
	for _, s := range r.seg[:r.nseg] {
		p.add(s.cm, max(s.p, lo), s.q)
	}
}

// AccessState is the mergeable waiting-time state of one cell for one
// AccessRule (see the comment at the top of access.go). The zero value is
// not usable: make it with NewAccessState.
type AccessState struct {
	rule AccessRule
	d    int64 // repair duration, minutes

	hasAcc, startBroken, endBroken bool
	first, lastEnd                 int64

	cov    [12]uint64 // covered minutes by month
	closed [12]i128   // twice the wait integral (minutes^2) by month, waits known

	hasStart   bool  // some start instant seen
	firstStart int64 // the first one
	pend       pend  // covered time after the last known start, before run
	run        accRun
	leadOpen   bool  // every step so far was calm and contiguous: run is the lead run
	leadLen    int64 // otherwise: length of the calm run that began at the first step (0 if none)
}

// NewAccessState returns an empty state for rule (which must pass Validate).
func NewAccessState(rule AccessRule) (*AccessState, error) {
	if err := rule.Validate(); err != nil {
		return nil, err
	}
	a := &AccessState{rule: rule, d: int64(math.Round(rule.RepairH * 60))}
	a.Reset()
	return a, nil
}

// Reset empties the state.
func (a *AccessState) Reset() {
	*a = AccessState{rule: a.rule, d: a.d, leadOpen: true}
}

// endRun ends the open calm run: its time from which no repair can start
// (all of it if shorter than D, else its last D) joins the open stretch.
func (a *AccessState) endRun() {
	if a.leadOpen {
		a.leadLen, a.leadOpen = a.run.length(), false
	}
	if a.run.length() == 0 {
		a.run = accRun{}
		return
	}
	a.run.tail(a.run.end-a.d, &a.pend)
	a.run = accRun{}
}

// brk breaks the record (a rejected step): the calm run ends.
func (a *AccessState) brk() {
	a.endRun()
	if !a.hasAcc {
		a.startBroken = true
	}
	a.endBroken = true
}

// Add feeds one step prepared by PrepareTime with its Hm0 h (m) and Te te
// (s), NaN when missing (a missing value is not calm). Steps come in time
// order; a step that does not start where the previous one ended leaves a
// gap, which ends the calm run.
func (a *AccessState) Add(t *StepTime, h, te float64) {
	if t.bad {
		a.brk()
		return
	}
	a.add(t.start, int64(t.w), t.cm, a.rule.calm(h, te))
}

func (a *AccessState) add(start, w int64, cm int8, calm bool) {
	if !a.hasAcc {
		a.hasAcc, a.first = true, start
	} else if a.endBroken || start != a.lastEnd {
		a.endRun()
	}
	a.endBroken = false
	a.lastEnd = start + w
	a.cov[cm] += uint64(w)
	if !calm {
		a.endRun()
		a.pend.add(cm, start, start+w)
		return
	}
	prev := a.run.length()
	a.run.extend(cm, start, start+w, a.d)
	if prev < a.d && a.run.length() >= a.d {
		a.reached()
	}
}

// reached is called when the open run becomes at least D long: its start is
// a start instant, which closes the open stretch.
func (a *AccessState) reached() {
	a.pend.closeAt(a.run.start, &a.closed)
	if !a.hasStart {
		a.hasStart, a.firstStart = true, a.run.start
	}
}

// Merge folds later into a: afterwards a is the state of a's record
// followed by later's, exactly as one state fed both records. later must
// start at or after the end of a and have the same rule; it is not changed.
func (a *AccessState) Merge(later *AccessState) error {
	o := later
	if o == a {
		return errors.New("climate: Merge of an access state with itself")
	}
	if o.rule != a.rule {
		return errors.New("climate: Merge of access states with different rules: build all states of a run from one rule")
	}
	if !o.hasAcc && !o.startBroken {
		return nil
	}
	if !a.hasAcc && !a.startBroken {
		*a = *o
		return nil
	}
	if a.hasAcc && o.hasAcc && o.first < a.lastEnd {
		return fmt.Errorf("climate: Merge of access states out of order: the later state starts at %.4f h, before this one ends at %.4f h (merge parts in time order)",
			float64(o.first)/60, float64(a.lastEnd)/60)
	}
	adjacent := a.hasAcc && o.hasAcc && !a.endBroken && !o.startBroken && o.first == a.lastEnd
	lt := a.run.length()
	ll := o.leadLen
	if o.leadOpen {
		ll = o.run.length()
	}
	wasLeadOpen := a.leadOpen
	if adjacent && lt > 0 && ll > 0 {
		c := lt + ll
		if lt < a.d && c >= a.d {
			a.reached()
		}
		if o.leadOpen {
			// later is one calm run continuing a's: the run stays open.
			for _, s := range o.run.seg[:o.run.nseg] {
				a.run.extend(s.cm, s.p, s.q, a.d)
			}
			a.run.start = a.run.end - c
			a.finishMerge(o)
			return nil
		}
		// the joined run ended inside later: a's part of it from which no
		// repair can start waits with later's head.
		a.run.tail(a.run.end+ll-a.d, &a.pend)
		a.run = accRun{}
		if wasLeadOpen {
			a.leadLen, a.leadOpen = c, false
		}
	} else {
		a.endRun()
	}
	if o.hasStart {
		a.pend.closeAt(o.firstStart, &a.closed)
		a.pend = o.pend
		if !a.hasStart {
			a.hasStart, a.firstStart = true, o.firstStart
		}
	} else {
		a.pend.absorb(&o.pend)
	}
	a.run = o.run
	a.finishMerge(o)
	return nil
}

// finishMerge adds later's sums and takes its end.
func (a *AccessState) finishMerge(o *AccessState) {
	for k := range a.cov {
		a.cov[k] += o.cov[k]
		a.closed[k].add(o.closed[k])
	}
	if !a.hasStart && o.hasStart {
		a.hasStart, a.firstStart = true, o.firstStart
	}
	if o.hasAcc {
		if !a.hasAcc {
			a.first = o.first
		}
		a.hasAcc = true
		a.lastEnd = o.lastEnd
		a.endBroken = o.endBroken
	} else {
		a.endBroken = true
	}
}

// AccessResult is the waiting time of a record for one rule.
type AccessResult struct {
	// MeanWaitH is the mean wait (h) from a failure at a uniformly random
	// covered instant to the first instant from which a repair can start;
	// NaN for an empty record.
	MeanWaitH float64
	// MonthWaitH[m] is the same for failures in calendar month m+1 (NaN
	// for a month without covered time).
	MonthWaitH [12]float64
	// MonthHours[m] is the covered time of calendar month m+1 (h).
	MonthHours [12]float64
	// CensoredShare is the share of covered time after the record's last
	// start instant, whose wait is cut at the end of the record (a lower
	// bound); 1 when no repair could ever start.
	CensoredShare float64
}

// Result returns the waits of the record so far (a is not changed).
func (a *AccessState) Result() AccessResult {
	c := *a
	c.endRun()
	censored := c.pend.closeAt(c.lastEnd, &c.closed)
	var r AccessResult
	var tot i128
	var cov uint64
	for k := range c.cov {
		tot.add(c.closed[k])
		cov += c.cov[k]
		r.MonthHours[k] = float64(c.cov[k]) / 60
		r.MonthWaitH[k] = MeanWaitH(c.closed[k].float()/2, float64(c.cov[k]))
	}
	r.MeanWaitH = MeanWaitH(tot.float()/2, float64(cov))
	r.CensoredShare = math.NaN()
	if cov > 0 {
		r.CensoredShare = float64(censored) / float64(cov)
	}
	return r
}

// MeanWaitH returns the mean waiting time in hours from the integral of the
// wait over the failure instants (minutes^2) and the covered time (minutes):
//
//	mean wait = (sum over stretches of G^2/2) / T
//
// (uniformly random failure instant over the covered time T; the integral
// of a wait falling linearly from G to 0 over a stretch of length G is
// G^2/2). NaN when T is 0. Source: the definition of the mean of a
// uniformly distributed failure time; the G^2/2 integral of a
// renewal-reward argument (common practice in access and weather-window
// analysis of offshore operations).
func MeanWaitH(integralMin2, coveredMin float64) float64 {
	if !(coveredMin > 0) {
		return math.NaN()
	}
	return integralMin2 / coveredMin / 60
}

// encode writes the state's fields in a fixed order (the rule is the
// config's, checked by its fingerprint).
func (a *AccessState) encode(e *enc) {
	e.bool(a.hasAcc)
	e.bool(a.startBroken)
	e.bool(a.endBroken)
	e.i64(a.first)
	e.i64(a.lastEnd)
	for k := range a.cov {
		e.u64(a.cov[k])
		e.u64(a.closed[k].hi)
		e.u64(a.closed[k].lo)
	}
	e.bool(a.hasStart)
	e.i64(a.firstStart)
	e.bool(a.pend.has)
	e.i64(a.pend.ref)
	for k := range a.pend.c {
		e.i64(a.pend.c[k])
		e.u64(a.pend.m[k].hi)
		e.u64(a.pend.m[k].lo)
	}
	e.i64(a.run.start)
	e.i64(a.run.end)
	e.u64(uint64(a.run.nseg))
	for _, s := range a.run.seg {
		e.u64(uint64(s.cm))
		e.i64(s.p)
		e.i64(s.q)
	}
	e.bool(a.leadOpen)
	e.i64(a.leadLen)
}

// decode reads what encode wrote into a state made for the same rule.
func (a *AccessState) decode(d *dec) {
	a.hasAcc, a.startBroken, a.endBroken = d.bool(), d.bool(), d.bool()
	a.first, a.lastEnd = d.i64(), d.i64()
	for k := range a.cov {
		a.cov[k] = d.u64()
		a.closed[k] = i128{d.u64(), d.u64()}
	}
	a.hasStart, a.firstStart = d.bool(), d.i64()
	a.pend.has, a.pend.ref = d.bool(), d.i64()
	for k := range a.pend.c {
		a.pend.c[k] = d.i64()
		a.pend.m[k] = i128{d.u64(), d.u64()}
	}
	a.run.start, a.run.end = d.i64(), d.i64()
	n := d.u64()
	if d.err == nil && n > uint64(len(a.run.seg)) {
		d.err = errors.New("climate: checkpoint holds a corrupt access state (calm-run segments)")
		return
	}
	a.run.nseg = int8(n)
	for k := range a.run.seg {
		cm := d.u64()
		if d.err == nil && cm > 11 {
			d.err = errors.New("climate: checkpoint holds a corrupt access state (month)")
			return
		}
		a.run.seg[k] = accSeg{int8(cm), d.i64(), d.i64()}
	}
	a.leadOpen, a.leadLen = d.bool(), d.i64()
}
