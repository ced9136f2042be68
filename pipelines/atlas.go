package pipelines

import (
	"fmt"
	"os"
	"path/filepath"
	"time"

	"swellgrid/export"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"

	"swellgrid/export/gpkg"
	"swellgrid/export/raster"
	atlasreport "swellgrid/export/report"
	"swellgrid/export/rundir"
)

// Products says which of the products made from a finished run's tables to
// (re)build.
type Products struct {
	Report, NetCDF, GeoPackage bool
	Workers                    int // report figures rendered at once (0: one per core)
}

// productsOf is the products the spec asks for.
func productsOf(s *runspec.Spec) Products {
	return Products{Report: s.Output.Report, NetCDF: s.Output.NetCDF, GeoPackage: s.Output.GeoPackage, Workers: s.Run.Workers}
}

func buildProducts(out string, manifest []byte, p Products) ([]string, []string, error) {
	r, err := rundir.Open(out, manifest)
	if err != nil {
		return nil, nil, err
	}
	var files, warns []string
	if p.NetCDF {
		if r.Structured() || r.Mesh != nil {
			if err := raster.Write(r); err != nil {
				return nil, nil, err
			}
			files = append(files, raster.FileName)
		} else {
			warns = append(warns, "no atlas.nc: the grid is a point set, which is no raster; use atlas.gpkg or cells.parquet")
		}
	}
	if p.GeoPackage {
		if err := gpkg.Write(r); err != nil {
			return nil, nil, err
		}
		files = append(files, gpkg.FileName)
	}
	if p.Report {
		rf, rw, err := atlasreport.BuildWith(r, p.Workers)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, rf...)
		warns = append(warns, rw...)
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
	unlock, err := lockDir(dir)
	if err != nil {
		return nil, nil, err
	}
	defer unlock()
	if _, err := rundir.Open(dir, nil); err != nil {
		return nil, nil, fault.Input(err)
	}
	files, warns, err := buildProducts(dir, nil, p)
	if err != nil {
		return nil, nil, fault.Output(err)
	}
	return files, warns, nil
}

// finishManifest writes the manifest m of the run directory out, builds the
// products (as the spec switches say) from the tables and that manifest,
// adds their files to written and their warnings to warns and m, and
// rewrites the manifest listing every output. The manifest is on disk before
// the products are built, so a run whose report fails still leaves a
// finished run directory that `swellgrid report` can complete.
func (e *engine) finishManifest(out string, m *Manifest, written, warns *[]string) error {
	m.Outputs = append(append([]string{}, *written...), "manifest.json")
	if err := export.WriteManifest(filepath.Join(out, "manifest.json"), m); err != nil {
		return err
	}
	t0 := time.Now()
	if e.spec.Screening != nil {
		r, err := rundir.Open(out, nil)
		if err != nil {
			return err
		}
		res, err := screenRun(r, e.spec)
		if err != nil {
			return err
		}
		sf, err := writeScreening(out, res)
		if err != nil {
			return err
		}
		*written = append(*written, sf...)
		m.Screening = res.summary
	}
	files, w, err := buildProducts(out, nil, productsOf(e.spec))
	if err != nil {
		return err
	}
	if m.Timings != nil {
		m.Timings["products_s"] = time.Since(t0).Seconds()
	}
	*written = append(*written, files...)
	*warns = append(*warns, w...)
	// kept apart from the run's warnings, which the report shows: a report
	// rebuilt from the final manifest must equal the one the run made
	m.ProductWarnings = append(m.ProductWarnings, w...)
	m.Outputs = append(append([]string{}, *written...), "manifest.json")
	return nil
}
