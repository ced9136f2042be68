package main

import (
	"os"

	"github.com/spf13/cobra"

	"swellgrid/ingest"
	"swellgrid/pipelines"
)

func newInspectCmd() *cobra.Command {
	var asJSON bool
	var depth float64
	var deep bool
	var bathy string
	cmd := &cobra.Command{
		Use:   "inspect PATH...",
		Short: "Show what a hindcast holds: files, time span, gaps, grid, roles, depth",
		Long: `inspect builds the catalog of a CF NetCDF hindcast (files, directories or globs)
and prints the files, time span, step, gaps, grid kind and size, the variable found
for each role (by CF standard_name) with its units and packing, the spectral layout,
the depth source and any warnings. Bad input stops it with a message naming the file,
the variable and what to do (exit code 2).`,
		Example: `  swellgrid inspect testdata/bulk_monthly
  swellgrid inspect --json 'hindcast/*.nc'`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opt := ingest.Options{DepthConstant: depth, DeepWater: deep, BathymetryFile: bathy}
			r, err := pipelines.Inspect(args, opt)
			if err != nil {
				return badInput(err)
			}
			if asJSON {
				return r.WriteJSON(os.Stdout)
			}
			return r.WriteText(os.Stdout)
		},
	}
	cmd.Flags().BoolVar(&asJSON, "json", false, "print the catalog as JSON")
	cmd.Flags().Float64Var(&depth, "depth", 0, "constant water depth in metres, instead of a depth variable")
	cmd.Flags().BoolVar(&deep, "deep-water", false, "assume deep water everywhere")
	cmd.Flags().StringVar(&bathy, "bathymetry", "", "separate NetCDF file with sea_floor_depth_below_sea_surface on the same grid")
	return cmd
}
