package climate

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// accessStep is one row of testdata/access/series.csv.
type accessStep struct {
	start, w int64
	month    int
	hm0, te  [2]float64
}

func readAccessSeries(t *testing.T) []accessStep {
	t.Helper()
	f, err := os.Open("../../testdata/access/series.csv")
	if err != nil {
		t.Fatalf("fixture missing (run /usr/bin/python3 testdata/access/make_reference.py): %v", err)
	}
	defer f.Close()
	var out []accessStep
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.HasPrefix(line, "start") {
			continue
		}
		p := strings.Split(line, ",")
		num := func(i int) float64 {
			v, err := strconv.ParseFloat(p[i], 64)
			if err != nil {
				t.Fatalf("series.csv: %q: %v", line, err)
			}
			return v
		}
		out = append(out, accessStep{start: int64(num(0)), w: int64(num(1)), month: int(num(2)),
			hm0: [2]float64{num(3), num(5)}, te: [2]float64{num(4), num(6)}})
	}
	return out
}

type accessRef struct {
	Cells []map[string]struct {
		MeanWaitH     float64    `json:"mean_wait_h"`
		CensoredShare float64    `json:"censored_share"`
		MonthWaitH    []*float64 `json:"month_wait_h"`
		MonteCarlo    struct {
			MeanH float64 `json:"mean_h"`
			LoH   float64 `json:"lo_h"`
			HiH   float64 `json:"hi_h"`
		} `json:"monte_carlo"`
	} `json:"cells"`
	Rules map[string]struct {
		Hm0M    float64 `json:"hm0_m"`
		TeS     float64 `json:"te_s"`
		RepairH float64 `json:"repair_h"`
	} `json:"rules"`
}

func readAccessRef(t *testing.T) accessRef {
	t.Helper()
	b, err := os.ReadFile("../../testdata/access/reference.json")
	if err != nil {
		t.Fatalf("reference missing (run /usr/bin/python3 testdata/access/make_reference.py): %v", err)
	}
	var r accessRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r
}

func feedAccess(t *testing.T, rule AccessRule, steps []accessStep, cell int) *AccessState {
	t.Helper()
	a, err := NewAccessState(rule)
	if err != nil {
		t.Fatal(err)
	}
	for i := range steps {
		s := &steps[i]
		st := PrepareTime(2001, s.month, float64(s.start)/60, float64(s.w)/60)
		a.Add(&st, s.hm0[cell], s.te[cell])
	}
	return a
}

// TestAccessWaitAgainstNumpy compares the waiting time of both fixture
// cells and rules with the independent one-minute scan of
// testdata/access/make_reference.py (numpy), exact to rounding (the
// integrals are whole and half minutes squared), and with its fixed-seed
// brute-force Monte Carlo of random failure instants (within its 95 %
// interval).
func TestAccessWaitAgainstNumpy(t *testing.T) {
	steps := readAccessSeries(t)
	ref := readAccessRef(t)
	if len(ref.Cells) != 2 || len(ref.Rules) != 2 {
		t.Fatalf("reference has %d cells, %d rules", len(ref.Cells), len(ref.Rules))
	}
	for cell := range ref.Cells {
		for name, rr := range ref.Rules {
			want := ref.Cells[cell][name]
			a := feedAccess(t, AccessRule{Hm0M: rr.Hm0M, TeS: rr.TeS, RepairH: rr.RepairH}, steps, cell)
			got := a.Result()
			close := func(what string, g, w float64) {
				if math.Abs(g-w) > 1e-12*math.Max(1, math.Abs(w)) {
					t.Errorf("cell %d rule %s %s: got %.15g, numpy scan %.15g", cell, name, what, g, w)
				}
			}
			close("mean wait h", got.MeanWaitH, want.MeanWaitH)
			close("censored share", got.CensoredShare, want.CensoredShare)
			for m := 0; m < 12; m++ {
				if want.MonthWaitH[m] == nil {
					if !math.IsNaN(got.MonthWaitH[m]) {
						t.Errorf("cell %d rule %s month %d: got %g, want NaN (no data)", cell, name, m+1, got.MonthWaitH[m])
					}
					continue
				}
				close("wait of month "+strconv.Itoa(m+1), got.MonthWaitH[m], *want.MonthWaitH[m])
			}
			mc := want.MonteCarlo
			if !(got.MeanWaitH >= mc.LoH && got.MeanWaitH <= mc.HiH) {
				t.Errorf("cell %d rule %s: mean wait %.4f h outside the Monte Carlo 95 %% interval [%.4f, %.4f]", cell, name, got.MeanWaitH, mc.LoH, mc.HiH)
			}
		}
	}
}

// TestAccessWaitByHand checks the known calm/storm pattern of cell 0 in
// April (whole 48-h cycles from the month's start, no gap): 30 h calm, 18 h
// storm. Hand computation: with a 24-h repair a start is possible during the
// first 6 h of each calm spell, so each cycle has one stretch of 42 h
// without a start: mean wait = 42^2/2 / 48 = 18.375 h; with a 12-h repair
// the stretch is 30 h: 30^2/2/48 = 9.375 h.
func TestAccessWaitByHand(t *testing.T) {
	steps := readAccessSeries(t)
	for _, c := range []struct {
		rule AccessRule
		want float64
	}{
		{AccessRule{Hm0M: 1.5, RepairH: 24}, 42.0 * 42 / 2 / 48},
		{AccessRule{Hm0M: 2.0, TeS: 8, RepairH: 12}, 30.0 * 30 / 2 / 48},
	} {
		got := feedAccess(t, c.rule, steps, 0).Result().MonthWaitH[3]
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("rule %+v: April mean wait %.12g h, hand computation %.12g h", c.rule, got, c.want)
		}
	}
}

// TestAccessMergeEverySplit splits the fixture record at every step (and
// in three parts at many pairs) and checks that the merged state equals the
// state of the whole record field by field, so that shards, resumes and
// updates join exactly at their edges (calm runs and open stretches that
// cross the edge included).
func TestAccessMergeEverySplit(t *testing.T) {
	steps := readAccessSeries(t)
	for cell := 0; cell < 2; cell++ {
		for _, rule := range []AccessRule{{Hm0M: 1.5, RepairH: 24}, {Hm0M: 2.0, TeS: 8, RepairH: 12}, {Hm0M: 1.2, RepairH: 3}} {
			whole := feedAccess(t, rule, steps, cell)
			wr := whole.Result()
			bad := 0
			for k := 0; k <= len(steps) && bad < 3; k++ {
				a := feedAccess(t, rule, steps[:k], cell)
				b := feedAccess(t, rule, steps[k:], cell)
				if err := a.Merge(b); err != nil {
					t.Fatal(err)
				}
				if !reflect.DeepEqual(a, whole) {
					bad++
					t.Errorf("cell %d rule %+v split at step %d: merged state differs from the whole record:\n%+v\n%+v", cell, rule, k, *a, *whole)
				}
				if r := a.Result(); r.MeanWaitH != wr.MeanWaitH || r.CensoredShare != wr.CensoredShare {
					t.Errorf("cell %d split at %d: result %+v, whole %+v", cell, k, r, wr)
				}
			}
			// three parts: a middle part that is one calm run, or shorter than D
			for k := 5; k+40 <= len(steps) && bad < 3; k += 37 {
				for _, n := range []int{1, 3, 9, 40} {
					a := feedAccess(t, rule, steps[:k], cell)
					b := feedAccess(t, rule, steps[k:k+n], cell)
					c := feedAccess(t, rule, steps[k+n:], cell)
					if err := b.Merge(c); err != nil {
						t.Fatal(err)
					}
					if err := a.Merge(b); err != nil {
						t.Fatal(err)
					}
					if !reflect.DeepEqual(a, whole) {
						bad++
						t.Errorf("cell %d rule %+v split at %d+%d (right first): merged state differs", cell, rule, k, n)
					}
				}
			}
		}
	}
}

// TestAccessRuleValidate: refusals name what to fix.
func TestAccessRuleValidate(t *testing.T) {
	for _, r := range []AccessRule{{Hm0M: 0, RepairH: 1}, {Hm0M: 1, RepairH: 0}, {Hm0M: 1, RepairH: 700}, {Hm0M: 1, RepairH: 1.0001}, {Hm0M: 1, TeS: -1, RepairH: 1}} {
		if err := r.Validate(); err == nil {
			t.Errorf("rule %+v accepted", r)
		}
	}
	if err := (AccessRule{Hm0M: 1.5, TeS: 9, RepairH: 24}).Validate(); err != nil {
		t.Error(err)
	}
}

// TestAccessInCellState feeds the fixture through a CellState with two
// access rules, split in two parts, each checkpointed and restored, then
// merged: the waits equal those of the standalone states (checked against
// numpy above) and the checkpoint bytes equal those of the whole record.
func TestAccessInCellState(t *testing.T) {
	steps := readAccessSeries(t)
	rules := []AccessRule{{Hm0M: 1.5, RepairH: 24}, {Hm0M: 2.0, TeS: 8, RepairH: 12}}
	cfg := DefaultConfig()
	cfg.AccessRules = rules
	if err := cfg.Validate(); err != nil {
		t.Fatal(err)
	}
	for cell := 0; cell < 2; cell++ {
		feed := func(part []accessStep) *CellState {
			s := NewCellState(cfg)
			for i := range part {
				p := &part[i]
				st := PrepareTime(2001, p.month, float64(p.start)/60, float64(p.w)/60)
				s.AddAt(&st, math.NaN(), p.hm0[cell], p.te[cell], math.NaN(), math.NaN())
			}
			return s
		}
		whole := feed(steps)
		wb, _ := whole.MarshalBinary()
		k := len(steps) / 3
		a, b := feed(steps[:k]), feed(steps[k:])
		for _, x := range []*CellState{a, b} {
			bb, _ := x.MarshalBinary()
			y := NewCellState(cfg)
			if err := y.UnmarshalBinary(bb); err != nil {
				t.Fatal(err)
			}
			*x = *y
		}
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		ab, _ := a.MarshalBinary()
		if string(ab) != string(wb) {
			t.Errorf("cell %d: merged checkpoint differs from the whole record's", cell)
		}
		sum := a.Summary()
		for r, rule := range rules {
			want := feedAccess(t, rule, steps, cell).Result().MeanWaitH
			if got := sum.Access[r].MeanWaitH; got != want {
				t.Errorf("cell %d rule %d: summary wait %g, standalone %g", cell, r, got, want)
			}
		}
	}
}
