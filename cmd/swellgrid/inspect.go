package main

import (
	"fmt"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"swellgrid/pipelines/inspect"
	"swellgrid/pipelines/runspec"
)

func newInspectCmd() *cobra.Command {
	var asJSON bool
	var depth float64
	var deep bool
	var bathy, specFile string
	var roles, units []string
	cmd := &cobra.Command{
		Use:   "inspect [PATH...]",
		Short: "Show what a hindcast holds: files, time span, gaps, grid, roles, depth",
		Long: `inspect builds the catalog of a CF NetCDF hindcast (files, directories or globs)
and prints the files (grouped by the roles they carry), time span, step, gaps with
their dates, grid kind and size, the variable found for each role (by CF
standard_name, or as mapped by --role / the spec's [roles]) with its units and
packing, the spectral layout, the depth source and any warnings.

With --spec it reads the inputs as that run spec would (its input.paths unless
paths are given, [roles], [units], [depth]); --role and --units add to or
override the spec. When a role is not found, inspect lists every data variable
of the files (name, dimensions, units, long_name, standard_name) and prints a
[roles] table guessed from long_name and units: a guess, to be checked.
Bad input stops it with a message naming the file, the variable and what to do
(exit code 2).`,
		Example: `  swellgrid inspect testdata/bulk_monthly
  swellgrid inspect --json 'hindcast/*.nc'
  swellgrid inspect --role hm0=hsig --role te=tm10 --units dir=degree --deep-water export/
  swellgrid inspect --spec my-run.toml`,
		Args: cobra.ArbitraryArgs, // paths, or none with --spec
		RunE: func(cmd *cobra.Command, args []string) error {
			spec := runspec.DefaultSpec()
			if specFile != "" {
				s, err := runspec.LoadSpec(specFile)
				if err != nil {
					return badInput(err)
				}
				spec = s
			}
			if len(args) == 0 && len(spec.Input.Paths) == 0 {
				return badInput(fmt.Errorf("inspect: give the hindcast's paths, or a spec with input.paths (--spec)"))
			}
			if err := setPairs(&spec.Roles, roles, "--role"); err != nil {
				return badInput(err)
			}
			if err := setPairs(&spec.Units, units, "--units"); err != nil {
				return badInput(err)
			}
			switch {
			case deep:
				spec.Depth.Source = runspec.DepthDeepWater
			case depth != 0:
				spec.Depth.Source, spec.Depth.ConstantM = runspec.DepthConstant, depth
			case bathy != "":
				spec.Depth.Source, spec.Depth.BathymetryFile = runspec.DepthBathymetry, bathy
			}
			r, err := inspect.Spec(spec, args)
			if err != nil {
				if help := inspect.GuidedHelp(err); help != "" {
					err = fmt.Errorf("%w\n\n%s", err, strings.TrimRight(help, "\n"))
				}
				return badInput(err)
			}
			if asJSON {
				return r.WriteJSON(os.Stdout)
			}
			return r.WriteText(os.Stdout)
		},
	}
	cmd.Flags().BoolVar(&asJSON, "json", false, "print the catalog as JSON")
	cmd.Flags().StringVar(&specFile, "spec", "", "read the inputs as this run spec (TOML) would")
	cmd.Flags().StringArrayVar(&roles, "role", nil, "ROLE=VAR: read role ROLE (hm0, te, tp, dir, dir_peak, depth, spectrum2d, spectrum1d, mask) from variable VAR (repeatable)")
	cmd.Flags().StringArrayVar(&units, "units", nil, "ROLE=UNITS: units to use for a role instead of its units attribute (repeatable)")
	cmd.Flags().Float64Var(&depth, "depth", 0, "constant water depth in metres, instead of a depth variable")
	cmd.Flags().BoolVar(&deep, "deep-water", false, "assume deep water everywhere")
	cmd.Flags().StringVar(&bathy, "bathymetry", "", "separate NetCDF file with sea_floor_depth_below_sea_surface on the same grid")
	return cmd
}

// setPairs adds ROLE=VALUE pairs to a spec table.
func setPairs(m *map[string]string, pairs []string, flag string) error {
	for _, p := range pairs {
		k, v, ok := strings.Cut(p, "=")
		if !ok || strings.TrimSpace(k) == "" || strings.TrimSpace(v) == "" {
			return fmt.Errorf("inspect: %s %q: give ROLE=VALUE, e.g. %s hm0=swh", flag, p, flag)
		}
		if *m == nil {
			*m = map[string]string{}
		}
		(*m)[strings.TrimSpace(k)] = strings.TrimSpace(v)
	}
	return nil
}
