package main

import (
	"fmt"
	"os"
	"swellgrid/pipelines/cluster"

	"github.com/spf13/cobra"
)

func newClusterCmd() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "cluster",
		Short: "Write (and submit) batch-scheduler jobs for a sharded run",
	}
	cmd.AddCommand(newClusterSlurmCmd())
	return cmd
}

func newClusterSlurmCmd() *cobra.Command {
	var j cluster.SlurmJobs
	var submit, planOnly bool
	cmd := &cobra.Command{
		Use:   "slurm --spec FILE (--shards N | --mem M | both) [--partition P --time T] [--plan] [--submit]",
		Short: "Write a Slurm array job (one task per shard) and a merge job that waits for it",
		Long: `slurm writes two job scripts: an array job whose task I runs
'swellgrid run --spec FILE --shard I/N' into its own shard directory, and a merge job
that runs 'swellgrid merge' once every array task has succeeded (afterok dependency;
it is cancelled if a task fails). With --submit both are submitted with sbatch and
the job ids are printed. The spec, the inputs, the executable and the output
directory must be on a file system the compute nodes share.

The shards are planned from the catalog (cells, rows, record length) and the memory
model of a run, so that each task reads its files once: with --mem (the Slurm
request per task) the number of shards is computed; with --shards the memory per
task; with both they are checked, and a combination that cannot fit is refused
(exit 2) saying what would. Each task runs with --memory-limit = --mem less 128 MiB,
what the process takes beyond its budget, so the scheduler does not kill it. The
plan is printed; --plan prints it and writes nothing.

` + caution,
		Example: `  swellgrid cluster slurm --spec atlas.toml --mem 8G --plan
  swellgrid cluster slurm --spec atlas.toml --shards 16 --partition compute --time 04:00:00 --submit`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if planOnly {
				p, _, err := cluster.PlanSlurm(j)
				if err != nil {
					return err
				}
				fmt.Fprint(os.Stdout, p.Text())
				return nil
			}
			s, err := cluster.WriteSlurmScripts(j)
			if err != nil {
				return err
			}
			fmt.Fprint(os.Stdout, s.Plan.Text())
			fmt.Fprintf(os.Stdout, "array job script: %s\nmerge job script: %s\nmerged outputs:   %s\n", s.ArrayScript, s.MergeScript, s.Out)
			if !submit {
				fmt.Fprintf(os.Stdout, "submit with: id=$(sbatch --parsable %s) && sbatch --dependency=afterok:$id %s\n", s.ArrayScript, s.MergeScript)
				return nil
			}
			a, m, err := cluster.SubmitSlurm(cmd.Context(), s)
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "array job %s\nmerge job %s\n", a, m)
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&j.SpecFile, "spec", "", "run spec (TOML), read by every job")
	f.IntVar(&j.Shards, "shards", 0, "number of shards (array tasks); 0: as many as --mem needs")
	f.StringVar(&j.Out, "out", "", "run directory of the merged outputs (overrides output.dir)")
	f.StringVar(&j.Partition, "partition", "", "Slurm partition")
	f.StringVar(&j.Time, "time", "", "time limit per task, e.g. 04:00:00")
	f.StringVar(&j.Mem, "mem", "", "Slurm memory request per task, e.g. 8G (default: what a shard needs); the run's budget is 128 MiB less")
	f.IntVar(&j.CPUs, "cpus", 1, "CPUs per task (the run's workers)")
	f.StringVar(&j.Binary, "binary", "", "swellgrid executable on the compute nodes (default: this one)")
	f.StringVar(&j.ScriptDir, "scripts", "", "directory for the job scripts and logs (default: OUT/.swellgrid/slurm)")
	f.BoolVar(&submit, "submit", false, "submit both jobs with sbatch and print the job ids")
	f.BoolVar(&planOnly, "plan", false, "print the plan (shards, memory per task) and write nothing")
	return cmd
}
