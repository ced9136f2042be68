package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"syscall"

	"github.com/spf13/cobra"

	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/validation"
)

func newValidateCmd() *cobra.Command {
	var runDir, out, specPath string
	var obs []string
	cmd := &cobra.Command{
		Use:   "validate --run DIR --obs PATH_OR_GLOB [--out DIR]",
		Short: "Compare a finished run's hindcast with measured station records",
		Long: `validate compares the hindcast of the finished run in DIR with measured station
records: CF NetCDF station files (featureType "timeSeries", variables found by
standard_name) or CSV files with the header
  time,station,lon,lat[,hm0_m][,te_s][,tp_s][,dir_deg]
(time in ISO 8601 with a zone, e.g. 2031-01-01T00:00:00Z). Each station is placed
on its nearest sea cell (or the bilinear value of the four around it) within
validation.max_distance_km (default 25), each measured time matched to the nearest
hindcast step within validation.max_time_diff_min (default 30) or interpolated, and
the hindcast read again for the station cells only. Statistics of Hm0, Te, Tp, wave
power (each side's from its own Hm0 and Te) and direction, over the record, by month,
by season and for the storm tail (measured Hm0 above validation.storm_percentile,
default 95): N, means, bias, RMSE, scatter index, r, slope through the origin,
symmetric slope, Q-Q quantiles, circular bias and RMSE. Writes validation.parquet,
validation_qq.parquet, validation_pairs.parquet and validation.json to --out (default
DIR); ` + "`swellgrid report DIR`" + ` then adds a page per station.
The [validation] settings come from the run's spec, or from --spec.
Exit codes: 0 ok, 1 internal error, 2 bad input (a station beyond the distance limit,
no measured time inside the record, an unreadable or ill-formed file), 3 interrupted,
4 output directory not writable.

Agreement with a few stations does not make the hindcast fit for design.
` + caution,
		Example: `  swellgrid validate --run atlas --obs 'stations/*.nc'
  swellgrid validate --run atlas --obs buoys.csv --out atlas-validation`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			if runDir == "" {
				return badInput(fmt.Errorf("validate: give the run directory with --run DIR"))
			}
			opt := validation.Options{RunDir: runDir, Obs: obs, OutDir: out}
			if specPath != "" {
				s, err := runspec.LoadSpec(specPath)
				if err != nil {
					return err
				}
				opt.Spec = s
			}
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			res, err := validation.Validate(ctx, opt)
			if err != nil {
				return interrupted(ctx, err, "validate interrupted; nothing was written, run it again")
			}
			for _, st := range res.Summary.Stations {
				line := fmt.Sprintf("station %-16s cell %d (%s, %.1f km)  matched %d of %d times", termMessage(st.Name), st.NearestCell, termMessage(st.Location), st.DistanceKm, st.Matched, st.Measured)
				if h := st.Record["hm0"]; h != nil && h["bias"] != nil && h["scatter_index"] != nil {
					line += fmt.Sprintf("  Hm0 bias %+.3f m, SI %.3f", *h["bias"], *h["scatter_index"])
				}
				fmt.Fprintln(os.Stdout, line)
			}
			fmt.Fprintln(os.Stdout, termMessage(fmt.Sprintf("wrote %v to %s", res.Files, res.OutDir)))
			for _, w := range res.Warnings {
				fmt.Fprintln(os.Stdout, "warning:", termMessage(w))
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&runDir, "run", "", "finished run directory (manifest.json, cells.parquet)")
	cmd.Flags().StringArrayVar(&obs, "obs", nil, "observation files, directories or globs (CF NetCDF station files or CSV); repeatable")
	cmd.Flags().StringVar(&out, "out", "", "output directory (default: the run directory)")
	cmd.Flags().StringVar(&specPath, "spec", "", "a spec whose [validation] section replaces the run's")
	return cmd
}
