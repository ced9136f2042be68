package ingest

import (
	"context"
	"strings"
	"testing"
)

// readSteps reads the whole record (every cell) and returns the blocks' Hm0 and
// Tp by step.
func readSteps(t *testing.T, cat *Catalog) (hs, tp [][]float64) {
	t.Helper()
	out := make(chan *Block, 64)
	errc := make(chan error, 1)
	go func() {
		errc <- cat.Read(context.Background(), ReadRange{C0: 0, C1: cat.Grid.NCells(), MaxSteps: 2}, out)
		close(out)
	}()
	for b := range out {
		nc := b.NC()
		for k := 0; k < b.NT; k++ {
			hs = append(hs, append([]float64(nil), b.Bulk[Hm0][k*nc:(k+1)*nc]...))
			tp = append(tp, append([]float64(nil), b.Bulk[Tp][k*nc:(k+1)*nc]...))
		}
	}
	if err := <-errc; err != nil {
		t.Fatal(err)
	}
	return hs, tp
}

// A time held by two files (monthly files repeating the next month's first
// step) is one step of the record, read once; identical values pass,
// different values are refused naming both files and the time unless
// input.duplicate_steps says which file wins. Files written by Debian's ncgen;
// expected values are the CDL's, unpacked by CF's rule (CF 1.8 section 8.1)
// and converted from cm.
func TestSharedBoundaryStep(t *testing.T) {
	dir := t.TempDir()
	// a: times 0, 3, 6; b: 6, 9, 12 (6 shared). hs of b at its first step
	// equals a's last step (the third block of hsData), or differs.
	a := ncgenFile(t, dir, "a", cdl("TIMES", "0, 3, 6"))
	// b's tp begins with a's last step (10 s everywhere)
	tpB := func(c string) string {
		return strings.Replace(c, "tp = 8,8,8,8, 8,8,8,8, 8,8,8,-999,", "tp = 10,10,10,10, 10,10,10,10, 10,10,10,10,", 1)
	}
	same := ncgenFile(t, dir, "b_same", tpB(cdl("TIMES", "6, 9, 12")))
	diffHS := "120,110,120,130, 140,150,160,_, 170,180,190,200,  100,110,120,130, 140,150,160,_, 170,180,190,200,  100,110,120,130, 140,150,160,_, 170,180,190,200"
	other := ncgenFile(t, dir, "b_other", tpB(cdl("TIMES", "6, 9, 12", "HSDATA", diffHS)))

	cat, err := Open([]string{a, same}, Options{})
	if err != nil {
		t.Fatalf("identical shared step refused: %v", err)
	}
	if cat.Steps != 5 || len(cat.Duplicates) == 0 || !cat.Duplicates[0].Identical || cat.Duplicates[0].Time != "2001-01-01 06:00:00" {
		t.Fatalf("steps %d duplicates %+v; want 5 steps and the 06:00 step listed as identical", cat.Steps, cat.Duplicates)
	}
	if len(cat.Gaps) != 0 || len(cat.Segments) != 1 || cat.Segments[0].StepHours != 3 || cat.CoveredHours() != 15 {
		t.Errorf("gaps %+v segments %+v covered %g h; want no gap, one 3-hourly segment, 15 h", cat.Gaps, cat.Segments, cat.CoveredHours())
	}
	hs, _ := readSteps(t, cat)
	if len(hs) != 5 {
		t.Fatalf("read %d steps, want 5", len(hs))
	}

	_, err = Open([]string{a, other}, Options{})
	if err == nil {
		t.Fatal("a shared step with different values was accepted")
	}
	for _, w := range []string{"a.nc", "b_other.nc", "2001-01-01 06:00:00", `"hs"`, "duplicate_steps"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("message %q lacks %q", err, w)
		}
	}

	// "first": the earlier file's value (hsData's first value, 100 cm, is
	// canonical cell 8: latitude is stored descending); "last": the later
	// file's (120 cm).
	for _, c := range []struct {
		pol  DuplicatePolicy
		want float64
	}{{DuplicatesFirst, (100*0.5 + 1) / 100}, {DuplicatesLast, (120*0.5 + 1) / 100}} {
		cat, err := Open([]string{a, other}, Options{Duplicates: c.pol})
		if err != nil {
			t.Fatalf("%s: %v", c.pol, err)
		}
		if cat.Duplicates[0].Identical {
			t.Errorf("%s: the different values are recorded as identical", c.pol)
		}
		hs, tp := readSteps(t, cat)
		if len(hs) != 5 {
			t.Fatalf("%s: read %d steps, want 5", c.pol, len(hs))
		}
		// tp by record step: a gives 8, 9, 10 at 0, 3, 6 h; b 10, 9, 10 at
		// 6, 9, 12 h (each step's own value, whichever file the shared one
		// comes from)
		for k, want := range []float64{8, 9, 10, 9, 10} {
			if tp[k][0] != want {
				t.Errorf("%s: tp at record step %d = %v, want %v", c.pol, k, tp[k][0], want)
			}
		}
		if got := hs[2][8]; got != c.want {
			t.Errorf("%s: hs at the shared step, cell 8 = %v, want %v", c.pol, got, c.want)
		}
		// the steps on either side come from their own file (3 and 9 h: the
		// second block of each file, 110 cm at file index 1 = cell 9)
		if hs[1][9] != (110*0.5+1)/100 || hs[3][9] != (110*0.5+1)/100 {
			t.Errorf("%s: neighbouring steps %v, %v; want %v", c.pol, hs[1][9], hs[3][9], (110*0.5+1)/100)
		}
	}
}
