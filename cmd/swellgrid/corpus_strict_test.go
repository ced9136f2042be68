package main

import (
	"bytes"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"swellgrid/internal/corpus"
)

var (
	goodOnce sync.Once
	goodOut  string
)

// goodTables runs the corpus's well-formed input once and returns its output
// directory.
func goodTables(t *testing.T) string {
	t.Helper()
	goodOnce.Do(func() {
		dir := filepath.Join(binDirOr(t), "corpus-good")
		s, err := corpus.Good(dir)
		if err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "out")
		if r := run(t, "run", "--input", s.Input, "--out", out, "--workers", "2"); r.code != 0 {
			t.Fatalf("good corpus input: exit %d: %s", r.code, r.stderr)
		}
		goodOut = out
	})
	if goodOut == "" {
		t.Fatal("no good corpus output")
	}
	return goodOut
}

// The cases that store the good input's values in another form (another
// axis order, NC_STRING attributes, NaN missing values) must give the good
// input's tables byte for byte (DESIGN.md: deterministic output; the values
// and positions are the same).
func init() {
	for name := range corpus.SameAsGood {
		flaggedChecks[name] = func(t *testing.T, out string) {
			ref := goodTables(t)
			for _, n := range []string{"cells.parquet", "monthly.parquet", "scatter.parquet", "exceedance.parquet", "windows.parquet", "extremes.parquet"} {
				a, err := os.ReadFile(filepath.Join(out, n))
				if err != nil {
					t.Fatal(err)
				}
				b, err := os.ReadFile(filepath.Join(ref, n))
				if err != nil {
					t.Fatal(err)
				}
				if !bytes.Equal(a, b) {
					t.Errorf("%s differs from the good input's", n)
				}
			}
		}
	}
}
