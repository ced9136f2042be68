package engine

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/ingest"
	"swellgrid/internal/corpus"
	"swellgrid/pipelines/fault"
)

// noDataInput builds the corpus case whose February file holds only fill
// values for Hm0 (internal/corpus, hm0_all_fill).
func noDataInput(t *testing.T) string {
	t.Helper()
	for _, c := range corpus.Cases() {
		if c.Name == "hm0_all_fill" {
			s, err := c.Build(filepath.Join(t.TempDir(), c.Name))
			if err != nil {
				t.Fatal(err)
			}
			return s.Input
		}
	}
	t.Fatal("corpus case hm0_all_fill not found")
	return ""
}

func wantNoData(t *testing.T, what string, err error) {
	t.Helper()
	var nd *ingest.NoDataError
	if !errors.As(err, &nd) || fault.KindOf(err) != fault.BadInput {
		t.Fatalf("%s: got %v (kind %v), want a bad-input refusal of a variable without data", what, err, fault.KindOf(err))
	}
	for _, w := range []string{"cx_2001-02.nc", `"hm0"`, "every value is a fill value"} {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("%s: %q lacks %q", what, err, w)
		}
	}
}

// The catalog reads metadata only; a role variable without any value is
// refused while streaming, once its counts cover every cell: in one pass,
// in the last of several passes (cell ranges), and in the merge of shards
// that each saw only part of the grid. No table is written.
func TestNoDataRefusedInPassesAndMerge(t *testing.T) {
	in := noDataInput(t)
	root := t.TempDir()

	// One pass, into a directory the run creates: refused, nothing left.
	out := filepath.Join(root, "one")
	_, err := Run(context.Background(), clSpec([]string{in}, out), Options{Version: "test"})
	wantNoData(t, "one pass", err)
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("one pass: the refused run left its output directory %s (%v)", out, err)
	}

	// Two passes (cells 0..4, 5..11): the first cannot tell, the second refuses.
	s := clSpec([]string{in}, filepath.Join(root, "two"))
	j, err := validateRun(context.Background(), s, Options{Version: "test"})
	if err != nil {
		t.Fatal(err)
	}
	j.passes = [][2]int{{0, 5}, {5, j.hi}}
	unlock, err := j.lock()
	if err != nil {
		t.Fatal(err)
	}
	err = j.runPasses(context.Background(), j.restoreOwn(0), nil)
	j.abortSink()
	unlock()
	wantNoData(t, "two passes", err)
	if len(j.seen[0]) == 0 || len(j.seen[1]) == 0 {
		t.Errorf("tallies of the passes: %v", j.seen)
	}
	if m, _ := filepath.Glob(filepath.Join(s.Output.Dir, "*.parquet")); len(m) > 0 {
		t.Errorf("tables written: %v", m)
	}

	// Two shards: each sees half of the cells and finishes; the merge refuses.
	var dirs []string
	for i := 1; i <= 2; i++ {
		d := filepath.Join(root, "shard", string(rune('0'+i)))
		if _, err := Run(context.Background(), clSpec([]string{in}, d), Options{Version: "test", Shard: &Shard{Index: i, Count: 2}}); err != nil {
			t.Fatalf("shard %d: %v", i, err)
		}
		dirs = append(dirs, d)
	}
	merged := filepath.Join(root, "merged")
	_, err = Merge(context.Background(), merged, dirs, Options{Version: "test"})
	wantNoData(t, "merge", err)
	if m, _ := filepath.Glob(filepath.Join(merged, "*.parquet")); len(m) > 0 {
		t.Errorf("merge wrote tables: %v", m)
	}
}
