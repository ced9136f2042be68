package engine

import (
	"time"

	"swellgrid/export"
	"swellgrid/pipelines/products"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/screening"

	"swellgrid/export/rundir"
)

// productsOf is the products the spec asks for.
func productsOf(s *runspec.Resolved) products.Products {
	return products.Products{Report: s.Output.Report, NetCDF: s.Output.NetCDF, GeoPackage: s.Output.GeoPackage, Workers: s.Exec.Workers}
}

// finishManifest writes the manifest m of the run directory out, builds the
// products (as the spec switches say) from the tables and that manifest,
// adds their files to written and their warnings to warns and m, and
// rewrites the manifest listing every output with its size and SHA-256
// (output_checksums, which rundir.Open verifies). The manifest is on disk before
// the products are built, so a run whose report fails still leaves a
// finished run directory that `swellgrid report` can complete.
func (e *engine) finishManifest(out string, m *runManifest, written, warns *[]string) error {
	m.Outputs = append(append([]string{}, *written...), "manifest.json")
	var err error
	if m.OutputChecksums, err = export.OutputChecksums(out, m.Outputs); err != nil {
		return err
	}
	if err := export.WriteRunManifest(out, m); err != nil {
		return err
	}
	t0 := time.Now()
	if e.spec.Screening != nil {
		r, err := rundir.Open(out, nil)
		if err != nil {
			return err
		}
		sf, sum, err := screening.Apply(r, e.spec)
		if err != nil {
			return err
		}
		*written = append(*written, sf...)
		m.Screening = sum
		// sealed with the screening's files, so that the products read
		// them as files of the run (rundir.FilesIn, verified)
		m.Outputs = append(append([]string{}, *written...), "manifest.json")
		if m.OutputChecksums, err = export.OutputChecksums(out, m.Outputs); err != nil {
			return err
		}
		if err := export.WriteRunManifest(out, m); err != nil {
			return err
		}
	}
	files, w, err := products.Build(out, nil, productsOf(e.spec))
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
	m.OutputChecksums, err = export.OutputChecksums(out, m.Outputs)
	return err
}
