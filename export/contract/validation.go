package contract

import "encoding/json"

// ValidationDocument is validation.json, declared once for its writer and
// its readers: S is how the [validation] settings are held (swellgrid
// validate writes its runspec.ValidationSpec; a reader that does not need
// them takes ValidationSummary). Field order is the document's.
type ValidationDocument[S any] struct {
	Software string                  `json:"software"`
	Caution  string                  `json:"caution"`
	Run      string                  `json:"run"`
	Settings S                       `json:"settings"`
	Record   [2]string               `json:"hindcast_record"`
	Calendar string                  `json:"calendar"`
	Stations []ValidationStation     `json:"stations"`
	Columns  map[string][]ColumnSpec `json:"columns"`
	Warnings []string                `json:"warnings"`
}

// ValidationSummary is validation.json as the report reads it.
type ValidationSummary = ValidationDocument[json.RawMessage]

// ValidationStation is one station in validation.json.
type ValidationStation struct {
	Name        string                         `json:"name"`
	Source      string                         `json:"source"`
	Format      string                         `json:"format"`
	Attributes  map[string]string              `json:"attributes,omitempty"`
	Lon         float64                        `json:"lon"`
	Lat         float64                        `json:"lat"`
	Location    string                         `json:"location"`
	Cells       []int                          `json:"cells"`
	Weights     []float64                      `json:"weights"`
	NearestCell int                            `json:"nearest_cell"`
	DistanceKm  float64                        `json:"distance_km"`
	DepthM      *float64                       `json:"depth_m"`
	Measured    int                            `json:"measured_times"`
	Matched     int                            `json:"matched_times"`
	Outside     int                            `json:"outside_record"`
	Unpaired    int                            `json:"unmatched_inside_record"`
	NotInCal    int                            `json:"not_in_calendar,omitempty"`
	First, Last string                         `json:"-"`
	StormThrM   *float64                       `json:"storm_threshold_m"`
	Record      map[string]map[string]*float64 `json:"record"`
	PlotFrom    string                         `json:"plot_from"`
	PlotTo      string                         `json:"plot_to"`
	Notes       []string                       `json:"notes,omitempty"`
}
