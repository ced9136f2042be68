// Package cluster plans and submits a sharded run on a Slurm cluster: one
// array job whose tasks each run one shard, and a merge job that starts
// when every task has succeeded. The memory plan comes from the run
// engine (engine.PlanShards); cluster knows the scheduler, not the
// statistics.
package cluster

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/ingest"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
)

// SlurmJobs describes a sharded run on a Slurm cluster: an array job with one
// task per shard (the shard index is the array task id, 1..Shards) and a merge
// job that starts only when every task has succeeded (afterok on the array).
type SlurmJobs struct {
	SpecFile  string // run spec (TOML); must be readable on the compute nodes
	Shards    int    // number of shards (array tasks); 0: as many as --mem needs
	Out       string // run directory of the merged outputs ("" = the spec's output.dir)
	Partition string // sbatch --partition ("" = the cluster's default)
	Time      string // sbatch --time per task, e.g. 02:00:00 ("" = the partition's default)
	Mem       string // sbatch --mem per task, e.g. 8G ("": as much as a shard needs); the run's budget is this less ProcessOverhead
	CPUs      int    // sbatch --cpus-per-task (0 = 1); the run's workers
	Binary    string // swellgrid executable on the compute nodes ("" = this executable)
	ScriptDir string // where the job scripts and job logs go ("" = <Out>/.swellgrid/slurm)
}

// SlurmScripts says what WriteSlurmScripts wrote.
type SlurmScripts struct {
	ArrayScript, MergeScript string   // paths of the two job scripts
	ShardDirs                []string // the shard directories the tasks write
	Out                      string   // the merged run directory
	Plan                     *engine.SlurmPlan
}

// PlanSlurm sizes a sharded run (see SlurmPlan) from the spec's catalog:
// the number of shards for j.Mem, the memory per task for j.Shards, or, with
// both, checks that they fit. It writes nothing.
func PlanSlurm(j SlurmJobs) (*engine.SlurmPlan, *runspec.Spec, error) {
	if j.SpecFile == "" {
		return nil, nil, fault.Input(fmt.Errorf("cluster slurm: give --spec FILE: the array tasks and the merge job all read the same spec"))
	}
	spec, err := runspec.LoadSpec(absPath(j.SpecFile))
	if err != nil {
		return nil, nil, fault.Input(err)
	}
	if j.Out != "" {
		spec.Output.Dir = j.Out
	}
	rs, err := spec.Resolve()
	if err != nil {
		return nil, nil, fault.Input(err)
	}
	if j.Shards < 0 {
		return nil, nil, fault.Input(fmt.Errorf("cluster slurm: --shards %d: give at least 1 shard", j.Shards))
	}
	var mem int64
	if j.Mem != "" {
		// Slurm reads a bare number as megabytes; runspec.ParseSize as bytes.
		m := strings.TrimSpace(j.Mem)
		if _, err := strconv.ParseFloat(m, 64); err == nil {
			m += "M"
		}
		if mem, err = runspec.ParseSize(m); err != nil {
			return nil, nil, fault.Input(fmt.Errorf("cluster slurm: --mem %q: %w", j.Mem, err))
		}
	}
	cat, err := ingest.Open(spec.Input.Paths, spec.IngestOptions())
	if err != nil {
		return nil, nil, fault.Input(err)
	}
	p, err := engine.PlanShards(rs, cat, mem, j.Shards)
	if err != nil {
		return nil, nil, err
	}
	if _, _, err := (engine.Shard{Index: 1, Count: p.Shards}).Cells(cat.Grid); err != nil {
		return nil, nil, fault.Input(fmt.Errorf("cluster slurm: %d shards: %w", p.Shards, err))
	}
	return p, spec, nil
}

// WriteSlurmScripts plans the shards (PlanSlurm) and writes the two job
// scripts. Every path in them is absolute.
func WriteSlurmScripts(j SlurmJobs) (*SlurmScripts, error) {
	plan, spec, err := PlanSlurm(j)
	if err != nil {
		return nil, err
	}
	specFile := absPath(j.SpecFile)
	j.Shards = plan.Shards
	mem, budget := engine.SizeText(plan.MemBytes), engine.SizeText(plan.BudgetBytes)
	cpus := j.CPUs
	if cpus < 1 {
		cpus = 1
	}
	bin := j.Binary
	if bin == "" {
		if bin, err = os.Executable(); err != nil {
			return nil, fmt.Errorf("cluster slurm: cannot find this executable (%w); give --binary", err)
		}
	}
	bin = absPath(bin)
	out := absPath(spec.Output.Dir)
	if err := os.MkdirAll(out, 0o755); err != nil {
		return nil, fault.Output(fmt.Errorf("cluster slurm: output directory %s: %w", out, err))
	}
	// The folders inside the run directory go through its one door
	// (export.MakeDir: a planted link is refused); a --script-dir of the
	// user's choice is made as given.
	sdir := j.ScriptDir
	if sdir == "" {
		d, err := export.MakeDir(out, lock.StateDir+"/slurm")
		if err != nil {
			return nil, fault.Input(fmt.Errorf("cluster slurm: script directory: %w", err))
		}
		sdir = d
	}
	sdir = absPath(sdir)
	shardRoot, err := export.MakeDir(out, lock.StateDir+"/shards")
	if err != nil {
		return nil, fault.Input(fmt.Errorf("cluster slurm: shard directory: %w", err))
	}
	if err := os.MkdirAll(sdir, 0o755); err != nil {
		return nil, fault.Output(fmt.Errorf("cluster slurm: script directory %s: %w", sdir, err))
	}
	cwd, _ := os.Getwd()
	res := &SlurmScripts{ArrayScript: filepath.Join(sdir, "shards.sbatch"), MergeScript: filepath.Join(sdir, "merge.sbatch"), Out: out, Plan: plan}
	for i := 1; i <= j.Shards; i++ {
		res.ShardDirs = append(res.ShardDirs, filepath.Join(shardRoot, strconv.Itoa(i)))
	}
	header := func(name, log, mem string, extra ...string) string {
		var b strings.Builder
		b.WriteString("#!/bin/bash\n")
		fmt.Fprintf(&b, "#SBATCH --job-name=%s\n", name)
		fmt.Fprintf(&b, "#SBATCH --output=%s\n", filepath.Join(sdir, log))
		fmt.Fprintf(&b, "#SBATCH --chdir=%s\n", cwd)
		fmt.Fprintf(&b, "#SBATCH --ntasks=1\n#SBATCH --cpus-per-task=%d\n", cpus)
		if j.Partition != "" {
			fmt.Fprintf(&b, "#SBATCH --partition=%s\n", j.Partition)
		}
		if j.Time != "" {
			fmt.Fprintf(&b, "#SBATCH --time=%s\n", j.Time)
		}
		fmt.Fprintf(&b, "#SBATCH --mem=%s\n", mem)
		for _, e := range extra {
			fmt.Fprintf(&b, "#SBATCH %s\n", e)
		}
		b.WriteString("# Written by `swellgrid cluster slurm`. Results are screening estimates; see the README's caution.\n")
		b.WriteString("set -euo pipefail\n")
		return b.String()
	}
	// The run's budget is the request less what the process takes beyond
	// it, so that the scheduler does not kill a task sized by the plan.
	memFlag := " --memory-limit " + shQuote(budget)
	array := header("swellgrid-shards", "shard-%a.log", mem, fmt.Sprintf("--array=1-%d", j.Shards)) +
		fmt.Sprintf("exec %s run --spec %s --shard \"${SLURM_ARRAY_TASK_ID}/%d\" --out %s/\"${SLURM_ARRAY_TASK_ID}\" --workers \"${SLURM_CPUS_PER_TASK:-%d}\"%s\n",
			shQuote(bin), shQuote(specFile), j.Shards, shQuote(shardRoot), cpus, memFlag)
	dirs := make([]string, len(res.ShardDirs))
	for i, d := range res.ShardDirs {
		dirs[i] = shQuote(d)
	}
	// The merge builds the end products of the whole grid, which may need
	// more than a shard (SlurmPlan.MergeBudgetBytes).
	mergeFlag := " --memory-limit " + shQuote(engine.SizeText(plan.MergeBudgetBytes))
	merge := header("swellgrid-merge", "merge.log", engine.SizeText(plan.MergeMemBytes), "--kill-on-invalid-dep=yes") +
		fmt.Sprintf("exec %s merge --out %s --workers \"${SLURM_CPUS_PER_TASK:-%d}\"%s %s\n", shQuote(bin), shQuote(out), cpus, mergeFlag, strings.Join(dirs, " "))
	for _, f := range [][2]string{{res.ArrayScript, array}, {res.MergeScript, merge}} {
		body := f[1]
		if err := export.WriteFileAtomicMode(f[0], 0o755, func(w io.Writer) error {
			_, err := io.WriteString(w, body)
			return err
		}); err != nil {
			return nil, fault.Output(fmt.Errorf("cluster slurm: %w", err))
		}
	}
	return res, nil
}

// SubmitSlurm submits the array job and then the merge job, which depends on
// the success of every array task, with sbatch (which must be on PATH; its
// settings, such as SLURM_CONF, come from the environment). It returns the
// two job ids.
func SubmitSlurm(ctx context.Context, s *SlurmScripts) (arrayID, mergeID string, err error) {
	sbatch, err := exec.LookPath("sbatch")
	if err != nil {
		return "", "", fmt.Errorf("cluster slurm --submit: sbatch is not on PATH (%w); run on a Slurm login node, or submit the scripts yourself: sbatch %s, then sbatch --dependency=afterok:<job id> %s", err, s.ArrayScript, s.MergeScript)
	}
	submit := func(args ...string) (string, error) {
		cmd := exec.CommandContext(ctx, sbatch, append([]string{"--parsable"}, args...)...)
		var stderr strings.Builder
		cmd.Stderr = &stderr
		b, err := cmd.Output()
		if err != nil {
			return "", fmt.Errorf("sbatch %s: %w: %s", strings.Join(args, " "), err, strings.TrimSpace(stderr.String()))
		}
		id, _, _ := strings.Cut(strings.TrimSpace(string(b)), ";") // "id" or "id;cluster"
		if _, err := strconv.Atoi(id); err != nil {
			return "", fmt.Errorf("sbatch %s: unexpected reply %q", strings.Join(args, " "), strings.TrimSpace(string(b)))
		}
		return id, nil
	}
	if arrayID, err = submit(s.ArrayScript); err != nil {
		return "", "", err
	}
	if mergeID, err = submit("--dependency=afterok:"+arrayID, s.MergeScript); err != nil {
		return arrayID, "", fmt.Errorf("%w (the array job %s was submitted; cancel it with scancel %s or submit the merge yourself)", err, arrayID, arrayID)
	}
	return arrayID, mergeID, nil
}

// shQuote quotes s for a POSIX shell.
func shQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("/._-+=:,@", r))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// absPath is p made absolute (p itself if the working directory is unknown):
// the job scripts run elsewhere.
func absPath(p string) string {
	if a, err := filepath.Abs(p); err == nil {
		return a
	}
	return p
}
