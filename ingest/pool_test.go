package ingest

import (
	"context"
	"math"
	"path/filepath"
	"slices"
	"testing"
)

// A reused value array holds nothing of the block it served before: every
// value is NaN (missing) until cooked (common practice: an unwritten value
// is missing, never a stale number).
func TestReusedValuesAreMissing(t *testing.T) {
	DropBlockBuffers()
	defer DropBlockBuffers()
	old := make([]float64, 100)
	for i := range old {
		old[i] = 7.5
	}
	valuePool.put(old)
	s := newValues(60) // served by old, resliced
	if &s[0] != &old[0] {
		t.Fatal("the released array was not reused; the test needs it to be")
	}
	for i, v := range s {
		if !math.IsNaN(v) {
			t.Fatalf("value %d of a reused array is %v, want NaN", i, v)
		}
	}
}

// Blocks whose arrays are released and reused carry the same values as
// blocks read without reuse (testdata/bulk_monthly, 24 files, blocks of 40
// steps so that short last blocks reuse longer arrays).
func TestReleasedBlocksSameValues(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join("..", "testdata", "bulk_monthly", "*.nc"))
	cat, err := Open(files, Options{})
	if err != nil {
		t.Fatal(err)
	}
	read := func(release bool) (vals [][]float64, reused int) {
		out := make(chan *Block, 1)
		errc := make(chan error, 1)
		go func() { errc <- cat.Read(context.Background(), ReadRange{MaxSteps: 40}, out); close(out) }()
		seen := map[*float64]bool{}
		for b := range out {
			for _, r := range Roles {
				if v := b.Bulk[r]; len(v) > 0 {
					if seen[&v[0]] {
						reused++
					}
					seen[&v[0]] = true
					vals = append(vals, slices.Clone(v))
				}
			}
			if release {
				b.Release()
			}
		}
		if err := <-errc; err != nil {
			t.Fatal(err)
		}
		return vals, reused
	}
	plain, r0 := read(false)
	again, r1 := read(true)
	if r0 != 0 || r1 == 0 {
		t.Fatalf("arrays reused %d times without release, %d with; want 0 and more", r0, r1)
	}
	if len(plain) != len(again) {
		t.Fatalf("%d arrays, then %d", len(plain), len(again))
	}
	for k := range plain {
		for i := range plain[k] {
			a, b := plain[k][i], again[k][i]
			if a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
				t.Fatalf("array %d value %d: %v without reuse, %v with", k, i, a, b)
			}
		}
	}
}
