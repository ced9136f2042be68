package engine

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"testing"
)

// The memory budget decides how the cells are split (passes) and how many
// are fitted and written at a time (fit chunks); the tables must not depend
// on either. The reference is the run at the default budget (one pass, one
// chunk); the fixture is testdata/bulk_monthly (6 x 5 cells, 24 months).
func TestBudgetSplitsSameBytes(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	s := clSpec(in, ref)
	if j := mustPlan(t, s); len(j.passes) != 1 || j.fitChunk < 30 {
		t.Fatalf("default budget: %d passes, fit chunk %d; want 1 pass of the 30 cells", len(j.passes), j.fitChunk)
	}
	clRun(t, s, Options{})
	want := runcheck.RunOutputs(t, ref)
	for _, limit := range []string{"40MiB", "34MiB", "32MiB"} {
		out := filepath.Join(tmp, limit)
		s := clSpec(in, out)
		s.Run.MemoryLimit = limit
		j := mustPlan(t, s)
		if j.fitChunk >= 30 {
			t.Errorf("%s: fit chunk %d cells: the test needs chunks smaller than the grid", limit, j.fitChunk)
		}
		clRun(t, s, Options{})
		runcheck.SameOutputs(t, fmt.Sprintf("%s (%d passes, fit chunks of %d)", limit, len(j.passes), j.fitChunk), want, runcheck.RunOutputs(t, out))
		if limit == "32MiB" && len(j.passes) < 2 {
			t.Errorf("32MiB: %d pass; the test needs several", len(j.passes))
		}
	}
}

// mustPlan validates s as Run does and returns the job (passes and chunks).
func mustPlan(t *testing.T, s *runspec.Spec) *job {
	t.Helper()
	j, err := validateRun(context.Background(), s, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return j
}

// A merge follows its own budget: under a small --memory-limit it reads the
// shards' states a few cells at a time (the shards ran at the default
// budget, one pass each), and the tables equal the single run's.
func TestMergeUnderBudgetSameBytes(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	single := filepath.Join(tmp, "single")
	clRun(t, clSpec(in, single), Options{})
	dirs := runShards(t, in, tmp, 2)
	merged := filepath.Join(tmp, "merged")
	_, parts, err := validateMerge(context.Background(), merged, dirs, Options{MemoryLimit: "32MiB"})
	if err != nil {
		t.Fatal(err)
	}
	j, _, _ := validateMerge(context.Background(), merged, dirs, Options{MemoryLimit: "32MiB"})
	if p := parts[0].p; j.fitChunk >= p[1]-p[0] {
		t.Fatalf("merge at 32MiB reads %d cells at a time, the first shard has %d: the test needs smaller chunks", j.fitChunk, p[1]-p[0])
	}
	if _, err := Merge(context.Background(), merged, dirs, Options{Version: "test", Workers: 2, MemoryLimit: "32MiB"}); err != nil {
		t.Fatal(err)
	}
	runcheck.SameOutputs(t, fmt.Sprintf("merge at 32MiB (chunks of %d cells)", j.fitChunk), runcheck.RunOutputs(t, single), runcheck.RunOutputs(t, merged))
	// And a merge budget too small for one cell is refused before the
	// output directory is made.
	tiny := filepath.Join(tmp, "tiny")
	_, err = Merge(context.Background(), tiny, dirs, Options{Version: "test", MemoryLimit: "16MiB"})
	if err == nil || fault.KindOf(err).ExitCode() != 2 || !strings.Contains(err.Error(), "--memory-limit") {
		t.Errorf("merge at 16MiB: %v; want a refusal naming --memory-limit", err)
	}
	if _, err := os.Stat(tiny); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the refused merge created %s", tiny)
	}
}

// When not even one pass of one cell fits, the run is refused before
// anything is written, naming the limit it needs; at that limit it runs.
func TestBudgetRefusedAtStart(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	out := filepath.Join(tmp, "out")
	s := clSpec(in, out)
	s.Run.MemoryLimit = "16MiB"
	_, err := Run(context.Background(), s, Options{Version: "test"})
	if err == nil || fault.KindOf(err).ExitCode() != 2 {
		t.Fatalf("16MiB: %v; want an input error (exit 2)", err)
	}
	msg := err.Error()
	const key = "needs at least "
	i := strings.Index(msg, key)
	if i < 0 || !strings.Contains(msg, "run.memory_limit 16MiB is too small") || !strings.Contains(msg, "--memory-limit") {
		t.Fatalf("message %q does not name the limit it needs", msg)
	}
	var need int
	if _, err := fmt.Sscanf(msg[i+len(key):], "%d MiB", &need); err != nil || need <= 16 {
		t.Fatalf("message %q: needed limit %d MiB not read (%v)", msg, need, err)
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the refused run created %s", out)
	}
	// The limit named is enough (and 1 MiB less is not).
	s.Run.MemoryLimit = fmt.Sprintf("%dMiB", need)
	clRun(t, s, Options{})
	s.Run.MemoryLimit = fmt.Sprintf("%dMiB", need-1)
	s.Output.Dir = filepath.Join(tmp, "less")
	if _, err := validateRun(context.Background(), s, Options{}); err == nil {
		t.Errorf("%d MiB is accepted too, so the message does not name the least limit", need-1)
	}
}

// The C memory of reading (budget.go, chunkModel), by hand: under 256 MiB
// the cache is 16 MiB a variable (a sixteenth); of four role variables with
// filtered chunks of 4.96 MB (124 x 100 x 100 float32: the 200 x 200
// benchmark grid's), 40 MB (a month of it in one chunk), none (unfiltered)
// and 2 MB, the 40 MB variable's cache is not counted (HDF5 caches no chunk
// larger than its cache), the others' are: 3 x 16 MiB; the decompression
// buffers are decodeCopies (2) x the largest chunk, 80 MB. Under 2 GiB
// (128 MiB a variable) every chunk fits: 4 x 128 MiB + 80 MB.
func TestChunkModelArithmetic(t *testing.T) {
	m := chunkModel{chunks: []int64{124 * 100 * 100 * 4, 248 * 200 * 200 * 4, 0, 2e6}}
	if got, want := m.cacheBytes(256<<20), int64(3*16<<20); got != want {
		t.Errorf("cache under 256 MiB: %d, want %d", got, want)
	}
	if got, want := m.decodeBytes(), int64(2*248*200*200*4); got != want {
		t.Errorf("decompression: %d, want %d", got, want)
	}
	if got, want := m.cMemory(256<<20), int64(3*16<<20+2*248*200*200*4); got != want {
		t.Errorf("C memory under 256 MiB: %d, want %d", got, want)
	}
	if got, want := m.cMemory(2<<30), int64(4*128<<20+2*248*200*200*4); got != want {
		t.Errorf("C memory under 2 GiB: %d, want %d", got, want)
	}
	// The plan leaves Go the limit less the C memory: a live share of
	// 0.7 x (256 MiB - 48 MiB - 79.36 MB) - fixed.
	p, err := planMemory(256<<20, m, 1000, 1000, 1<<20, 1e6, 0)
	if err != nil {
		t.Fatal(err)
	}
	live := goShare*float64(256<<20-3*16<<20-2*248*200*200*4) - (1 << 20)
	if want := int((live - float64(p.fitChunk)*1000) / 1000); p.passCells != want {
		t.Errorf("cells a pass: %d, want %d", p.passCells, want)
	}
}
