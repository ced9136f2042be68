package engine

// Tests of sharded runs, merge and incremental update. The reference for
// every comparison here is the single-process run over the whole record: the
// design requires byte-identical tables whatever the shard count or update
// history (common practice for mergeable accumulators: A+B equals the state
// of the concatenated record). The numbers inside the tables are checked
// against outside references by the stats packages' tests and e2e_test.go.

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"swellgrid/ingest"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/synth"
)

// clSpec is the default spec over input, writing to out.
func clSpec(input []string, out string) *runspec.Spec {
	s := runspec.DefaultSpec()
	s.Input.Paths = input
	s.Output.Dir = out
	s.Run.Workers = 2
	return s
}

func clRun(t *testing.T, s *runspec.Spec, opt Options) *Result {
	t.Helper()
	opt.Version = "test"
	r, err := Run(context.Background(), s, opt)
	if err != nil {
		t.Fatalf("run %v into %s: %v", s.Input.Paths, s.Output.Dir, err)
	}
	return r
}

// runShards runs shards 1..n of spec into root/1..n and returns the dirs.
func runShards(t *testing.T, input []string, root string, n int) []string {
	t.Helper()
	var dirs []string
	for i := 1; i <= n; i++ {
		d := filepath.Join(root, "shard", string(rune('0'+i)))
		clRun(t, clSpec(input, d), Options{Shard: &Shard{Index: i, Count: n}})
		dirs = append(dirs, d)
	}
	return dirs
}

func TestShardsMergeSameBytesAsSingleRun(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	single := filepath.Join(tmp, "single")
	clRun(t, clSpec(in, single), Options{})
	want := runcheck.RunOutputs(t, single)

	for _, n := range []int{1, 3, 4, 5} { // 5 rows (5 blocks): shards of uneven size, and one row each
		root := filepath.Join(tmp, "n"+string(rune('0'+n)))
		dirs := runShards(t, in, root, n)
		// Give the shards out of order: merge sorts them by index.
		rev := append([]string(nil), dirs...)
		sort.Sort(sort.Reverse(sort.StringSlice(rev)))
		merged := filepath.Join(root, "merged")
		res, err := Merge(context.Background(), merged, rev, Options{Version: "test", Workers: 2})
		if err != nil {
			t.Fatalf("merge of %d shards: %v", n, err)
		}
		if res.Cells != 30 {
			t.Errorf("merge of %d shards: %d cells, want 30 (6x5 fixture grid)", n, res.Cells)
		}
		runcheck.SameOutputs(t, "merge of "+string(rune('0'+n))+" shards", want, runcheck.RunOutputs(t, merged))
		ck, _, _ := passCheckpoints(merged)
		if len(ck) != n {
			t.Errorf("merged run keeps %d state files, want one per shard pass (%d)", len(ck), n)
		}
	}
}

func TestShardCellsWholeRows(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	cat, err := ingestOpenCluster(in)
	if err != nil {
		t.Fatal(err)
	}
	g := cat.Grid // 6 x 5: NX = 6, NY = 5
	at := 0
	for i := 1; i <= 3; i++ {
		c0, c1, err := Shard{i, 3}.Cells(g)
		if err != nil {
			t.Fatal(err)
		}
		if c0 != at || c0%g.NX != 0 || c1%g.NX != 0 || c1 <= c0 {
			t.Errorf("shard %d/3: cells %d..%d, want whole rows starting at %d", i, c0, c1, at)
		}
		at = c1
	}
	if at != g.NCells() {
		t.Errorf("3 shards end at cell %d, want %d", at, g.NCells())
	}
	if _, _, err := (Shard{1, 6}).Cells(g); err == nil || !strings.Contains(err.Error(), "only 5 rows") {
		t.Errorf("6 shards of 5 rows: got %v, want a refusal naming the 5 rows", err)
	}
	for _, bad := range []string{"0/4", "5/4", "4", "a/b", "1/0"} {
		if _, err := ParseShard(bad); err == nil {
			t.Errorf("ParseShard(%q) accepted", bad)
		}
	}
	if s, err := ParseShard(" 3/8 "); err != nil || s != (Shard{3, 8}) {
		t.Errorf("ParseShard(3/8) = %v, %v", s, err)
	}
}

func TestMergeRefusals(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	dirs := runShards(t, in, tmp, 3)
	expect := func(what string, dirs []string, frag string) {
		t.Helper()
		_, err := Merge(context.Background(), filepath.Join(tmp, "m-"+what), dirs, Options{})
		if err == nil || !strings.Contains(err.Error(), frag) {
			t.Errorf("%s: got %v, want an error containing %q", what, err, frag)
		}
	}
	// The merge assembles the shards' tables: it fits no cell (fitCalls
	// counts the fit stage's chunks in this process).
	before := fitCalls.Load()
	if _, err := Merge(context.Background(), filepath.Join(tmp, "m-ok"), dirs, Options{}); err != nil {
		t.Fatalf("merge of 3 shards: %v", err)
	}
	if n := fitCalls.Load() - before; n != 0 {
		t.Errorf("the merge fitted %d chunks of cells; the shards fit, the merge only assembles", n)
	}
	// A shard table damaged after the shard wrote it: exit 2 naming it,
	// before anything is written.
	for _, name := range []string{"cells.parquet", "monthly.parquet"} {
		path := filepath.Join(dirs[1], name)
		orig, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		bad := append([]byte(nil), orig...)
		bad[len(bad)/2] ^= 0x20
		if err := os.WriteFile(path, bad, 0o644); err != nil {
			t.Fatal(err)
		}
		mdir := filepath.Join(tmp, "m-damaged-"+name)
		_, err = Merge(context.Background(), mdir, dirs, Options{})
		if code := fault.ExitCode(err); code != 2 || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "damaged") {
			t.Errorf("merge with %s damaged: exit %d, %v; want exit 2 naming %s as damaged", name, code, err, path)
		}
		if _, serr := os.Stat(mdir); serr == nil {
			t.Errorf("merge with %s damaged created %s", name, mdir)
		}
		if err := os.WriteFile(path, orig, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	expect("missing", []string{dirs[0], dirs[2]}, "shard 2/3 missing")
	expect("duplicate", []string{dirs[0], dirs[1], dirs[1], dirs[2]}, "both shard 2/3")
	expect("not a shard", []string{dirs[0], tmp}, "no shard.json")
	// A shard run with another spec.
	s := clSpec(in, filepath.Join(tmp, "other"))
	s.Statistics.Hm0BinM = 0.1
	clRun(t, s, Options{Shard: &Shard{2, 3}})
	expect("other spec", []string{dirs[0], filepath.Join(tmp, "other"), dirs[2]}, "different specs")
	// An unfinished shard: its state file reads fewer files than the inputs.
	hs, cells := readAllStates(t, dirs[1])
	hs.NextFile = 3
	if err := saveCheckpoint(ckPath(dirs[1], hs.C0, hs.C1), *hs, cells); err != nil {
		t.Fatal(err)
	}
	expect("unfinished", dirs, "has read 3 of 24 files")
}

// readAllStates loads the single state file of a shard directory.
func readAllStates(t *testing.T, dir string) (*ckHeader, []*cell) {
	t.Helper()
	paths, hs, err := passCheckpoints(dir)
	if err != nil || len(paths) != 1 {
		t.Fatalf("%s: %v %v", dir, paths, err)
	}
	cat, err := ingestOpenCluster([]string{runcheck.BulkFixture(t)})
	if err != nil {
		t.Fatal(err)
	}
	s := mustResolve(t, clSpec([]string{runcheck.BulkFixture(t)}, dir))
	ccfg, _ := s.ClimateConfig(cat)
	eng, _ := newEngine(cat, s, ccfg)
	cells, _, err := loadCheckpointTrusting(paths[0], *hs[0], len(hs[0].Inputs), eng.newCell)
	if err != nil {
		t.Fatal(err)
	}
	return hs[0], cells
}

func ingestOpenCluster(in []string) (*ingest.Catalog, error) {
	return ingest.Open(in, clSpec(in, "x").IngestOptions())
}

// threeYears writes a synthetic 3-year, one-file-per-month record (the
// bulk_monthly fixture's scenario, extended) into dir.
func threeYears(t *testing.T, dir string) []string {
	t.Helper()
	sc := synth.Fixtures()["bulk_monthly"]
	sc.Months = 36
	sc.Title = "swellgrid test: synthetic regular bulk grid, 3 years 3-hourly, one file per month"
	files, err := sc.Write(dir)
	if err != nil {
		t.Fatal(err)
	}
	sort.Strings(files)
	if len(files) != 36 {
		t.Fatalf("synth wrote %d files, want 36", len(files))
	}
	return files
}

func copyInto(t *testing.T, dir string, files []string) {
	t.Helper()
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(f)), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestUpdateSameAsFullRun(t *testing.T) {
	tmp := t.TempDir()
	gen := filepath.Join(tmp, "gen")
	files := threeYears(t, gen)
	full := filepath.Join(tmp, "full")
	fullRes := clRun(t, clSpec([]string{gen}, full), Options{})
	want := runcheck.RunOutputs(t, full)

	// Two years, then the third added by an update.
	grow := filepath.Join(tmp, "grow")
	os.MkdirAll(grow, 0o755)
	copyInto(t, grow, files[:24])
	run := filepath.Join(tmp, "run")
	clRun(t, clSpec([]string{grow}, run), Options{})
	if bytes.Equal(runcheck.RunOutputs(t, run)["cells.parquet"], want["cells.parquet"]) {
		t.Fatal("a 2-year run gave the 3-year tables: the comparison would prove nothing")
	}
	copyInto(t, grow, files[24:])
	res := clRun(t, clSpec([]string{grow}, run), Options{Update: true})
	if res.Steps != fullRes.Steps {
		t.Errorf("update covers %d steps, the full run %d", res.Steps, fullRes.Steps)
	}
	runcheck.SameOutputs(t, "2 years + update with the 3rd", want, runcheck.RunOutputs(t, run))

	// The same through shards: each shard is updated, then merged again.
	grow2 := filepath.Join(tmp, "grow2")
	os.MkdirAll(grow2, 0o755)
	copyInto(t, grow2, files[:24])
	dirs := runShards(t, []string{grow2}, tmp, 2)
	copyInto(t, grow2, files[24:])
	for _, d := range dirs {
		clRun(t, clSpec([]string{grow2}, d), Options{Update: true})
	}
	merged := filepath.Join(tmp, "merged")
	if _, err := Merge(context.Background(), merged, dirs, Options{}); err != nil {
		t.Fatal(err)
	}
	runcheck.SameOutputs(t, "2 shards of 2 years, each updated, merged", want, runcheck.RunOutputs(t, merged))

	// A merged run updated with nothing new rewrites the same tables.
	clRun(t, clSpec([]string{grow2}, merged), Options{Update: true})
	runcheck.SameOutputs(t, "update with no new files", want, runcheck.RunOutputs(t, merged))
}

func TestUpdateRefusals(t *testing.T) {
	tmp := t.TempDir()
	gen := filepath.Join(tmp, "gen")
	files := threeYears(t, gen)
	dir := filepath.Join(tmp, "in")
	os.MkdirAll(dir, 0o755)
	copyInto(t, dir, files[:12])
	run := filepath.Join(tmp, "run")
	clRun(t, clSpec([]string{dir}, run), Options{})
	copyInto(t, dir, files[12:15])
	expect := func(what string, s *runspec.Spec, frag ...string) {
		t.Helper()
		_, err := Run(context.Background(), s, Options{Update: true})
		if err == nil {
			t.Fatalf("%s: the update was accepted", what)
		}
		if !IsUpdateRefused(err) || fault.KindOf(err) != fault.BadInput {
			t.Errorf("%s: got %T %v, want a refused update marked as bad input (exit code 2)", what, err, err)
		}
		for _, f := range frag {
			if !strings.Contains(err.Error(), f) {
				t.Errorf("%s: %q does not say %q", what, err, f)
			}
		}
	}
	s := clSpec([]string{dir}, run)
	s.Statistics.Hm0BinM = 0.1
	expect("spec", s, "the spec changed", "statistics")

	// An earlier file rewritten with other values (another seed).
	sc := synth.Fixtures()["bulk_monthly"]
	sc.Months, sc.Seed = 1, 99
	sc.Start.Month = 3 // the third file of the record
	other := filepath.Join(tmp, "other")
	w, err := sc.Write(other)
	if err != nil || len(w) != 1 {
		t.Fatal(w, err)
	}
	orig, _ := os.ReadFile(files[2])
	copyInto(t, dir, w)
	expect("changed file", clSpec([]string{dir}, run), filepath.Base(files[2]), "changed")
	os.WriteFile(filepath.Join(dir, filepath.Base(files[2])), orig, 0o644)

	// An earlier file left out.
	os.Remove(filepath.Join(dir, filepath.Base(files[0])))
	expect("missing file", clSpec([]string{dir}, run), filepath.Base(files[0]), "not among the inputs")
	copyInto(t, dir, files[:1])

	// No finished run in the directory.
	expect("no run", clSpec([]string{dir}, filepath.Join(tmp, "empty")), "no finished run")

	// With everything restored the update goes through.
	clRun(t, clSpec([]string{dir}, run), Options{Update: true})
}

// mustResolve resolves s (runspec.Spec.Resolve), with an output directory
// if it has none, failing tb on an error.
func mustResolve(tb testing.TB, s *runspec.Spec) *runspec.Resolved {
	tb.Helper()
	if s.Output.Dir == "" {
		s.Output.Dir = tb.TempDir()
	}
	r, err := s.Resolve()
	if err != nil {
		tb.Fatal(err)
	}
	return r
}
