package contract

import (
	"encoding/json"
	"fmt"

	"swellgrid/grid"
	"swellgrid/ingest"
)

// Document is manifest.json, declared once for its writer and its
// readers: P is how the recorded spec is held (the run engine writes its
// whole spec, P = *runspec.Spec; a reader takes the part the products use,
// P = Parameters: Manifest). Field order is the document's (encoding/json
// writes fields in declaration order).
type Document[P any] struct {
	Software    string  `json:"software"`
	Version     string  `json:"version"`
	Caution     string  `json:"caution"`
	Inputs      []Input `json:"inputs"`
	Calendar    string  `json:"calendar"`
	Start       string  `json:"time_start"`
	End         string  `json:"time_end"`
	Steps       int     `json:"steps"`
	StepSeconds int64   `json:"step_seconds"`
	// Segments are the stretches of one step duration (or irregular), and
	// CoveredHours the time the steps stand for (ingest/timeaxis.go).
	Segments     []ingest.Segment `json:"time_segments"`
	CoveredHours float64          `json:"covered_hours"`
	// StepDurations identifies the durations the steps were weighted by
	// (an update checks that the earlier steps keep them).
	StepDurations ingest.Durations `json:"step_durations"`
	Gaps          []ingest.Gap     `json:"gaps"`
	// Duplicates are the times held by two files of a role, each read once.
	Duplicates  []ingest.Duplicate              `json:"duplicate_steps,omitempty"`
	RoleGaps    []ingest.Gap                    `json:"role_gaps,omitempty"` // steps with no file for one role (one variable per file)
	Grid        Grid                            `json:"grid"`
	Roles       map[ingest.Role]*ingest.VarInfo `json:"roles"`
	DepthSource string                          `json:"depth_source"`
	Assumptions []string                        `json:"assumptions"`
	Parameters  P                               `json:"parameters"`
	Resolution  map[string]float64              `json:"histogram_resolution"`
	Columns     map[string][]ColumnSpec         `json:"columns"`
	Warnings    []string                        `json:"warnings"`
	Outputs     []string                        `json:"outputs"` // files of the run directory, relative to it
	// SpectralReadings say how the spectra's direction convention, density
	// encoding and density units were read, file by file, and why.
	SpectralReadings []ingest.Reading `json:"spectral_readings,omitempty"`
	// ProductWarnings are those of atlas.nc, atlas.gpkg and report/.
	ProductWarnings []string `json:"product_warnings,omitempty"`
	// Screening: the constraint files and the scenarios' summaries
	// (also in screening.json).
	Screening *ScreeningSummary  `json:"screening,omitempty"`
	Timings   map[string]float64 `json:"timings_s,omitempty"` // seconds per stage
	// SpectralAxisSegments are the stretches of the record on one set of
	// spectral axes when the axes change between files (a model upgrade),
	// each integrated on its own axes; absent when they do not change.
	SpectralAxisSegments []ingest.AxisSegment `json:"spectral_axis_segments,omitempty"`
	// OutputChecksums are the size and SHA-256 of every output listed but
	// the manifest itself, recorded when the run finishes (and again when
	// report or screen rewrite files): a run read back (export/rundir)
	// proves its files against them. Absent in runs of earlier versions.
	OutputChecksums []FileSum `json:"output_checksums,omitempty"`
	// Raw is the whole document as read (DecodeManifest); never written.
	Raw json.RawMessage `json:"-"`
}

// Manifest is manifest.json as the products read it back.
type Manifest = Document[Parameters]

// ManifestChecksumsKey is the manifest's member of Document.OutputChecksums.
const ManifestChecksumsKey = "output_checksums"

// FileSum is one output file of a run, relative to the run directory, with
// its size and content's SHA-256 (lower-case hex).
type FileSum struct {
	Path   string `json:"path"`
	Size   int64  `json:"size_bytes"`
	SHA256 string `json:"sha256"`
}

// Input is one input file of the run, with its content's SHA-256.
type Input struct {
	Path   string `json:"path"`
	Size   int64  `json:"size_bytes"`
	SHA256 string `json:"sha256"`
	First  string `json:"first_time"`
	Last   string `json:"last_time"`
	Steps  int    `json:"steps"`
}

// Grid is the grid of the run. Kind is written as its name ("regular",
// "curvilinear", "points" or "mesh"; grid.Kind's MarshalText); a manifest
// without a kind reads as grid.Regular, the zero Kind.
type Grid struct {
	Kind   grid.Kind `json:"kind"`
	NY, NX int       `json:"-"`
	Shape  [2]int    `json:"shape_ny_nx"`
	Cells  int       `json:"cells"`
	Masked int       `json:"masked_cells"`
	// BBox is the true extent as an RFC 7946 bounding box (section 5):
	// west, south, east, north, west > east for a grid across 180 degrees.
	BBox [4]float64 `json:"bbox_lon_lat"`
	// LonFrame is the grid's continuous longitude frame ("-180..180" or
	// "0..360"; empty in a manifest written before it was recorded).
	LonFrame string `json:"lon_frame"`
	// Mapping is the input's native grid and CRS when it is projected or
	// rotated (CF grid mapping; absent otherwise): atlas.nc is written on it.
	Mapping *ingest.GridMapping `json:"grid_mapping,omitempty"`
}

// Parameters is the part of the recorded spec the products use.
type Parameters struct {
	Devices []struct {
		Name        string `json:"name"`
		PowerMatrix string `json:"power_matrix"`
		Lookup      string `json:"lookup"`
		// WidthM is the device's stated width (m; 0: not given), the unit
		// of a screening's spacings in widths.
		WidthM float64 `json:"width_m"`
	} `json:"devices"`
	Extremes struct {
		ReturnPeriodsY []float64 `json:"return_periods_y"`
	} `json:"extremes"`
	Contours struct {
		Columns []string             `json:"columns"`
		Levels  map[string][]float64 `json:"levels"`
	} `json:"contours"`
	Physics struct {
		Rho float64 `json:"rho_kg_m3"`
		G   float64 `json:"g_m_s2"`
	} `json:"physics"`
	Sites  []Site `json:"sites"`
	Output struct {
		// LongTablesCells is output.long_tables_cells (LongCellsAll
		// or LongCellsSites; empty in a run that did not set it: all).
		LongTablesCells string `json:"long_tables_cells"`
	} `json:"output"`
}

// Site is a named place of the spec's [[site]] list.
type Site struct {
	Name string  `json:"name"`
	Lon  float64 `json:"lon"`
	Lat  float64 `json:"lat"`
}

// DecodeManifest decodes manifest.json bytes; an error names the file
// (ManifestFile) and what is wrong with it.
func DecodeManifest(b []byte) (*Manifest, error) {
	m := &Manifest{}
	if err := json.Unmarshal(b, m); err != nil {
		return nil, fmt.Errorf("%s: %w", ManifestFile, err)
	}
	m.Raw = append(json.RawMessage(nil), b...)
	return m, nil
}
