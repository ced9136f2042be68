package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"swellgrid/pipelines/screening"
)

func newScreenCmd() *cobra.Command {
	var specPath string
	cmd := &cobra.Command{
		Use:   "screen DIR --spec FILE",
		Short: "Screen the cells of a finished run against criteria and constraint layers",
		Long: `screen applies the [screening] section of FILE to the finished run in DIR, without
recomputing anything: each [[screening.scenario]] has criteria on cells.parquet
columns ("power_mean_kw_m >= 15", "depth_m between 30 and 150"; a missing value
fails), polygon layers a cell centre must not lie in (exclude) or must lie in
(within), and distance rules (min_km, max_km) to the features of a layer, measured
as geodesics on WGS 84. Layers are GeoJSON or GeoPackage files in WGS 84 (anything
else is refused: reproject with ogr2ogr -t_srs EPSG:4326). It writes
screening.parquet (cell x scenario: pass, reasons, area, distances),
screening.json (per scenario: passing area, mean resource, the annual energy of a
device layout), contours/screening_<scenario>.geojson (the passing area) and,
with costs, contours/lcoe_per_mwh_<scenario>.bands.geojson (the levelised cost),
records them in manifest.json and rebuilds the report, atlas.gpkg and atlas.nc
where the run has them. Exit codes: 0 ok, 1 internal error, 2 not a finished run or a bad spec or
constraint file (named), 4 output directory locked or not writable.

` + wrapText(screening.Note, 86) + "\n\n" + caution,
		Example: `  swellgrid screen demo-out/atlas-grid --spec screening.toml`,
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if specPath == "" {
				return badInput(fmt.Errorf("screen: --spec FILE is required (a spec with a [screening] section)"))
			}
			crashDir = args[0]
			files, warns, err := screening.Rescreen(args[0], specPath)
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "wrote %d files to %s\n", len(files), args[0])
			for _, f := range files {
				fmt.Fprintln(os.Stdout, " ", f)
			}
			for _, w := range warns {
				fmt.Fprintln(os.Stdout, "warning:", termMessage(w))
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&specPath, "spec", "", "spec file with the [screening] section (other sections are not used)")
	return cmd
}
