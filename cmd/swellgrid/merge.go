package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"swellgrid/pipelines/engine"
)

func newMergeCmd() *cobra.Command {
	var out string
	var workers int
	var memory string
	cmd := &cobra.Command{
		Use:   "merge --out DIR SHARD_DIR...",
		Short: "Combine the shard directories of a sharded run into the outputs of a whole run",
		Long: `merge reads the shard directories written by 'swellgrid run --shard I/N', checks
that they are shards 1..N of one run (same spec fingerprint, same input files by
path, size and SHA-256, every cell exactly once), fits every cell and writes the
tables, contour layers and manifest exactly as a single run would: the tables are
byte-identical to a single-process run. It reads the shards' states a chunk at a
time within --memory-limit (default 2GiB; refused at the start, naming the limit
it needs, when not even one cell fits). The shards' final states are kept in
DIR/.swellgrid, so the merged run can later be extended with 'run --update DIR'.
Exit codes as for run.

` + caution,
		Example: `  swellgrid merge --out atlas shards/1 shards/2 shards/3 shards/4`,
		Args:    cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if out == "" {
				return badInput(errors.New("give --out DIR, the run directory of the merged outputs"))
			}
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			log := slog.New(slog.NewTextHandler(os.Stderr, nil))
			crashDir = out
			res, err := engine.Merge(ctx, out, args, engine.Options{Log: log, Version: Version, Workers: workers, MemoryLimit: memory, LimitProcess: true})
			if err != nil {
				return interrupted(ctx, err, "interrupted; nothing is lost: rerun the same merge")
			}
			fmt.Fprintf(os.Stdout, "merged %d shards: wrote %d files to %s (%d cells, %d steps) in %s\n", len(args), len(res.Files), res.OutDir, res.Cells, res.Steps, res.Wall.Round(time.Millisecond))
			printProducts(os.Stdout, res.OutDir, res.Files)
			for _, w := range res.Warnings {
				fmt.Fprintln(os.Stdout, "warning:", termMessage(w))
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "", "run directory of the merged outputs")
	cmd.Flags().IntVar(&workers, "workers", 0, "fit workers (0: all cores)")
	cmd.Flags().StringVar(&memory, "memory-limit", "", "memory budget of the merge, e.g. 512MiB (default 2GiB; the process takes about 110 MB more)")
	return cmd
}
