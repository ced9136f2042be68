package main

import (
	"errors"

	"github.com/spf13/cobra"
)

// Version is the software version recorded in every manifest.
var Version = "0.1.0-dev"

// exitErr carries the process exit code of a failure.
type exitErr struct {
	code int
	err  error
}

func (e *exitErr) Error() string { return e.err.Error() }
func (e *exitErr) Unwrap() error { return e.err }

// Exit codes (documented in the README): 0 ok, 1 internal error, 2 bad input or
// spec, 3 interrupted, 4 output directory locked or not writable.
func exitCode(err error) int {
	var e *exitErr
	if errors.As(err, &e) {
		return e.code
	}
	return 1
}

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "swellgrid",
		Short: "Turn a CF NetCDF wave hindcast into a wave-energy resource atlas",
		Long: `swellgrid turns a CF NetCDF wave hindcast (spectra or bulk parameters, one file per
month or one file) into a wave-energy resource atlas: per-cell wave power, its
variability, exceedance, weather windows, device yield and extreme sea states, written
as GeoParquet tables, GeoJSON contour layers and a manifest.

` + caution,
		Example: `  swellgrid demo --out demo-out
  swellgrid inspect testdata/bulk_monthly
  swellgrid run --input testdata/bulk_monthly --out atlas`,
		Version:       Version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.AddCommand(newInspectCmd(), newRunCmd(), newDemoCmd(), newMergeCmd(), newClusterCmd())
	return root
}
