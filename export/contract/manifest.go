package contract

import (
	"encoding/json"
	"fmt"

	"swellgrid/grid"
)

// Manifest is the part of manifest.json the products read back; Raw keeps
// the whole document.
type Manifest struct {
	Software    string             `json:"software"`
	Version     string             `json:"version"`
	Caution     string             `json:"caution"`
	Inputs      []Input            `json:"inputs"`
	Calendar    string             `json:"calendar"`
	Start       string             `json:"time_start"`
	End         string             `json:"time_end"`
	Steps       int                `json:"steps"`
	StepSeconds int64              `json:"step_seconds"`
	Segments    []Segment          `json:"time_segments"`
	CovHours    float64            `json:"covered_hours"`
	Gaps        []Gap              `json:"gaps"`
	Duplicates  []Duplicate        `json:"duplicate_steps"`
	Grid        Grid               `json:"grid"`
	DepthSource string             `json:"depth_source"`
	Assumptions []string           `json:"assumptions"`
	Warnings    []string           `json:"warnings"`
	Parameters  Parameters         `json:"parameters"`
	Timings     map[string]float64 `json:"timings_s"` // seconds per stage
	Raw         json.RawMessage    `json:"-"`
}

// Input is one input file of the run.
type Input struct {
	Path  string `json:"path"`
	Size  int64  `json:"size_bytes"`
	First string `json:"first_time"`
	Last  string `json:"last_time"`
	Steps int    `json:"steps"`
}

// Gap is time in the record that no step covers.
type Gap struct {
	After  string  `json:"after"`
	Before string  `json:"before"`
	Hours  float64 `json:"missing_hours"`
}

// Segment is a stretch of the record with one step duration (StepHours;
// 0: irregular, its steps from MinStepHours to MaxStepHours).
type Segment struct {
	First        string  `json:"first"`
	Last         string  `json:"last"`
	Steps        int     `json:"steps"`
	StepHours    float64 `json:"step_hours"`
	MinStepHours float64 `json:"min_step_hours"`
	MaxStepHours float64 `json:"max_step_hours"`
}

// Duplicate is a time held by two input files, read once.
type Duplicate struct {
	Roles     []string `json:"roles"`
	Time      string   `json:"time"`
	Files     []string `json:"files"`
	Identical bool     `json:"identical"`
	Used      string   `json:"used"`
}

// Grid is the grid of the run. Kind is written as its name ("regular",
// "curvilinear", "points" or "mesh"; grid.Kind's MarshalText); a manifest
// without a kind reads as grid.Regular, the zero Kind.
type Grid struct {
	Kind   grid.Kind  `json:"kind"`
	Shape  [2]int     `json:"shape_ny_nx"`
	Cells  int        `json:"cells"`
	Masked int        `json:"masked_cells"`
	BBox   [4]float64 `json:"bbox_lon_lat"` // RFC 7946: west > east across 180 degrees
	// LonFrame is the grid's continuous longitude frame ("-180..180" or
	// "0..360"; empty in a manifest written before it was recorded).
	LonFrame string `json:"lon_frame"`
}

// Parameters is the part of the recorded spec the products use.
type Parameters struct {
	Devices []struct {
		Name        string `json:"name"`
		PowerMatrix string `json:"power_matrix"`
		Lookup      string `json:"lookup"`
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
	Sites []Site `json:"sites"`
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
