package engine

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/tables"
)

// columnNames lists the columns of cells.parquet for this run.
func (e *engine) columnNames() map[string]string {
	out := map[string]string{}
	for _, c := range e.cellsColumns() {
		out[c.Name] = c.Unit
	}
	return out
}

func (e *engine) checkContourColumns() error {
	names := e.columnNames()
	for _, c := range e.spec.Contours.Columns {
		if _, ok := names[c]; !ok {
			return fmt.Errorf("spec: contours.columns: %q is not a column of cells.parquet (see the README's column list)", c)
		}
	}
	for c := range e.spec.Contours.Levels {
		if _, ok := names[c]; !ok {
			return fmt.Errorf("spec: contours.levels.%s: not a column of cells.parquet", c)
		}
	}
	return e.spec.Screening.CheckColumns(names)
}

// writeContours writes the contour layers of the contour columns, whose
// values over the grid (in cell order) are in vals (nil: not numeric); every
// file is written atomically by export. It returns the files written
// (relative to out) and the warnings.
func (e *engine) writeContours(out string, vals map[string][]float64) ([]string, []string, error) {
	var written, warns []string
	contour, why := contourer(e.cat.Grid, e.cat.Masked)
	if contour == nil {
		warns = append(warns, why)
		return written, warns, nil
	}
	if w := seamWarning(e.cat.Grid, e.cat.Masked); w != "" && len(e.spec.Contours.Columns) > 0 {
		warns = append(warns, w)
	}
	units := e.columnNames()
	for _, col := range e.spec.Contours.Columns {
		vals := vals[col]
		if vals == nil {
			warns = append(warns, fmt.Sprintf("no contours for %s: not a numeric column", col))
			continue
		}
		levels, why := contourLevels(col, vals, e.cat.Masked, e.spec.Contours.Levels[col])
		if len(levels) == 0 {
			warns = append(warns, why)
			continue
		}
		edges := append(append([]float64{math.Inf(-1)}, levels...), math.Inf(1))
		lines, bands, err := contour(vals, levels, edges)
		if err != nil {
			return nil, nil, fmt.Errorf("contours of %s: %v", col, err)
		}
		if err := export.WriteContours(out, col, units[col], levels, lines, edges, bands); err != nil {
			return nil, nil, fmt.Errorf("writing contours of %s: %w", col, err)
		}
		written = append(written, "contours/"+col+".geojson", "contours/"+col+".bands.geojson")
	}
	return written, warns, nil
}

// contourLevels returns the contour levels of column col: the spec's
// levels when given, else nice levels over the range of its values on sea
// cells (vals in cell order, NaN for null; masked marks land). With no
// levels it gives the warning why: the column has no value on a sea cell,
// or all its values are equal.
func contourLevels(col string, vals []float64, masked []bool, given []float64) ([]float64, string) {
	if len(given) > 0 {
		return given, ""
	}
	lo, hi, n := math.Inf(1), math.Inf(-1), 0
	for i, v := range vals {
		if !math.IsNaN(v) && !masked[i] {
			lo, hi, n = math.Min(lo, v), math.Max(hi, v), n+1
		}
	}
	if n == 0 {
		return nil, fmt.Sprintf("no contours for %s: the column has no values (null on every sea cell)", col)
	}
	if levels := grid.NiceLevels(lo, hi, 8); len(levels) > 0 {
		return levels, ""
	}
	if hi > lo {
		return nil, fmt.Sprintf("no contours for %s: no levels found between %s and %s; give contours.levels.%s in the spec", col, strconv.FormatFloat(lo, 'g', -1, 64), strconv.FormatFloat(hi, 'g', -1, 64), col)
	}
	return nil, fmt.Sprintf("no contours for %s: the column has no spread of values (%s on every sea cell with a value)", col, strconv.FormatFloat(lo, 'g', -1, 64))
}

// recordedSpec is the spec as manifest.json records it: the bathymetry file
// that the run read, like its inputs, by absolute path, so that validate
// finds them from any working directory.
func recordedSpec(s *runspec.Spec) *runspec.Spec {
	if s.Depth.BathymetryFile == "" {
		return s
	}
	c := *s
	c.Depth.BathymetryFile = absPath(s.Depth.BathymetryFile)
	return &c
}

// runManifest is manifest.json as the run writes it: the output contract's
// document with the whole spec recorded.
type runManifest = contract.Document[*runspec.Spec]

func (e *engine) manifest(version string, sums, warns []string, timings map[string]float64) *runManifest {
	c := e.cat
	m := &runManifest{Software: "swellgrid", Version: version, Caution: tables.Caution, Calendar: string(c.Calendar),
		Start: c.Start, End: c.End, Steps: c.Steps, StepSeconds: c.StepSeconds, Gaps: c.Gaps, RoleGaps: c.RoleGaps, Roles: c.Vars,
		DepthSource: c.DepthSource, Parameters: recordedSpec(e.spec.Spec), Timings: timings, SpectralReadings: c.Readings}
	if m.Gaps == nil {
		m.Gaps = []ingest.Gap{}
	}
	m.Segments, m.CoveredHours, m.StepDurations = c.Segments, c.CoveredHours(), c.DurationsOf(c.Steps)
	for _, a := range c.AxisSegments {
		a.FirstFile, a.LastFile = ingest.PathText(a.FirstFile), ingest.PathText(a.LastFile)
		m.SpectralAxisSegments = append(m.SpectralAxisSegments, a)
	}
	for _, d := range c.Duplicates {
		d.Files = []string{ingest.PathText(d.Files[0]), ingest.PathText(d.Files[1])}
		d.Used = ingest.PathText(d.Used)
		m.Duplicates = append(m.Duplicates, d)
	}
	for i, f := range c.Files {
		m.Inputs = append(m.Inputs, contract.Input{Path: ingest.PathText(absPath(f.Path)), Size: f.Size, SHA256: sums[i], First: f.From, Last: f.To, Steps: f.Steps})
	}
	masked := 0
	for _, x := range c.Masked {
		if x {
			masked++
		}
	}
	a, b, cc, d := c.Grid.Bounds()
	m.Grid = contract.Grid{Kind: c.Grid.Kind, Shape: [2]int{c.Grid.NY, c.Grid.NX}, Cells: c.Grid.NCells(), Masked: masked, BBox: [4]float64{a, b, cc, d}, LonFrame: c.Grid.Frame().String(), Mapping: c.Mapping}
	m.Assumptions = []string{fmt.Sprintf("water density %g kg/m3, gravity %g m/s2", e.spec.Physics.Rho, e.spec.Physics.G)}
	if !e.spectral {
		m.Assumptions = append(m.Assumptions, "wave power from bulk Hm0 and Te with linear-theory group velocity at the cell depth (deep water where the depth is unknown or the deep-water assumption is chosen)")
		if c.Vars[ingest.Te] == nil {
			m.Assumptions = append(m.Assumptions, fmt.Sprintf("Te = %g Tp (no Te in the files)", e.spec.Physics.TeOverTp))
		}
	} else {
		m.Assumptions = append(m.Assumptions, "wave power from the spectra with finite-depth group velocity of linear theory")
	}
	if len(e.ccfg.Devices) > 0 {
		u := e.spec.Uncertainty
		m.Assumptions = append(m.Assumptions, e.model.assumption(u.ModelFrac, u.BlockPairs, u.BootstrapReps, u.Seed))
	}
	if a := e.corrAssumption(); a != "" {
		m.Assumptions = append(m.Assumptions, a)
	}
	m.Assumptions = append(m.Assumptions, "each time step stands for the time until the next step (the last step, and a step before a gap, for the step before it); every statistic is weighted by that duration; a difference between steps longer than 1.5 times the upper quartile of the 24 differences around it is a gap, time that no step covers")
	if n := e.seaStateNote(); n != "" {
		m.Assumptions = append(m.Assumptions, n)
	}
	m.Assumptions = append(m.Assumptions, e.deviceAssumptions()...)
	m.Assumptions = append(m.Assumptions, e.accessAssumptions()...)
	if strings.HasPrefix(c.DepthSource, "deep-water") {
		m.Assumptions = append(m.Assumptions, "deep water everywhere (given)")
	}
	m.Resolution = map[string]float64{"hm0_m": e.ccfg.Hm0HistResM}
	m.Columns = e.outputColumns()
	m.Warnings = append(append([]string{}, c.Warnings...), warns...)
	return m
}
