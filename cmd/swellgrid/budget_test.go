package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A memory limit too small for one pass is refused at the start: exit code
// 2, the message names the limit needed, no output directory is made.
func TestMemoryLimitRefusedAtStart(t *testing.T) {
	in, _ := filepath.Abs("../../testdata/bulk_monthly")
	out := filepath.Join(t.TempDir(), "out")
	code, stderr := codeOf("run", "--input", in, "--out", out, "--memory-limit", "16MiB", "--workers", "1")
	if code != 2 {
		t.Fatalf("exit code %d, want 2: %s", code, stderr)
	}
	for _, want := range []string{"run.memory_limit 16MiB is too small", "needs at least", "MiB", "--memory-limit"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q: %s", want, stderr)
		}
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("the refused run created %s", out)
	}
}

// cluster slurm refuses (exit 2, saying what would fit) a memory request
// that cannot hold one row, and a shard count and request that cannot fit
// one pass; it writes nothing then.
func TestClusterSlurmPlanRefusals(t *testing.T) {
	in, _ := filepath.Abs("../../testdata/bulk_monthly")
	dir := t.TempDir()
	spec := filepath.Join(dir, "spec.toml")
	out := filepath.Join(dir, "atlas")
	os.WriteFile(spec, []byte("[input]\npaths = [\""+in+"\"]\n[output]\ndir = \""+out+"\"\n"), 0o644)
	for _, c := range []struct {
		args []string
		want []string
	}{
		{[]string{"--mem", "140M"}, []string{"--mem 140M cannot hold one row", "give --mem"}},
		{[]string{"--mem", "160M", "--shards", "1"}, []string{"cannot fit", "needs more than one pass", "--shards 2 or more"}},
		{nil, []string{"give --mem", "--shards"}},
	} {
		code, stderr := codeOf(append([]string{"cluster", "slurm", "--spec", spec}, c.args...)...)
		if code != 2 {
			t.Errorf("%v: exit code %d, want 2: %s", c.args, code, stderr)
		}
		for _, w := range c.want {
			if !strings.Contains(stderr, w) {
				t.Errorf("%v: stderr lacks %q: %s", c.args, w, stderr)
			}
		}
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("a refused plan created %s", out)
	}
	// --plan prints the plan and writes nothing.
	code, stderr := codeOf("cluster", "slurm", "--spec", spec, "--mem", "160M", "--plan")
	if code != 0 {
		t.Fatalf("--plan: exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("--plan created %s", out)
	}
}
