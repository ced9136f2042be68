package engine

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
)

// A run of several passes reads the inputs once: its first pass spills the
// later passes' values to scratch files (spill.go), and the tables are the
// same bytes as the one-pass run's and as the same passes reading the
// files in every pass (Options.NoSpill). The fixture is the bulk fixture
// (testdata/bulk_monthly, 6 x 5 cells, 24 months, chunked a month per
// chunk) and its step-chunked copy by python3-netcdf4
// (testdata/stepchunk/rechunk.py). The reference is the one-pass run at
// the default budget, the comparison byte for byte (runcheck.SameOutputs).
func TestSpillSameBytesAsOnePass(t *testing.T) {
	py := testtool.NeedPython(t, "netCDF4")
	src, err := filepath.Glob(filepath.Join(runcheck.BulkFixture(t), "*.nc"))
	if err != nil || len(src) == 0 {
		t.Fatalf("fixture: %v %v", src, err)
	}
	step := t.TempDir()
	args := append(append([]string{filepath.Join("..", "..", "testdata", "stepchunk", "rechunk.py")}, src...), step)
	if out, err := exec.Command(py, args...).CombinedOutput(); err != nil {
		t.Fatalf("rechunk.py: %v\n%s", err, out)
	}
	tiles := t.TempDir()
	args = append(append([]string{filepath.Join("..", "..", "testdata", "stepchunk", "rechunk.py"), "--rows", "1"}, src...), tiles)
	if out, err := exec.Command(py, args...).CombinedOutput(); err != nil {
		t.Fatalf("rechunk.py --rows 1: %v\n%s", err, out)
	}
	t.Run("month-chunked", func(t *testing.T) { spillSameBytes(t, []string{runcheck.BulkFixture(t)}, true) })
	t.Run("step-chunked", func(t *testing.T) { spillSameBytes(t, []string{step}, true) })
	// chunks of one row: every pass decompresses only its own chunks, so
	// no spill (spillHelps)
	t.Run("row-tiled", func(t *testing.T) { spillSameBytes(t, []string{tiles}, false) })
}

func spillSameBytes(t *testing.T, in []string, spills bool) {
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	s := clSpec(in, ref)
	clRun(t, s, Options{})
	want := runcheck.RunOutputs(t, ref)
	for _, c := range []struct {
		name    string
		noSpill bool
	}{{"spill", false}, {"reread", true}} {
		out := filepath.Join(tmp, c.name)
		s := clSpec(in, out)
		s.Run.MemoryLimit = "32MiB"
		j := mustPlan(t, s)
		if len(j.passes) < 2 {
			t.Fatalf("32MiB: %d passes; the test needs several", len(j.passes))
		}
		before := spillPasses.Load()
		clRun(t, s, Options{NoSpill: c.noSpill})
		got := spillPasses.Load() - before
		wantSpilt := int64(len(j.passes) - 1)
		if c.noSpill || !spills {
			wantSpilt = 0
		}
		if got != wantSpilt {
			t.Fatalf("%s: %d passes read from the spill, want %d of %d", c.name, got, wantSpilt, len(j.passes))
		}
		runcheck.SameOutputs(t, fmt.Sprintf("%s (%d passes)", c.name, len(j.passes)), want, runcheck.RunOutputs(t, out))
		// nothing of the spill is left in the state folder
		ents, err := os.ReadDir(filepath.Join(out, ".swellgrid"))
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range ents {
			if strings.HasPrefix(e.Name(), "spill") {
				t.Errorf("%s: %s left in the state folder", c.name, e.Name())
			}
		}
	}
}

// cancelIn cancels the run once the stage named stage has gone on for
// after steps.
type cancelIn struct {
	stage  string
	after  int64
	cancel func()
	on     bool
	n      int64
}

func (c *cancelIn) Start(stage string, total, done int64) { c.on = stage == c.stage }
func (c *cancelIn) Add(n int64) {
	if c.on {
		if c.n += n; c.n >= c.after {
			c.cancel()
		}
	}
}
func (c *cancelIn) Done() { c.on = false }

// A run stopped while its second pass reads the spill resumes from that
// pass's checkpoint reading the files (no spill is kept between processes)
// and gives the one-pass run's bytes.
func TestSpillInterruptedResumes(t *testing.T) {
	in := []string{runcheck.BulkFixture(t)}
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	clRun(t, clSpec(in, ref), Options{})
	out := filepath.Join(tmp, "cut")
	s := clSpec(in, out)
	s.Run.MemoryLimit = "32MiB"
	s.Run.CheckpointEveryS = 0
	j := mustPlan(t, s)
	if len(j.passes) < 2 {
		t.Fatalf("32MiB: %d passes; the test needs several", len(j.passes))
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	before := spillPasses.Load()
	pr := &cancelIn{stage: fmt.Sprintf("read pass 2/%d", len(j.passes)), after: int64(j.cat.Steps / 2), cancel: cancel}
	if _, err := Run(ctx, s, Options{Version: "test", Progress: pr}); err == nil {
		t.Fatal("the run was not stopped in its second pass")
	}
	if n := spillPasses.Load() - before; n != 1 {
		t.Fatalf("%d passes read from the spill before the stop, want 1", n)
	}
	before = spillPasses.Load()
	clRun(t, s, Options{})
	if n := spillPasses.Load() - before; n != 0 {
		t.Errorf("the resumed run read %d passes from a spill, want 0 (it resumes from checkpoints)", n)
	}
	runcheck.SameOutputs(t, "stopped in pass 2 and resumed", runcheck.RunOutputs(t, ref), runcheck.RunOutputs(t, out))
}
