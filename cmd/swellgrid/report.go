package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"swellgrid/pipelines/products"

	"github.com/spf13/cobra"
)

func newReportCmd() *cobra.Command {
	var atlas bool
	cmd := &cobra.Command{
		Use:   "report DIR",
		Short: "Rebuild the HTML report (and with --atlas atlas.nc and atlas.gpkg) of a finished run",
		Long: `report rebuilds DIR/report/ from the tables and the manifest of the finished run in
DIR, without recomputing anything: index.html with the summary of the run and the
maps (mean power, Hm0 p90, the 100-year Hm0, MVI, each device's AEP and capacity
factor), a page per site (the spec's [[site]] list, or every point of a point set),
and every figure as PNG and SVG. The pages open from disk with no network.
--atlas also rewrites atlas.nc (CF raster, structured grids) and atlas.gpkg
(GeoPackage). Exit codes: 0 ok, 1 internal error, 2 not a finished run,
4 output directory locked or not writable.

` + caution,
		Example: `  swellgrid report demo-out/atlas-grid
  swellgrid report --atlas atlas`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			files, warns, err := products.Rebuild(args[0], products.Products{Report: true, NetCDF: atlas, GeoPackage: atlas})
			if err != nil {
				return err
			}
			fmt.Fprintf(os.Stdout, "wrote %d files to %s\n", len(files), args[0])
			printProducts(os.Stdout, args[0], files)
			for _, w := range warns {
				fmt.Fprintln(os.Stdout, "warning:", termMessage(w))
			}
			return nil
		},
	}
	cmd.Flags().BoolVar(&atlas, "atlas", false, "also rewrite atlas.nc and atlas.gpkg")
	return cmd
}

// printProducts names the report, the raster and the GeoPackage among files
// (relative to dir), one line each.
func printProducts(w io.Writer, dir string, files []string) {
	n := 0
	for _, f := range files {
		if strings.HasPrefix(f, "report"+string(filepath.Separator)) {
			n++
		}
	}
	for _, f := range files {
		switch f {
		case filepath.Join("report", "index.html"):
			fmt.Fprintf(w, "report     %s (%d files: pages, PNG and SVG figures; opens from disk)\n", filepath.Join(dir, f), n)
		case "atlas.nc":
			fmt.Fprintf(w, "raster     %s (CF-1.8 NetCDF-4, every numeric column on the grid)\n", filepath.Join(dir, f))
		case "atlas.gpkg":
			fmt.Fprintf(w, "geopackage %s (cells, isolines and bands layers)\n", filepath.Join(dir, f))
		}
	}
}
