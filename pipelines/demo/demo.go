package demo

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"swellgrid/export/contract"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/examples"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/synth"
	"swellgrid/pipelines/validation"
)

// Atlas is one atlas the demo made.
type Atlas struct {
	Name   string
	Input  string
	Result *engine.Result
}

// Result says what the demo wrote.
type Result struct {
	Dir      string
	Hindcast []string
	Runs     []Atlas
	// Validation is the plain grid run against the invented station
	// (station.go), in dir/validation: the grid atlas's bands and bias
	// correction take it.
	Validation *validation.Result
	Wall       time.Duration
}

// Specs returns the specs of the demo's three atlases: bulk fields on the
// grid, directional spectra at the offshore points, and bulk fields on an
// unstructured mesh of the invented Nullport Shelf hindcast written into
// dir/hindcast.
func Specs(dir string) []*runspec.Spec {
	hind := filepath.Join(dir, "hindcast")
	mk := func(glob, out string, contours []string) *runspec.Spec {
		s := runspec.DefaultSpec()
		s.Input.Paths = []string{filepath.Join(hind, glob)}
		s.Output.Dir = filepath.Join(dir, out)
		// Repair access (invented failure rate and repair; an assumption the
		// manifest states): availability and the access waits by month.
		s.Devices = []runspec.DeviceSpec{{Name: "demo_wec", PowerMatrix: filepath.Join(hind, "demo_device.csv"), Lookup: "bilinear",
			FailuresPerYear: 2, RepairH: 12, AccessHm0M: 2.0}}
		s.Contours.Columns = contours
		return s
	}
	grid := mk("nullport_bulk_*.nc", "atlas-grid", []string{contract.ColPowerMean, contract.ColHm0Mean, contract.Hm0PercentileColumn(90), contract.ColMVI, contract.AEPColumn("demo_wec")})
	// Two invented places of interest get a report page each: a mooring on
	// the inner shelf by the coast (about 20 m deep) and a site on the outer
	// shelf offshore (about 180 m; depths of the demo's cells.parquet).
	// Its P50/P90/P99 energies take their model uncertainty from the demo's
	// own validation (Run: a plain grid run is validated first), which
	// also gives the bias-corrected figures beside the raw ones.
	grid.Uncertainty.Validation, grid.Uncertainty.Correct = filepath.Join(dir, validationDir), "linear"
	grid.Sites = []runspec.SiteSpec{{Name: "Inner shelf mooring (invented)", Lon: -32.0, Lat: 45.6}, {Name: "Outer shelf (invented)", Lon: -34.4, Lat: 45.1}}
	// A screening scenario on invented constraint layers.
	grid.Screening = &runspec.ScreeningSpec{
		Layers: []runspec.ScreenLayerSpec{{Name: "reserve", File: filepath.Join(hind, "demo_reserve.geojson")}, {Name: "ports", File: filepath.Join(hind, "demo_ports.geojson")}},
		Scenarios: []runspec.ScenarioSpec{{Name: "demo_core",
			Criteria: []string{contract.ColPowerMean + " >= 15", contract.ColDepth + " between 30 and 150", contract.Hm0ReturnLevelColumn(100) + " <= 14", contract.CapacityFactorColumn("demo_wec") + " >= 0.1"},
			Exclude:  []string{"reserve"}, Distance: []runspec.DistanceRule{{Layer: "ports", MaxKm: 150}},
			Device: "demo_wec", DevicesPerKm2: 2,
			// energy delivered ashore and its levelised cost (invented costs)
			ArrayFactor: 0.95, Connection: "ports", Export: "ac",
			CapexPerMW: 5e6, CablePerKm: 1.5e6, OpexPerMWYr: 1.5e5, DiscountRate: 0.08, LifetimeY: 20},
			// the same sieve without the depth criterion, farther out, exporting DC
			{Name: "demo_offshore",
				Criteria: []string{contract.ColPowerMean + " >= 15", contract.CapacityFactorColumn("demo_wec") + " >= 0.1"},
				Exclude:  []string{"reserve"}, Distance: []runspec.DistanceRule{{Layer: "ports", MinKm: 60}},
				Device: "demo_wec", SpacingAlongM: 500, SpacingAcrossM: 1000,
				ArrayFactor: 0.95, Connection: "ports", Export: "dc",
				CapexPerMW: 5.5e6, CablePerKm: 2.5e6, OpexPerMWYr: 2e5, DiscountRate: 0.08, LifetimeY: 20}},
	}
	return []*runspec.Spec{
		grid,
		mk("nullport_spec_*.nc", "atlas-spectral-points", nil),
		mk("nullport_mesh_*.nc", "atlas-mesh", []string{contract.ColPowerMean, contract.ColHm0Mean}),
	}
}

// validationDir is where the demo's first validation goes (below dir): the
// plain grid run against the invented station, whose pairs the grid
// atlas's bands and bias correction use.
const validationDir = "validation"

// plainDir is the plain grid run the first validation compares.
const plainDir = "atlas-grid-plain"

// plainSpec is the grid atlas's spec without what needs its validation
// (uncertainty.validation, the bias correction) and without the products,
// sites, screening and contours a validation does not read.
func plainSpec(grid *runspec.Spec, dir string) *runspec.Spec {
	p := *grid
	p.Output.Dir = filepath.Join(dir, plainDir)
	p.Uncertainty.Validation, p.Uncertainty.Correct = "", ""
	p.Output.Report, p.Output.NetCDF, p.Output.GeoPackage = false, false, false
	p.Sites, p.Screening, p.Contours.Columns = nil, nil, nil
	return &p
}

// Run writes the synthetic scenario and runs the whole job on it: first a
// plain run of the bulk grid, validated against an invented station made
// from it (into dir/validation); then the three atlases, the grid's taking
// its P50/P90/P99 model uncertainty and its bias-corrected figures from
// that validation (the grid atlas is validated again in place, for its
// report's validation page: the same pairs); then the spectral points and
// the mesh.
func Run(ctx context.Context, dir string, opt engine.Options) (*Result, error) {
	t0 := time.Now()
	hind := filepath.Join(dir, "hindcast")
	if err := os.MkdirAll(hind, 0o755); err != nil {
		return nil, fault.Output(fmt.Errorf("demo: %w", err))
	}
	var files []string
	for _, sc := range []synth.Scenario{synth.Demo(), synth.DemoSpectra(), synth.DemoMesh()} {
		if opt.Log != nil {
			opt.Log.Info("demo: writing the synthetic hindcast", "dir", hind, "place", sc.Place, "files", sc.Name, "months", sc.Months)
		}
		f, err := sc.Write(hind)
		if err != nil {
			return nil, fmt.Errorf("demo: writing the synthetic hindcast: %w", err)
		}
		files = append(files, f...)
	}
	for name, b := range map[string][]byte{"demo_device.csv": examples.DemoDeviceCSV, "demo_reserve.geojson": examples.DemoReserve, "demo_ports.geojson": examples.DemoPorts} {
		if err := os.WriteFile(filepath.Join(hind, name), b, 0o644); err != nil {
			return nil, fault.Output(fmt.Errorf("demo: %w", err))
		}
	}
	res := &Result{Dir: dir, Hindcast: files}
	specs := Specs(dir)
	plain := plainSpec(specs[0], dir)
	if opt.Log != nil {
		opt.Log.Info("demo: plain grid run, to validate first", "out", plain.Output.Dir)
	}
	if _, err := engine.Run(ctx, plain, opt); err != nil {
		return nil, err
	}
	// An invented station at the first site, made from the plain run.
	st := filepath.Join(hind, "synthetic_station.csv")
	if err := writeDemoStation(ctx, plain.Output.Dir, st, specs[0].Sites[0].Lon, specs[0].Sites[0].Lat); err != nil {
		return nil, fmt.Errorf("demo: synthetic station: %w", err)
	}
	var err error
	if res.Validation, err = validation.Validate(ctx, validation.Options{RunDir: plain.Output.Dir, Obs: []string{st}, OutDir: filepath.Join(dir, validationDir)}); err != nil {
		return nil, fmt.Errorf("demo: validation: %w", err)
	}
	for i, spec := range specs {
		name := []string{"bulk fields on the grid", "directional spectra at offshore points", "bulk fields on an unstructured mesh"}[i]
		if opt.Log != nil {
			opt.Log.Info("demo: atlas", "of", name, "out", spec.Output.Dir)
		}
		r, err := engine.Run(ctx, spec, opt)
		if err != nil {
			return nil, err
		}
		res.Runs = append(res.Runs, Atlas{Name: name, Input: spec.Input.Paths[0], Result: r})
		if i == 0 {
			// the grid atlas against the same station, for its report's page
			if _, err = validation.Validate(ctx, validation.Options{RunDir: spec.Output.Dir, Obs: []string{st}}); err != nil {
				return nil, fmt.Errorf("demo: validation: %w", err)
			}
		}
	}
	res.Wall = time.Since(t0)
	return res, nil
}
