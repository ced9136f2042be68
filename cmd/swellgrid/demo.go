package main

import (
	"context"
	"fmt"
	"log/slog"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"swellgrid/export/contract"
	"swellgrid/pipelines/demo"
	"swellgrid/pipelines/engine"
)

func newDemoCmd() *cobra.Command {
	var out string
	cmd := &cobra.Command{
		Use:   "demo [--out DIR]",
		Short: "Write the built-in synthetic hindcast and run the whole job on it",
		Long: `demo writes a small invented hindcast (the Nullport Shelf: a made-up coast with
shelf depths from 15 to 200 m: 30 years of 3-hourly bulk fields on a 16 x 12 grid,
so that the extremes and design sea states have a record to rest on, and 3 years of
directional spectra at 12 offshore points, and 10 years of bulk fields on the nodes
of a small invented triangular UGRID mesh; every file says it is synthetic), then
runs the whole pipeline on the bulk grid, on the spectral points and on the mesh,
and prints what it wrote and which files to open in GIS software.

` + caution,
		Example: `  swellgrid demo --out demo-out`,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			log := slog.New(slog.NewTextHandler(os.Stderr, nil))
			opt := engine.Options{Log: log, Version: Version}
			opt.Progress = stderrProgress(log)
			crashDir = out
			res, err := demo.Run(ctx, out, opt)
			if err != nil {
				return interrupted(ctx, err, "interrupted; rerun the demo")
			}
			w := os.Stdout
			fmt.Fprintf(w, "swellgrid demo: synthetic scenario (invented coast, not a real place)\n")
			fmt.Fprintf(w, "hindcast   %d files in %s\n", len(res.Hindcast), filepath.Join(out, "hindcast"))
			for _, r := range res.Runs {
				fmt.Fprintf(w, "atlas      %s: %d cells, %d steps -> %s\n", r.Name, r.Result.Cells, r.Result.Steps, r.Result.OutDir)
				for _, f := range r.Result.Files {
					if !strings.HasPrefix(f, "report"+string(filepath.Separator)) {
						fmt.Fprintf(w, "             %s\n", f)
					}
				}
				printProducts(w, r.Result.OutDir, r.Result.Files)
				for _, wr := range r.Result.Warnings {
					fmt.Fprintf(w, "           warning: %s\n", termMessage(wr))
				}
			}
			if v := res.Validation; v != nil {
				for _, st := range v.Summary.Stations {
					line := fmt.Sprintf("validation %s (invented station, %s) against %s: %d matched times", st.Name, st.Source, v.OutDir, st.Matched)
					if h := st.Record["hm0"]; h != nil && h["bias"] != nil && h["scatter_index"] != nil {
						line += fmt.Sprintf(", Hm0 bias %+.3f m, scatter index %.3f", *h["bias"], *h["scatter_index"])
					}
					fmt.Fprintln(w, line)
				}
			}
			g := res.Runs[0].Result.OutDir
			fmt.Fprintf(w, "open in GIS: %s (points, GeoParquet), %s and %s (contours, GeoJSON)\n",
				filepath.Join(g, contract.CellsFile), filepath.Join(g, contract.ContourDir, contract.ContourBandsFile(contract.ColPowerMean)), filepath.Join(g, contract.ContourDir, contract.ContourLinesFile(contract.ColPowerMean)))
			fmt.Fprintf(w, "done in %s\n\n%s\n", res.Wall.Round(time.Millisecond), caution)
			return nil
		},
	}
	cmd.Flags().StringVar(&out, "out", "demo-out", "directory for the synthetic hindcast and the atlases")
	return cmd
}
