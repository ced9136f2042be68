package cluster

import (
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/runspec"

	"bufio"
	"bytes"
	"context"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func TestSlurmScripts(t *testing.T) {
	tmp := t.TempDir()
	spec := filepath.Join(tmp, "spec.toml")
	os.WriteFile(spec, []byte("[input]\npaths = [\""+runcheck.BulkFixture(t)+"\"]\n"), 0o644)
	s, err := WriteSlurmScripts(SlurmJobs{SpecFile: spec, Shards: 3, Out: filepath.Join(tmp, "atlas"),
		Partition: "p1", Time: "01:00:00", Mem: "4GiB", CPUs: 2, Binary: "/opt/sg/swellgrid"})
	if err != nil {
		t.Fatal(err)
	}
	a, _ := os.ReadFile(s.ArrayScript)
	m, _ := os.ReadFile(s.MergeScript)
	// sbatch options as the Slurm sbatch manual names them (common practice).
	for _, want := range []string{"#SBATCH --array=1-3", "#SBATCH --partition=p1", "#SBATCH --time=01:00:00", "#SBATCH --mem=4G",
		"#SBATCH --cpus-per-task=2", `--shard "${SLURM_ARRAY_TASK_ID}/3"`, "--memory-limit 3968M", "/opt/sg/swellgrid run --spec " + spec} {
		if !bytes.Contains(a, []byte(want)) {
			t.Errorf("array script lacks %q:\n%s", want, a)
		}
	}
	for _, want := range []string{"#SBATCH --kill-on-invalid-dep=yes", "/opt/sg/swellgrid merge --out " + filepath.Join(tmp, "atlas"), s.ShardDirs[2]} {
		if !bytes.Contains(m, []byte(want)) {
			t.Errorf("merge script lacks %q:\n%s", want, m)
		}
	}
	for _, f := range []string{s.ArrayScript, s.MergeScript} {
		if out, err := exec.Command("bash", "-n", f).CombinedOutput(); err != nil {
			t.Errorf("bash -n %s: %v %s", f, err, out)
		}
	}
	if _, err := WriteSlurmScripts(SlurmJobs{SpecFile: spec, Shards: 6, Out: filepath.Join(tmp, "x")}); err == nil || !strings.Contains(err.Error(), "only 5 rows") {
		t.Errorf("6 shards of a 5-row grid: got %v, want a refusal", err)
	}
}

// TestSlurmSingleNode runs the sharded job on a real single-node Slurm that
// pipelines/cluster/testdata/slurm_single_node.sh starts (Debian packages slurm-wlm and
// munge, installed by `make test-deps`) and stops, and compares the merged
// tables with a single-process run, byte for byte.
func TestSlurmSingleNode(t *testing.T) {
	if testing.Short() {
		t.Skip("-short: the Slurm test starts daemons")
	}
	for _, p := range [][2]string{{"munged", "munge"}, {"slurmctld", "slurm-wlm"}, {"slurmd", "slurm-wlm"}, {"sbatch", "slurm-wlm"}} {
		testtool.Need(t, p[0], p[1])
	}
	if os.Geteuid() != 0 {
		testtool.Unavailable(t, "the single-node Slurm test runs its daemons as root")
	}
	tmp := t.TempDir()
	bin := filepath.Join(tmp, "swellgrid")
	goBin := testtool.Need(t, "go", "golang-go")
	if out, err := exec.Command(goBin, "build", "-o", bin, "swellgrid/cmd/swellgrid").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	in := runcheck.BulkFixture(t)
	single := filepath.Join(tmp, "single")
	clRun(t, clSpec([]string{in}, single), engine.Options{})

	ctx, cancel := context.WithTimeout(context.Background(), 150*time.Second)
	defer cancel()
	script, _ := filepath.Abs("testdata/slurm_single_node.sh")
	cmd := exec.CommandContext(ctx, "bash", script, bin, in, filepath.Join(tmp, "work"), "4")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	cmd.WaitDelay = 10 * time.Second
	out, err := cmd.Output()
	var ee *exec.ExitError
	if errors.As(err, &ee) && ee.ExitCode() == 77 {
		testtool.Unavailable(t, "Slurm (slurm-wlm, munge) cannot be started here:\n%s", stderr.String())
	}
	if err != nil {
		t.Fatalf("%s: %v\nstdout:\n%s\nstderr:\n%s", script, err, out, stderr.String())
	}
	kv := map[string]string{}
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		if k, v, ok := strings.Cut(sc.Text(), "="); ok {
			kv[k] = v
		}
	}
	t.Logf("Slurm array job %s (%s), merge job %s (%s), %s s from submission to the end of the merge",
		kv["ARRAY_JOB"], kv["ARRAY_STATES"], kv["MERGE_JOB"], kv["MERGE_STATE"], kv["ELAPSED_S"])
	if kv["ARRAY_STATES"] != "COMPLETED:4" || kv["MERGE_STATE"] != "COMPLETED:1" {
		t.Fatalf("jobs did not all complete: %v\n%s", kv, stderr.String())
	}
	runcheck.SameOutputs(t, "Slurm 4-shard array + merge against the single-process run", runcheck.RunOutputs(t, single), runcheck.RunOutputs(t, kv["OUT"]))
	if !t.Failed() {
		t.Logf("the merged tables and contour layers are byte-identical to the single-process run (%d files)", len(runcheck.RunOutputs(t, single)))
	}
	// No daemon of the test may outlive it.
	ps, _ := exec.Command("ps", "-eo", "args").Output()
	for _, l := range strings.Split(string(ps), "\n") {
		ours := strings.Contains(l, filepath.Join(tmp, "work")) && (strings.Contains(l, "slurmctld") || strings.Contains(l, "slurmd"))
		if ours || strings.Contains(l, "munged") && strings.Contains(l, "/tmp/swellgrid-munge.") {
			t.Errorf("daemon still running after the script: %s", l)
		}
	}
}

// clSpec is the default spec over input, writing to out, with two workers.
func clSpec(input []string, out string) *runspec.Spec {
	s := runspec.DefaultSpec()
	s.Input.Paths, s.Output.Dir, s.Run.Workers = input, out, 2
	return s
}

// clRun runs s with the run engine, failing t on an error.
func clRun(t *testing.T, s *runspec.Spec, opt engine.Options) {
	t.Helper()
	opt.Version = "test"
	if _, err := engine.Run(context.Background(), s, opt); err != nil {
		t.Fatalf("run %v into %s: %v", s.Input.Paths, s.Output.Dir, err)
	}
}
