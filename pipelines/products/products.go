// Package products makes the files built from a finished run's tables and
// manifest (rundir.Run): the CF raster atlas.nc, the GeoPackage atlas.gpkg
// and the HTML report. Each is a Product; a new output format is one new
// export package and one line in the list below. It reads a run directory
// through export/rundir only: it must not know how the tables were computed.
package products

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/gpkg"
	"swellgrid/export/raster"
	atlasreport "swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
)

// Product is one output made from a finished run directory.
type Product interface {
	// Build writes the product into r.Dir and returns the files written
	// (relative to r.Dir) and warnings for the manifest.
	Build(r *rundir.Run) (files, warnings []string, err error)
}

// Products says which of the products made from a finished run's tables to
// (re)build.
type Products struct {
	Report, NetCDF, GeoPackage bool
	Workers                    int // report figures rendered at once (0: one per core)
}

// chosen lists the products asked for, in the order they are built (which
// is the order of their files in the manifest).
func (p Products) chosen() []Product {
	var out []Product
	for _, c := range []struct {
		on bool
		p  Product
	}{
		{p.NetCDF, rasterAtlas{}},
		{p.GeoPackage, geoPackage{}},
		{p.Report, htmlReport{workers: p.Workers}},
	} {
		if c.on {
			out = append(out, c.p)
		}
	}
	return out
}

// rasterAtlas is atlas.nc (export/raster): structured grids and meshes; a
// point set has no raster and gets a warning instead.
type rasterAtlas struct{}

func (rasterAtlas) Build(r *rundir.Run) ([]string, []string, error) {
	if !r.Structured() && r.Mesh == nil {
		return nil, []string{"no atlas.nc: the grid is a point set, which is no raster; use atlas.gpkg or cells.parquet"}, nil
	}
	if err := raster.Write(r); err != nil {
		return nil, nil, err
	}
	return []string{raster.FileName}, nil, nil
}

// geoPackage is atlas.gpkg (export/gpkg).
type geoPackage struct{}

func (geoPackage) Build(r *rundir.Run) ([]string, []string, error) {
	if err := gpkg.Write(r); err != nil {
		return nil, nil, err
	}
	return []string{gpkg.FileName}, nil, nil
}

// htmlReport is the report (export/report), its figures drawn by workers
// at once.
type htmlReport struct{ workers int }

func (h htmlReport) Build(r *rundir.Run) ([]string, []string, error) {
	return atlasreport.BuildWith(r, h.workers)
}

// Build makes the products p of the run directory out, whose manifest is
// given (nil: read out/manifest.json), and returns the files written and
// the warnings, in the products' order.
func Build(out string, manifest []byte, p Products) ([]string, []string, error) {
	r, err := rundir.Open(out, manifest)
	if err != nil {
		return nil, nil, err
	}
	return buildFrom(r, p)
}

// buildFrom makes the products p of the opened run r.
func buildFrom(r *rundir.Run, p Products) ([]string, []string, error) {
	var files []string
	warns := append([]string{}, r.Warnings...)
	for _, pr := range p.chosen() {
		f, w, err := pr.Build(r)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, f...)
		warns = append(warns, w...)
	}
	return files, warns, nil
}

// Rebuild rebuilds the products of the finished run in dir from its tables
// and manifest, without recomputing: the report always, atlas.nc and
// atlas.gpkg when asked. It returns the files written, relative to dir.
func Rebuild(dir string, p Products) ([]string, []string, error) {
	if _, err := os.Stat(filepath.Join(dir, "manifest.json")); err != nil {
		return nil, nil, fault.Input(fmt.Errorf("report: %s is not a finished run directory (no manifest.json); run `swellgrid run` first: %w", dir, err))
	}
	unlock, err := lock.Dir(dir)
	if err != nil {
		return nil, nil, err
	}
	defer unlock()
	if err := export.CheckOutputs(dir, []string{contract.ReportDir}, []string{contract.ManifestFile, contract.ManifestSeal, contract.AtlasNCFile, contract.AtlasGPKGFile}); err != nil {
		return nil, nil, fault.Input(err)
	}
	r, err := rundir.Open(dir, nil)
	if err != nil {
		return nil, nil, fault.Input(err)
	}
	// every sealed file proves itself before anything is built, but for
	// those about to be rewritten (a damaged report is repaired)
	if err := r.VerifyAllBut(func(rel string) bool {
		return strings.HasPrefix(rel, contract.ReportDir+"/") || (p.NetCDF && rel == contract.AtlasNCFile) || (p.GeoPackage && rel == contract.AtlasGPKGFile)
	}); err != nil {
		return nil, nil, fault.Input(err)
	}
	files, warns, err := buildFrom(r, p)
	if err != nil {
		return nil, nil, fault.Output(err)
	}
	// the rebuilt files' checksums, under the lock (a sealed run stays sealed)
	if err := export.Reseal(dir); err != nil {
		return nil, nil, fault.Output(err)
	}
	return files, warns, nil
}
