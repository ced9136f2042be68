package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"os"
	"os/signal"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/cobra"
	"golang.org/x/term"

	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/runspec"
	"swellgrid/stats"
)

// caution is the one caution text (stats.Caution), wrapped for the help.
var caution = wrapText("CAUTION: "+stats.Caution, 86)

// wrapText breaks s into lines of at most width characters at spaces.
func wrapText(s string, width int) string {
	var b strings.Builder
	n := 0
	for _, w := range strings.Fields(s) {
		switch {
		case n == 0:
		case n+1+len(w) > width:
			b.WriteByte('\n')
			n = 0
		default:
			b.WriteByte(' ')
			n++
		}
		b.WriteString(w)
		n += len(w)
	}
	return b.String()
}

type runFlags struct {
	input, out, spec, memory string
	shard, update            string
	workers                  int
	depth                    float64
	checkpointEvery          float64
	deep, restart            bool
}

func (f *runFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&f.input, "input", "", "hindcast file, directory or glob (overrides input.paths)")
	cmd.Flags().StringVar(&f.out, "out", "", "output run directory (overrides output.dir)")
	cmd.Flags().StringVar(&f.spec, "spec", "", "run spec (TOML); see the README for every key")
	cmd.Flags().IntVar(&f.workers, "workers", 0, "compute workers (0: all cores)")
	cmd.Flags().Float64Var(&f.depth, "depth", 0, "constant water depth in metres")
	cmd.Flags().BoolVar(&f.deep, "deep-water", false, "assume deep water everywhere")
	cmd.Flags().StringVar(&f.memory, "memory-limit", "", "memory budget, e.g. 4GiB (sets the cells per pass)")
	cmd.Flags().Float64Var(&f.checkpointEvery, "checkpoint-every", -1, "seconds between checkpoints (0: after every input file; default 60, or run.checkpoint_every_s)")
	cmd.Flags().BoolVar(&f.restart, "restart", false, "ignore checkpoints in the output directory and start over")
	cmd.Flags().StringVar(&f.shard, "shard", "", "run only share I of N of the cells (`I/N`, 1-based; whole grid rows) and write a shard directory for swellgrid merge")
	cmd.Flags().StringVar(&f.update, "update", "", "continue the finished run in DIR with the new (later) input files; refused if an earlier file or the spec changed")
}

// runOptions turns --shard, --update, --workers and --memory-limit into
// run options (the last two replace the spec's run.workers and
// run.memory_limit, as for a merge); --update DIR is the output directory.
func (f *runFlags) runOptions(spec *runspec.Spec) (engine.Options, error) {
	opt := engine.Options{Restart: f.restart, Update: f.update != "", Workers: f.workers, MemoryLimit: f.memory}
	if f.shard != "" {
		sh, err := engine.ParseShard(f.shard)
		if err != nil {
			return opt, err
		}
		opt.Shard = &sh
	}
	if f.update != "" {
		if f.out != "" && f.out != f.update {
			return opt, fmt.Errorf("--update %s writes into that directory; leave --out out (it says %s)", f.update, f.out)
		}
		spec.Output.Dir = f.update
	}
	return opt, nil
}

// buildSpec applies the flags over the spec file (or the defaults).
func (f *runFlags) buildSpec() (*runspec.Spec, error) {
	spec := runspec.DefaultSpec()
	if f.spec != "" {
		s, err := runspec.LoadSpec(f.spec)
		if err != nil {
			return nil, err
		}
		spec = s
	}
	if f.input != "" {
		spec.Input.Paths = []string{f.input}
	}
	if f.out != "" {
		spec.Output.Dir = f.out
	}
	if f.checkpointEvery >= 0 {
		spec.Run.CheckpointEveryS = f.checkpointEvery
	}
	if f.depth != 0 && f.deep {
		return nil, errors.New("give either --depth or --deep-water, not both")
	}
	if f.depth != 0 {
		spec.Depth.Source, spec.Depth.ConstantM = runspec.DepthConstant, f.depth
	}
	if f.deep {
		spec.Depth.Source = runspec.DepthDeepWater
	}
	return spec, nil
}

func newRunCmd() *cobra.Command {
	var f runFlags
	cmd := &cobra.Command{
		Use:   "run --input PATH_OR_GLOB --out DIR [--spec FILE]",
		Short: "Compute the wave-energy resource atlas of a hindcast",
		Long: `run reads a CF NetCDF hindcast once, computes per cell the wave power (from spectra
with finite-depth group velocity, or from bulk Hm0/Te), its variability, exceedance,
weather windows, device yield and extreme sea states (GEV on annual maxima, GPD on
storm peaks, with 95% profile-likelihood intervals) and design sea states (IFORM
environmental contours of a joint Hm0-Te model), and writes cells.parquet
(GeoParquet), the long tables, GeoJSON contour layers and manifest.json into the
output directory.

Extremes (spec [extremes]): a return level is published only if its fit converged
with a regular information matrix, the shape lies in shape_range (default
[-0.5, 0.5]), the period is at most max_extrapolation (default 4) times the
analysed record, and there are min_years annual maxima (GEV, default 10) or
min_peaks exceedances (GPD, default 20); otherwise it is null and qc_flags says
why. Levels above breaking_ratio (default 0.6) x depth are flagged depth_limited.
Design sea states (spec [design]): contours for return_periods_y (default 1, 10,
50, 100) with the data's time step as sea-state duration (or sea_state_h).
These are screening estimates, not design values: design loads and survival
conditions follow the applicable design standards, site measurements and review
by qualified engineers.

A checkpoint is saved after each input file; rerunning the same command resumes.
--shard I/N runs one share of the cells (whole grid rows) and writes a shard
directory; swellgrid merge combines the shards into the outputs of a whole run.
--update DIR adds the input files later than the run in DIR to its saved states
and rewrites its outputs, identical to a full run over all files; it refuses when
an earlier file (size, SHA-256) or the spec changed.
Everything that can be refused (spec, inputs, conflicting flags, a changed file
the spec names) is refused before the output directory is
created or locked. SIGINT/SIGTERM stop any stage within seconds, leaving a
resumable state. A directory locked by a run that is gone (another host, a
reused pid) is refused with the command that breaks the lock: swellgrid unlock DIR.
Exit codes: 0 ok, 1 internal error (stack saved in DIR/swellgrid-internal-error.log),
2 bad input, spec or usage, 3 interrupted, 4 output directory locked or not writable.

` + caution,
		Example: `  swellgrid run --input 'hindcast/*.nc' --out atlas
  swellgrid run --spec pipelines/examples/bulk.toml --workers 2
  swellgrid run --input hindcast/ --out atlas --depth 40
  swellgrid run --spec atlas.toml --shard 3/8 --out shards/3
  swellgrid run --spec atlas.toml --update atlas --input 'hindcast/*.nc'`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			spec, err := f.buildSpec()
			if err != nil {
				return badInput(err)
			}
			opt, err := f.runOptions(spec)
			if err != nil {
				return badInput(err)
			}
			res, err := runSpecWith(spec, opt)
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "wrote %d files to %s (%d cells, %d steps) in %s\n", len(res.Files), res.OutDir, res.Cells, res.Steps, res.Wall.Round(time.Millisecond))
			printProducts(os.Stdout, res.OutDir, res.Files)
			for _, w := range res.Warnings {
				fmt.Fprintln(os.Stdout, "warning:", termMessage(w))
			}
			return nil
		},
	}
	f.register(cmd)
	return cmd
}

// runSpecWith runs the pipeline with progress on stderr; on a signal the
// run stops and says how to resume.
func runSpecWith(spec *runspec.Spec, opt engine.Options) (*engine.Result, error) {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	log := slog.New(slog.NewTextHandler(os.Stderr, nil))
	opt.Log, opt.Version, opt.LimitProcess = log, Version, true
	opt.Progress = stderrProgress(log)
	crashDir = spec.Output.Dir
	res, err := engine.Run(ctx, spec, opt)
	if err != nil {
		return nil, interrupted(ctx, err, fmt.Sprintf("interrupted; rerun the same command to continue (it resumes from the checkpoints in %s/.swellgrid if the run got that far)", spec.Output.Dir))
	}
	return res, nil
}

// stderrProgress shows progress on stderr: bars on a terminal, a log line
// every 10 s otherwise (schedulers).
func stderrProgress(log *slog.Logger) engine.Progress {
	if term.IsTerminal(int(os.Stderr.Fd())) {
		return newBarProgress(os.Stderr)
	}
	return newLogProgress(log, 10*time.Second)
}
