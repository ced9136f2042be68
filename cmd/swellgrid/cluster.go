package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"swellgrid/pipelines"
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
	var j pipelines.SlurmJobs
	var submit bool
	cmd := &cobra.Command{
		Use:   "slurm --spec FILE --shards N [--partition P --time T --mem M] [--submit]",
		Short: "Write a Slurm array job (one task per shard) and a merge job that waits for it",
		Long: `slurm writes two job scripts: an array job whose task I runs
'swellgrid run --spec FILE --shard I/N' into its own shard directory, and a merge job
that runs 'swellgrid merge' once every array task has succeeded (afterok dependency;
it is cancelled if a task fails). --mem is both the Slurm memory request per task and
the run's memory budget. With --submit both are submitted with sbatch and the job ids
are printed. The spec, the inputs, the executable and the output directory must be on
a file system the compute nodes share.

` + caution,
		Example: `  swellgrid cluster slurm --spec atlas.toml --shards 16 --partition compute --time 04:00:00 --mem 8G --submit`,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			s, err := pipelines.WriteSlurmScripts(j)
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "array job script: %s\nmerge job script: %s\nmerged outputs:   %s\n", s.ArrayScript, s.MergeScript, s.Out)
			if !submit {
				fmt.Fprintf(os.Stdout, "submit with: id=$(sbatch --parsable %s) && sbatch --dependency=afterok:$id %s\n", s.ArrayScript, s.MergeScript)
				return nil
			}
			a, m, err := pipelines.SubmitSlurm(cmd.Context(), s)
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "array job %s\nmerge job %s\n", a, m)
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&j.SpecFile, "spec", "", "run spec (TOML), read by every job")
	f.IntVar(&j.Shards, "shards", 0, "number of shards (array tasks)")
	f.StringVar(&j.Out, "out", "", "run directory of the merged outputs (overrides output.dir)")
	f.StringVar(&j.Partition, "partition", "", "Slurm partition")
	f.StringVar(&j.Time, "time", "", "time limit per task, e.g. 04:00:00")
	f.StringVar(&j.Mem, "mem", "", "memory per task, e.g. 8G (also the run's memory budget)")
	f.IntVar(&j.CPUs, "cpus", 1, "CPUs per task (the run's workers)")
	f.StringVar(&j.Binary, "binary", "", "swellgrid executable on the compute nodes (default: this one)")
	f.StringVar(&j.ScriptDir, "scripts", "", "directory for the job scripts and logs (default: OUT/.swellgrid/slurm)")
	f.BoolVar(&submit, "submit", false, "submit both jobs with sbatch and print the job ids")
	return cmd
}
