package runspec

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"swellgrid/export/contract"
	atlasreport "swellgrid/export/report"

	"github.com/BurntSushi/toml"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/stats/climate"
)

// Spec is a run spec: everything a run needs besides its input files' content.
// It is read from TOML; every key is documented in the README with its
// default. Unknown keys are errors.
type Spec struct {
	Input      InputSpec         `toml:"input" json:"input"`
	Roles      map[string]string `toml:"roles" json:"roles"`
	Units      map[string]string `toml:"units" json:"units"`
	Depth      DepthSpec         `toml:"depth" json:"depth"`
	Physics    PhysicsSpec       `toml:"physics" json:"physics"`
	Statistics StatisticsSpec    `toml:"statistics" json:"statistics"`
	Extremes   ExtremesSpec      `toml:"extremes" json:"extremes"`
	Design     DesignSpec        `toml:"design" json:"design"`
	// Uncertainty sets the year-by-year energy bands (aep_bands.parquet).
	Uncertainty UncertaintySpec `toml:"uncertainty" json:"uncertainty"`
	Devices     []DeviceSpec    `toml:"device" json:"devices"`
	Contours    ContourSpec     `toml:"contours" json:"contours"`
	Output      OutputSpec      `toml:"output" json:"output"`
	Sites       []SiteSpec      `toml:"site" json:"sites"`
	Screening   *ScreeningSpec  `toml:"screening" json:"screening,omitempty"`
	// Validation sets `swellgrid validate` (nil: defaults); it changes no
	// result of the run.
	Validation *ValidationSpec `toml:"validation" json:"validation,omitempty"`
	Run        RunSpec         `toml:"run" json:"run"`

	dir string // directory of the spec file: relative paths are relative to it
}

// NamedFile is a file a spec names, by its key, with its content's SHA-256.
type NamedFile struct {
	Key    string `json:"key"`
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
	data   []byte // power matrices only
}

// InputSpec names the hindcast.
type InputSpec struct {
	Paths []string `toml:"paths" json:"paths"` // files, directories or globs
	// DirectionConvention of spectral direction coordinates:
	// "nautical_from" (or "from"), "nautical_to" (or "to") or "cartesian";
	// it settles coordinates whose attributes say nothing or disagree, and
	// must agree with attributes that agree ("" = the files decide, and a
	// file whose attributes say nothing or disagree is refused).
	DirectionConvention string `toml:"direction_convention" json:"direction_convention"`
	// DirectionConventionForce makes DirectionConvention win over the
	// files' attributes (for files whose attributes are wrong).
	DirectionConventionForce bool `toml:"direction_convention_force" json:"direction_convention_force,omitempty"`
	// AllowLongGaps accepts a time gap longer than the rest of the record
	// (refused by default: usually a mistyped reference date).
	AllowLongGaps bool `toml:"allow_long_gaps" json:"allow_long_gaps,omitempty"`
	// DuplicateSteps says which file's values a time held by two files of a
	// role takes: "" (identical values used once, different values refused),
	// "first" (the earlier file's) or "last" (the later file's).
	DuplicateSteps DuplicateSteps `toml:"duplicate_steps" json:"duplicate_steps,omitempty"`
}

// DepthSpec says where the water depth comes from.
type DepthSpec struct {
	// Source: "file" (a variable with standard_name
	// sea_floor_depth_below_sea_surface in the hindcast), "constant",
	// "bathymetry" (a separate file) or "deep-water".
	Source         DepthSource `toml:"source" json:"source"`
	ConstantM      float64     `toml:"constant_m" json:"constant_m"`
	BathymetryFile string      `toml:"bathymetry_file" json:"bathymetry_file"`
}

// PhysicsSpec holds the physical constants and assumptions.
type PhysicsSpec struct {
	Rho      float64 `toml:"rho" json:"rho_kg_m3"`
	G        float64 `toml:"g" json:"g_m_s2"`
	TeOverTp float64 `toml:"te_over_tp" json:"te_over_tp"`
}

// StatisticsSpec holds the resource statistics settings.
type StatisticsSpec struct {
	Hm0BinM          float64   `toml:"hm0_bin_m" json:"hm0_bin_m"`
	Percentiles      []float64 `toml:"percentiles" json:"percentiles"`
	ScatterHm0BinM   float64   `toml:"scatter_hm0_bin_m" json:"scatter_hm0_bin_m"`
	ScatterTeBinS    float64   `toml:"scatter_te_bin_s" json:"scatter_te_bin_s"`
	WindowLimitsM    []float64 `toml:"window_limits_m" json:"window_limits_m"`
	WindowDurationsH []float64 `toml:"window_durations_h" json:"window_durations_h"`
	CoverageMin      float64   `toml:"coverage_min" json:"coverage_min"`
	DirectionSectors int       `toml:"direction_sectors" json:"direction_sectors"`
}

// ExtremesSpec holds the extreme-value settings.
type ExtremesSpec struct {
	ReturnPeriodsY    []float64     `toml:"return_periods_y" json:"return_periods_y"`
	YearStartMonth    int           `toml:"year_start_month" json:"year_start_month"`
	SeparationH       float64       `toml:"separation_h" json:"separation_h"`
	ThresholdRule     ThresholdRule `toml:"threshold_rule" json:"threshold_rule"` // "quantile" or "peaks_per_year"
	ThresholdQuantile float64       `toml:"threshold_quantile" json:"threshold_quantile"`
	PeaksPerYear      float64       `toml:"peaks_per_year" json:"peaks_per_year"`
	MinYears          int           `toml:"min_years" json:"min_years"`
	Bootstrap         int           `toml:"bootstrap" json:"bootstrap"`
	Seed              int64         `toml:"seed" json:"seed"`
	// Publication policy of return levels (extremes.Publication) and the
	// depth limit (extremes.DepthLimit).
	MinPeaks         int       `toml:"min_peaks" json:"min_peaks"`
	ShapeRange       []float64 `toml:"shape_range" json:"shape_range"`
	MaxExtrapolation float64   `toml:"max_extrapolation" json:"max_extrapolation"`
	BreakingRatio    float64   `toml:"breaking_ratio" json:"breaking_ratio"`
}

// DesignSpec holds the design sea-state (environmental contour) settings.
type DesignSpec struct {
	Enabled        bool      `toml:"enabled" json:"enabled"`
	ReturnPeriodsY []float64 `toml:"return_periods_y" json:"return_periods_y"`
	SeaStateH      float64   `toml:"sea_state_h" json:"sea_state_h"` // 0: the data's time step
	ContourPoints  int       `toml:"contour_points" json:"contour_points"`
}

// DeviceSpec names a device power matrix.
type DeviceSpec struct {
	Name        string `toml:"name" json:"name"`
	PowerMatrix string `toml:"power_matrix" json:"power_matrix"`
	Lookup      Lookup `toml:"lookup" json:"lookup"` // "bin" or "bilinear"
	// Period of the matrix's columns: "te" (default) or "tp"; the CSV's
	// corner label may say it too ("hm0_m\tp_s"), and must then agree.
	Period MatrixPeriod `toml:"period" json:"period"`
	// RatedKW is the data sheet's rated power, kW (0: the largest matrix entry).
	RatedKW float64 `toml:"rated_kw" json:"rated_kw"`
	// Repair access (issue 32; all of failures_per_year, repair_h and
	// access_hm0_m, or none): failures per device-year, the repair's
	// duration (h), and the access limits: Hm0 below access_hm0_m (m) and,
	// if set, Te below access_te_s (s) for an unbroken window of at least
	// repair_h. They give the access_wait_<device>_h and
	// availability_<device> columns (stats/delivery).
	FailuresPerYear float64 `toml:"failures_per_year" json:"failures_per_year,omitempty"`
	RepairH         float64 `toml:"repair_h" json:"repair_h,omitempty"`
	AccessHm0M      float64 `toml:"access_hm0_m" json:"access_hm0_m,omitempty"`
	AccessTeS       float64 `toml:"access_te_s" json:"access_te_s,omitempty"`
	// WidthM is the device's stated width (m, across the waves), the unit
	// of a scenario's spacing_along_widths and spacing_across_widths.
	WidthM float64 `toml:"width_m" json:"width_m,omitempty"`
}

// HasAccess reports whether the device has a repair-access rule.
func (d DeviceSpec) HasAccess() bool { return d.AccessHm0M > 0 }

// ContourSpec chooses the contour layers.
type ContourSpec struct {
	Columns []string             `toml:"columns" json:"columns"`
	Levels  map[string][]float64 `toml:"levels" json:"levels"`
}

// OutputSpec names the run directory and switches the products made from
// the tables (each on by default).
type OutputSpec struct {
	Dir        string `toml:"dir" json:"dir"`
	Report     bool   `toml:"report" json:"report"`         // report/index.html with maps and site pages
	NetCDF     bool   `toml:"netcdf" json:"netcdf"`         // atlas.nc, CF raster (structured grids) or UGRID (meshes)
	GeoPackage bool   `toml:"geopackage" json:"geopackage"` // atlas.gpkg, OGC GeoPackage
	// LongTables, if given, are the only long tables written (by name:
	// "monthly", "extremes", ...; LongTableNames lists them): for very large
	// grids, where a table of rows per cell and bin is more than a study
	// needs. Empty: every long table (the default).
	LongTables []string `toml:"long_tables" json:"long_tables,omitempty"`
	// LongTablesCells chooses the cells that have rows in the long
	// tables: "all" (the default; empty means it too) or "sites", only the
	// nearest sea cell of each [[site]] (for very large grids, where the
	// study needs the per-cell maps of cells.parquet everywhere and the
	// distributions only at its sites). cells.parquet has every cell either way.
	LongTablesCells string `toml:"long_tables_cells" json:"long_tables_cells,omitempty"`
}

// SitesOnlyLongRows reports whether the long tables have rows only for the
// sites' cells (output.long_tables_cells = "sites").
func (o OutputSpec) SitesOnlyLongRows() bool { return o.LongTablesCells == contract.LongCellsSites }

// LongTableNames are the run's long tables, by name (the file is the name
// with ".parquet"), in file order: what output.long_tables may choose.
var LongTableNames = []string{contract.TableAccess, contract.TableAEPBands, contract.TableAnnual, contract.TableAnnualMaxima, contract.TableDesign, contract.TableDirections,
	contract.TableExceedance, contract.TableExtremes, contract.TableMonthly, contract.TableMonthlyYield, contract.TableScatter,
	contract.TableThresholdDiagnostics, contract.TableWindows}

// WritesLongTable reports whether the run writes the long table name
// (output.long_tables).
func (o OutputSpec) WritesLongTable(name string) bool {
	return len(o.LongTables) == 0 || slices.Contains(o.LongTables, name)
}

// SiteSpec is a named place of interest: the report gives it a page, taken to
// the nearest sea cell.
type SiteSpec struct {
	Name string  `toml:"name" json:"name"`
	Lon  float64 `toml:"lon" json:"lon"`
	Lat  float64 `toml:"lat" json:"lat"`
}

// RunSpec holds execution settings; they change neither results nor bytes.
type RunSpec struct {
	Workers     int    `toml:"workers" json:"-"`
	MemoryLimit string `toml:"memory_limit" json:"-"`
	BlockSteps  int    `toml:"block_steps" json:"-"`
	// CheckpointEveryS: seconds between checkpoints during a pass (each at the
	// end of an input file); 0 = after every file. The final state is always saved.
	CheckpointEveryS float64 `toml:"checkpoint_every_s" json:"-"`
}

// UncertaintySpec holds the settings of the P50/P90/P99 energy bands.
type UncertaintySpec struct {
	// HorizonsY are the future periods (years) whose mean energy the bands
	// are given for.
	HorizonsY []float64 `toml:"horizons_y" json:"horizons_y"`
	// ModelFrac is the model uncertainty: the relative standard uncertainty
	// of the hindcast's mean device energy, an assumption until a validation
	// gives it (recorded in the manifest).
	ModelFrac float64 `toml:"model_frac" json:"model_frac"`
	// Validation names a finished `swellgrid validate` output directory
	// (validation.json and validation_pairs.parquet); "" for none. A cell
	// within ReachKm of a station takes its model component from that
	// station's pairs; the others keep ModelFrac.
	Validation string `toml:"validation" json:"validation"`
	// ReachKm is the great-circle distance from a cell centre to its
	// nearest validation station within which the station's figures apply.
	ReachKm float64 `toml:"reach_km" json:"reach_km"`
	// BlockPairs is the block length (consecutive matched pairs) of the
	// circular block bootstrap; BootstrapReps its resamples; Seed its
	// generator's seed.
	BlockPairs    int    `toml:"block_pairs" json:"block_pairs"`
	BootstrapReps int    `toml:"bootstrap_reps" json:"bootstrap_reps"`
	Seed          uint64 `toml:"seed" json:"seed"`
	// Correct asks for the bias-corrected atlas beside the raw one: ""
	// (none) or "linear" (Hm0 and Te of each sea state scaled by the
	// least-squares slope through the origin of measured on modelled, from
	// the pairs of the nearest station of Validation within ReachKm).
	Correct string `toml:"correct" json:"correct,omitempty"`
}

// Defaults of the validation-based model component: a station's figures
// apply within 50 km; blocks of 48 pairs (two days of hourly pairs, six of
// 3-hourly: longer than the usual decorrelation of a hindcast's errors,
// an assumption of this project); 1000 resamples (common practice for a
// standard error).
const (
	defaultReachKm       = 50
	defaultBlockPairs    = 48
	defaultBootstrapReps = 1000
	defaultBootstrapSeed = 30
)

// defaultModelFrac is uncertainty.model_frac by default: an assumed 10 %
// relative standard uncertainty of a hindcast's mean device energy, a round
// screening figure (an assumption of this project, not from a source).
const defaultModelFrac = 0.10

// DefaultSpec is the spec of the common case.
func DefaultSpec() *Spec {
	return &Spec{
		Roles: map[string]string{}, Units: map[string]string{},
		Depth:   DepthSpec{Source: depthFromFile},
		Physics: PhysicsSpec{Rho: 1025, G: 9.81, TeOverTp: 0.9},
		Statistics: StatisticsSpec{Hm0BinM: 0.05, Percentiles: []float64{10, 50, 90, 99}, ScatterHm0BinM: 0.5, ScatterTeBinS: 1,
			WindowLimitsM: []float64{1.5, 2.0, 2.5}, WindowDurationsH: []float64{6, 12, 24, 48}, CoverageMin: 0.8,
			DirectionSectors: climate.DefaultDirectionSectors},
		Extremes: ExtremesSpec{ReturnPeriodsY: []float64{1, 5, 10, 25, 50, 100}, YearStartMonth: 1, SeparationH: 48,
			ThresholdRule: thresholdByQuantile, ThresholdQuantile: 0.99, PeaksPerYear: 5, MinYears: 10, Seed: 1,
			MinPeaks: 20, ShapeRange: []float64{-0.5, 0.5}, MaxExtrapolation: 4, BreakingRatio: 0.6},
		Design:      DesignSpec{Enabled: true, ReturnPeriodsY: []float64{1, 10, 50, 100}, ContourPoints: 36},
		Uncertainty: UncertaintySpec{HorizonsY: []float64{1, 10}, ModelFrac: defaultModelFrac, ReachKm: defaultReachKm, BlockPairs: defaultBlockPairs, BootstrapReps: defaultBootstrapReps, Seed: defaultBootstrapSeed},
		Contours:    ContourSpec{Columns: []string{contract.ColPowerMean, contract.ColHm0Mean, contract.Hm0ReturnLevelColumn(100)}, Levels: map[string][]float64{}},
		Output:      OutputSpec{Dir: "swellgrid-out", Report: true, NetCDF: true, GeoPackage: true},
		Run:         RunSpec{MemoryLimit: "2GiB", BlockSteps: 64, CheckpointEveryS: 60},
	}
}

// LoadSpec reads a TOML spec over the defaults. Unknown keys are refused.
func LoadSpec(path string) (*Spec, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, fault.Input(fmt.Errorf("spec: %w", err))
	}
	return ParseSpec(raw, path)
}

// ParseSpec reads a TOML spec from data over the defaults; path names it in
// messages and its directory anchors relative paths. Unknown keys are refused.
func ParseSpec(data []byte, path string) (*Spec, error) {
	s := DefaultSpec()
	md, err := toml.Decode(string(data), s)
	if err != nil {
		return nil, fault.Input(fmt.Errorf("spec %s: %w", path, err))
	}
	if und := md.Undecoded(); len(und) > 0 {
		keys := make([]string, len(und))
		for i, k := range und {
			keys[i] = k.String()
		}
		return nil, fault.Input(fmt.Errorf("spec %s: unknown key %s; see the README's run spec section for the keys", path, strings.Join(keys, ", ")))
	}
	s.dir = filepath.Dir(path)
	if md.IsDefined("output", "dir") {
		s.Output.Dir = s.resolve(s.Output.Dir)
	}
	for i, p := range s.Input.Paths {
		s.Input.Paths[i] = s.resolve(p)
	}
	for i := range s.Devices {
		s.Devices[i].PowerMatrix = s.resolve(s.Devices[i].PowerMatrix)
	}
	if s.Depth.BathymetryFile != "" {
		s.Depth.BathymetryFile = s.resolve(s.Depth.BathymetryFile)
	}
	s.Uncertainty.Validation = s.resolve(s.Uncertainty.Validation)
	if s.Screening != nil {
		for i := range s.Screening.Layers {
			s.Screening.Layers[i].File = s.resolve(s.Screening.Layers[i].File)
		}
	}
	return s, nil
}

func (s *Spec) resolve(p string) string {
	if p == "" || filepath.IsAbs(p) || s.dir == "" {
		return p
	}
	return filepath.Join(s.dir, p)
}

// Validate refuses values that make no sense, naming the key. It reads no
// file: Resolve reads the files the spec names.
func (s *Spec) Validate() error {
	bad := func(key, why string, v any) error {
		return &Error{Key: key, Value: fmt.Sprint(v), Why: why}
	}
	if len(s.Input.Paths) == 0 {
		return fmt.Errorf("spec: no input: give input.paths in the spec or --input")
	}
	switch s.Input.DuplicateSteps {
	case DuplicatesRefused, duplicatesFirst, DuplicatesLast:
	default:
		return bad("input.duplicate_steps", `must be "first" (the earlier file's values) or "last" (the later file's), or absent (different values refused)`, strconv.Quote(string(s.Input.DuplicateSteps)))
	}
	if dc, err := ingest.ParseDirConvention(s.Input.DirectionConvention); err != nil {
		return bad("input.direction_convention", err.Error(), strconv.Quote(s.Input.DirectionConvention))
	} else if dc == "" && s.Input.DirectionConventionForce {
		return bad("input.direction_convention_force", "needs input.direction_convention: say which convention wins over the files' attributes", true)
	}
	switch s.Depth.Source {
	case depthFromFile, DepthDeepWater:
	case DepthConstant:
		if !(s.Depth.ConstantM > 0) || math.IsInf(s.Depth.ConstantM, 0) {
			return bad("depth.constant_m", "must be a positive depth in metres", s.Depth.ConstantM)
		}
	case DepthBathymetry:
		if s.Depth.BathymetryFile == "" {
			return bad("depth.bathymetry_file", "must name a NetCDF file when depth.source = \"bathymetry\"", `""`)
		}
	default:
		return bad("depth.source", `must be "file", "constant", "bathymetry" or "deep-water"`, strconv.Quote(string(s.Depth.Source)))
	}
	if !(s.Physics.Rho > 900 && s.Physics.Rho < 1100) {
		return bad("physics.rho", "must be a water density in kg/m3 (900..1100)", s.Physics.Rho)
	}
	if !(s.Physics.G > 9.7 && s.Physics.G < 9.9) {
		return bad("physics.g", "must be the gravitational acceleration in m/s2 (9.7..9.9)", s.Physics.G)
	}
	if !(s.Physics.TeOverTp > 0.5 && s.Physics.TeOverTp <= 1) {
		return bad("physics.te_over_tp", "must lie in (0.5, 1]", s.Physics.TeOverTp)
	}
	st := s.Statistics
	if !(st.Hm0BinM > 0 && st.Hm0BinM <= 1) {
		return bad("statistics.hm0_bin_m", "must lie in (0, 1] m", st.Hm0BinM)
	}
	for _, l := range []struct {
		key string
		n   int
	}{{"statistics.percentiles", len(st.Percentiles)}, {"statistics.window_limits_m", len(st.WindowLimitsM)},
		{"statistics.window_durations_h", len(st.WindowDurationsH)}, {"extremes.return_periods_y", len(s.Extremes.ReturnPeriodsY)},
		{"device", len(s.Devices)}, {"contours.columns", len(s.Contours.Columns)}, {"design.return_periods_y", len(s.Design.ReturnPeriodsY)},
		{"site", len(s.Sites)}, {"input.paths", len(s.Input.Paths)}, {"uncertainty.horizons_y", len(s.Uncertainty.HorizonsY)}} {
		if err := withinLimit(l.key, l.n); err != nil {
			return err
		}
	}
	for _, col := range keys(s.Contours.Levels) {
		if err := withinLimit("contours.levels."+col, len(s.Contours.Levels[col])); err != nil {
			return err
		}
	}
	if err := increasing("statistics.percentiles", st.Percentiles, 0, 100); err != nil {
		return err
	}
	if !(st.ScatterHm0BinM > 0) || !(st.ScatterTeBinS > 0) {
		return bad("statistics.scatter_hm0_bin_m / scatter_te_bin_s", "must be positive", []float64{st.ScatterHm0BinM, st.ScatterTeBinS})
	}
	if err := increasing("statistics.window_limits_m", st.WindowLimitsM, 0, 30); err != nil {
		return err
	}
	if err := increasing("statistics.window_durations_h", st.WindowDurationsH, 0, 28*24); err != nil {
		return err
	}
	if !(st.CoverageMin > 0 && st.CoverageMin <= 1) {
		return bad("statistics.coverage_min", "must lie in (0, 1]", st.CoverageMin)
	}
	if st.DirectionSectors < climate.MinDirectionSectors || st.DirectionSectors > climate.MaxDirectionSectors {
		return bad("statistics.direction_sectors", fmt.Sprintf("must lie in %d..%d (sectors of the directional distribution)", climate.MinDirectionSectors, climate.MaxDirectionSectors), st.DirectionSectors)
	}
	ex := s.Extremes
	if err := increasing("extremes.return_periods_y", ex.ReturnPeriodsY, 0, 1e5); err != nil {
		return err
	}
	if ex.YearStartMonth < 1 || ex.YearStartMonth > 12 {
		return bad("extremes.year_start_month", "must be a month 1..12", ex.YearStartMonth)
	}
	if !(ex.SeparationH > 0 && ex.SeparationH < 24*60) {
		return bad("extremes.separation_h", "must be a positive number of hours below 60 days", ex.SeparationH)
	}
	switch ex.ThresholdRule {
	case thresholdByQuantile:
		if !(ex.ThresholdQuantile > 0.5 && ex.ThresholdQuantile < 1) {
			return bad("extremes.threshold_quantile", "must lie in (0.5, 1)", ex.ThresholdQuantile)
		}
	case thresholdByPeaksPerYear:
		if !(ex.PeaksPerYear > 0 && ex.PeaksPerYear <= 50) {
			return bad("extremes.peaks_per_year", "must lie in (0, 50]", ex.PeaksPerYear)
		}
	default:
		return bad("extremes.threshold_rule", `must be "quantile" or "peaks_per_year"`, strconv.Quote(string(ex.ThresholdRule)))
	}
	if ex.MinYears < 2 {
		return bad("extremes.min_years", "must be at least 2", ex.MinYears)
	}
	if ex.Bootstrap < 0 || ex.Bootstrap > 10000 {
		return bad("extremes.bootstrap", "must lie in 0..10000", ex.Bootstrap)
	}
	if ex.Seed < 0 {
		return bad("extremes.seed", "must be 0 or a positive integer (it seeds the bootstrap)", ex.Seed)
	}
	if ex.MinPeaks < 3 {
		return bad("extremes.min_peaks", "must be at least 3", ex.MinPeaks)
	}
	if len(ex.ShapeRange) != 2 || !(ex.ShapeRange[0] < ex.ShapeRange[1]) || ex.ShapeRange[0] < -1 || ex.ShapeRange[1] > 1 {
		return bad("extremes.shape_range", "must be [low, high] with -1 <= low < high <= 1", ex.ShapeRange)
	}
	if !(ex.MaxExtrapolation > 0 && ex.MaxExtrapolation <= 100) {
		return bad("extremes.max_extrapolation", "must lie in (0, 100] (times the analysed record)", ex.MaxExtrapolation)
	}
	if !(ex.BreakingRatio > 0 && ex.BreakingRatio <= 1) {
		return bad("extremes.breaking_ratio", "must lie in (0, 1] (depth-limited Hm0 / depth)", ex.BreakingRatio)
	}
	if d := s.Design; d.Enabled {
		if err := increasing("design.return_periods_y", d.ReturnPeriodsY, 0, 1e5); err != nil {
			return err
		}
		if !(d.SeaStateH >= 0 && d.SeaStateH <= 24) {
			return bad("design.sea_state_h", "must be 0 (the data's time step) or hours in (0, 24]", d.SeaStateH)
		}
		if d.ContourPoints < 8 || d.ContourPoints > 720 {
			return bad("design.contour_points", "must lie in 8..720", d.ContourPoints)
		}
	}
	if err := increasing("uncertainty.horizons_y", s.Uncertainty.HorizonsY, 0, 1000); err != nil {
		return err
	}
	if n := len(s.Uncertainty.HorizonsY); n > climate.MaxHorizons {
		return bad("uncertainty.horizons_y", fmt.Sprintf("at most %d horizons", climate.MaxHorizons), n)
	}
	if m := s.Uncertainty.ModelFrac; !(m >= 0 && m < 1) {
		return bad("uncertainty.model_frac", "must lie in [0, 1) (a relative standard uncertainty: 0.1 is 10 %)", m)
	}
	if r := s.Uncertainty.ReachKm; !(r > 0 && r <= 20000) {
		return bad("uncertainty.reach_km", "must lie in (0, 20000] km", r)
	}
	if b := s.Uncertainty.BlockPairs; b < 1 || b > 100000 {
		return bad("uncertainty.block_pairs", "must lie in 1..100000 pairs", b)
	}
	if n := s.Uncertainty.BootstrapReps; n < 100 || n > 100000 {
		return bad("uncertainty.bootstrap_reps", "must lie in 100..100000", n)
	}
	switch s.Uncertainty.Correct {
	case "":
	case "linear":
		if s.Uncertainty.Validation == "" {
			return bad("uncertainty.correct", "needs uncertainty.validation: the bias-corrected atlas takes its correction from a finished validation's pairs; run `swellgrid validate` first and name its output directory, or remove uncertainty.correct", strconv.Quote(s.Uncertainty.Correct))
		}
	default:
		return bad("uncertainty.correct", `must be "linear" (or left out for no bias-corrected atlas)`, strconv.Quote(s.Uncertainty.Correct))
	}
	names := map[string]bool{}
	for i, d := range s.Devices {
		key := fmt.Sprintf("device[%d]", i)
		if !deviceName.MatchString(d.Name) {
			return bad(key+".name", fmt.Sprintf("must be lower-case letters, digits and _, starting with a letter, at most %d characters (it names columns)", maxDeviceName), strconv.Quote(d.Name))
		}
		if names[d.Name] {
			return bad(key+".name", "appears twice", d.Name)
		}
		names[d.Name] = true
		if d.Lookup != "" && d.Lookup != lookupBin && d.Lookup != lookupBilinear {
			return bad(key+".lookup", `must be "bin" or "bilinear"`, strconv.Quote(string(d.Lookup)))
		}
		if d.Period != "" && d.Period != periodTe && d.Period != periodTp {
			return bad(key+".period", `must be "te" (energy period) or "tp" (peak period)`, strconv.Quote(string(d.Period)))
		}
		if !(d.RatedKW >= 0 && d.RatedKW < 1<<30) {
			return bad(key+".rated_kw", "must be a power in kW >= 0 (0: the largest matrix entry)", d.RatedKW)
		}
		if d.FailuresPerYear != 0 || d.RepairH != 0 || d.AccessHm0M != 0 || d.AccessTeS != 0 {
			if !(d.FailuresPerYear > 0 && d.FailuresPerYear < 1000) {
				return bad(key+".failures_per_year", "must be a failure rate per device-year, > 0 and < 1000, when repair access is given (failures_per_year, repair_h, access_hm0_m)", d.FailuresPerYear)
			}
			if err := (climate.AccessRule{Hm0M: d.AccessHm0M, TeS: d.AccessTeS, RepairH: d.RepairH}).Validate(); err != nil {
				return fmt.Errorf("spec: %s (repair_h, access_hm0_m, access_te_s): %w", key, err)
			}
		}
	}
	for col, lv := range s.Contours.Levels {
		if err := increasing("contours.levels."+col, lv, math.Inf(-1), math.Inf(1)); err != nil {
			return err
		}
	}
	if err := withinLimit("output.long_tables", len(s.Output.LongTables)); err != nil {
		return err
	}
	for i, t := range s.Output.LongTables {
		if !slices.Contains(LongTableNames, t) {
			return bad(fmt.Sprintf("output.long_tables[%d]", i), fmt.Sprintf("not a long table; the long tables are %s (or leave output.long_tables out for all)", strings.Join(LongTableNames, ", ")), strconv.Quote(t))
		}
	}
	switch s.Output.LongTablesCells {
	case "", contract.LongCellsAll:
	case contract.LongCellsSites:
		if len(s.Sites) == 0 {
			return bad("output.long_tables_cells", "is \"sites\" but the spec has no [[site]]: name the sites whose cells the long tables keep, or set \"all\"", strconv.Quote(s.Output.LongTablesCells))
		}
	default:
		return bad("output.long_tables_cells", fmt.Sprintf("must be %q (every cell, the default) or %q (only the cells of the [[site]] list)", contract.LongCellsAll, contract.LongCellsSites), strconv.Quote(s.Output.LongTablesCells))
	}
	if s.Output.Dir == "" {
		return fmt.Errorf("spec: output.dir is empty; give --out or output.dir")
	}
	if strings.IndexByte(s.Output.Dir, 0) >= 0 {
		return fmt.Errorf("spec: output.dir (or --out) %q contains a NUL byte, which no file name may hold; give another directory", ingest.ShortText(s.Output.Dir))
	}
	if err := s.Validation.Check(); err != nil {
		return err
	}
	if err := checkSites(s.Sites); err != nil {
		return err
	}
	if s.Run.Workers < 0 {
		return bad("run.workers", "must be 0 (all cores) or positive", s.Run.Workers)
	}
	if _, err := ParseSize(s.Run.MemoryLimit); err != nil {
		return bad("run.memory_limit", err.Error(), strconv.Quote(s.Run.MemoryLimit))
	}
	if !(s.Run.CheckpointEveryS >= 0) || math.IsInf(s.Run.CheckpointEveryS, 0) {
		return bad("run.checkpoint_every_s", "must be 0 (after every file) or a positive number of seconds", s.Run.CheckpointEveryS)
	}
	if s.Run.BlockSteps < 0 {
		return bad("run.block_steps", "must be positive", s.Run.BlockSteps)
	}
	return s.checkScreening(names)
}

// Limits of the spec: lists longer than these are refused (each entry adds
// columns or rows to every cell, or work to every step).
const (
	maxListLen        = 64      // every list: percentiles, periods, window limits and durations, devices, sites, input paths, contour columns and levels, screening layers, scenarios and their criteria, exclude, within and distance rules, observation paths
	maxDeviceName     = 40      // characters
	maxMatrixBytes    = 1 << 20 // a power-matrix CSV
	maxMatrixRows     = 1000    // rows (and cells per row) of a power matrix
	maxNamedFileBytes = 1 << 34 // a bathymetry file (16 GiB), hashed only
)

var deviceName = regexp.MustCompile(fmt.Sprintf(`^[a-z][a-z0-9_]{0,%d}$`, maxDeviceName-1))

func withinLimit(key string, n int) error {
	if n > maxListLen {
		hint := ""
		switch key {
		case "input.paths":
			hint = " (give a directory or a glob for many files)"
		case "site":
			hint = " (for more places, run on a point set: every point gets a page)"
		}
		return fmt.Errorf("spec: %s has %d entries; at most %d are allowed%s", key, n, maxListLen, hint)
	}
	return nil
}

// readNamedFiles reads every file the spec names (power matrices within
// their size and row limits, the bathymetry file) and records its SHA-256,
// so that the fingerprint changes with their content.
func (s *Spec) readNamedFiles() ([]NamedFile, error) {
	var named []NamedFile
	for i, d := range s.Devices {
		key := fmt.Sprintf("device[%d].power_matrix", i)
		b, err := readBounded(d.PowerMatrix, maxMatrixBytes)
		if err != nil {
			return nil, fileErr(key, d.PowerMatrix, err)
		}
		if n := bytes.Count(b, []byte("\n")); n > maxMatrixRows {
			return nil, &Error{Key: key, Value: strconv.Quote(d.PowerMatrix), Why: fmt.Sprintf("%d rows; a power matrix may have at most %d rows", n, maxMatrixRows)}
		}
		for _, line := range bytes.Split(b, []byte("\n")) {
			if n := bytes.Count(line, []byte(",")) + 1; n > maxMatrixRows {
				return nil, &Error{Key: key, Value: strconv.Quote(d.PowerMatrix), Why: fmt.Sprintf("a row of %d cells; a power matrix may have at most %d per row", n, maxMatrixRows)}
			}
		}
		h := sha256.Sum256(b)
		named = append(named, NamedFile{Key: key, Path: d.PowerMatrix, SHA256: hex.EncodeToString(h[:]), data: b})
	}
	if s.Depth.Source == DepthBathymetry {
		key := "depth.bathymetry_file"
		sum, err := hashBounded(s.Depth.BathymetryFile, maxNamedFileBytes)
		if err != nil {
			return nil, fileErr(key, s.Depth.BathymetryFile, err)
		}
		named = append(named, NamedFile{Key: key, Path: s.Depth.BathymetryFile, SHA256: sum})
	}
	if v := s.Uncertainty.Validation; v != "" {
		// a finished validation: validate writes validation.json after its tables
		for _, f := range []string{"validation.json", "validation_pairs.parquet"} {
			p := filepath.Join(v, f)
			sum, err := hashBounded(p, maxNamedFileBytes)
			if err != nil {
				return nil, &Error{Key: "uncertainty.validation", Value: strconv.Quote(v), Why: fmt.Sprintf("holds no finished validation (%s: %v); run `swellgrid validate --run RUN_DIR --obs STATIONS` first and name its output directory, or remove the key", f, err)}
			}
			named = append(named, NamedFile{Key: "uncertainty.validation/" + f, Path: p, SHA256: sum})
		}
	}
	return named, nil
}

// openRegular opens path if it is a regular file of at most limit bytes
// (ingest.OpenRegular: a named pipe or device is refused without blocking).
func openRegular(path string, limit int64) (*os.File, error) {
	f, st, err := ingest.OpenRegular(path)
	if fe := (*ingest.FileError)(nil); errors.As(err, &fe) {
		return nil, errors.New(fe.Reason) // the caller names the key and the file
	} else if err != nil {
		return nil, err
	}
	if st.Size() > limit {
		f.Close()
		return nil, fmt.Errorf("is %d bytes; the limit is %d bytes", st.Size(), limit)
	}
	return f, nil
}

// readBounded reads a regular file of at most limit bytes (checked while
// reading too: the file may grow).
func readBounded(path string, limit int64) ([]byte, error) {
	f, err := openRegular(path, limit)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, fmt.Errorf("cannot be read: %w", err)
	}
	if int64(len(b)) > limit {
		return nil, fmt.Errorf("is over %d bytes, the limit", limit)
	}
	return b, nil
}

// hashBounded is the SHA-256 of a regular file of at most limit bytes.
func hashBounded(path string, limit int64) (string, error) {
	f, err := openRegular(path, limit)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, io.LimitReader(f, limit+1)); err != nil {
		return "", fmt.Errorf("cannot be read: %w", err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// namedData is the content read by Resolve of the file under key.
func (r *Resolved) namedData(key string) ([]byte, bool) {
	for _, n := range r.Named {
		if n.Key == key {
			return n.data, n.data != nil
		}
	}
	return nil, false
}

func increasing(key string, v []float64, lo, hi float64) error {
	if len(v) == 0 {
		return fmt.Errorf("spec: %s is empty", key)
	}
	for i, x := range v {
		if math.IsNaN(x) || x <= lo && lo != math.Inf(-1) || x > hi {
			return &Error{Key: key, Value: fmt.Sprint(v), Why: fmt.Sprintf("value %v is out of range (%v, %v]", x, lo, hi)}
		}
		if i > 0 && x <= v[i-1] {
			return &Error{Key: key, Value: fmt.Sprint(v), Why: "values must be strictly increasing"}
		}
	}
	return nil
}

// ParseSize parses a memory size such as "512MiB", "4GiB", "2GB" or "1500000000".
func ParseSize(s string) (int64, error) {
	t := strings.TrimSpace(strings.ToUpper(s))
	mult := int64(1)
	for _, u := range []struct {
		suf string
		m   int64
	}{{"KIB", 1 << 10}, {"MIB", 1 << 20}, {"GIB", 1 << 30}, {"TIB", 1 << 40}, {"KB", 1e3}, {"MB", 1e6}, {"GB", 1e9}, {"TB", 1e12}, {"K", 1 << 10}, {"M", 1 << 20}, {"G", 1 << 30}, {"B", 1}} {
		if strings.HasSuffix(t, u.suf) {
			t, mult = strings.TrimSpace(strings.TrimSuffix(t, u.suf)), u.m
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || v <= 0 {
		return 0, fmt.Errorf("not a memory size (e.g. 512MiB, 4GiB)")
	}
	n := int64(v * float64(mult))
	if n < 16<<20 {
		return 0, fmt.Errorf("at least 16MiB is needed")
	}
	return n, nil
}

// Fingerprint is a hash of everything in the spec that changes results (not
// the run settings nor the output directory), including the content of the
// files it names (power matrices, bathymetry, layers: by SHA-256, read by Resolve,
// whatever their path is spelled like): a checkpoint or an update is refused
// when it differs.
func (r *Resolved) Fingerprint() string {
	b, _ := json.Marshal(r.Fingerprinted())
	// Maps marshal with sorted keys, so the bytes are stable.
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// FingerprintedSpec is what Fingerprint hashes: the spec's result-changing
// settings and the named files' checksums by key.
type FingerprintedSpec struct {
	Spec  *Spec             `json:"spec"`
	Files map[string]string `json:"files,omitempty"`
}

// Fingerprinted is the spec part and named-file checksums that Fingerprint hashes.
func (r *Resolved) Fingerprinted() FingerprintedSpec {
	s := r.Spec
	c := *s
	c.Output = OutputSpec{}
	c.Input.Paths = nil // inputs are compared file by file (size, checksum)
	c.Run = RunSpec{}
	c.Sites = nil      // sites choose report pages, not results
	c.Validation = nil // validation reads the run, it changes none of its results
	c.Devices = append([]DeviceSpec(nil), s.Devices...)
	files := map[string]string{}
	for _, n := range r.Named {
		files[n.Key] = n.SHA256
	}
	for i := range c.Devices {
		if _, ok := files[fmt.Sprintf("device[%d].power_matrix", i)]; ok {
			c.Devices[i].PowerMatrix = "" // by content
		}
	}
	if _, ok := files["depth.bathymetry_file"]; ok {
		c.Depth.BathymetryFile = ""
	}
	if _, ok := files["uncertainty.validation/validation_pairs.parquet"]; ok {
		c.Uncertainty.Validation = "" // by content
	}
	if s.Screening != nil { // layers by content
		sc := *s.Screening
		sc.Layers = append([]ScreenLayerSpec(nil), sc.Layers...)
		for i := range sc.Layers {
			if _, ok := files[fmt.Sprintf("screening.layer[%d].file", i)]; ok {
				sc.Layers[i].File = ""
			}
		}
		c.Screening = &sc
	}
	return FingerprintedSpec{Spec: &c, Files: files}
}

// FingerprintJSON is what Fingerprint hashes, for a checkpoint's header, so
// that a refusal can name what changed.
func (r *Resolved) FingerprintJSON() json.RawMessage {
	b, _ := json.Marshal(r.Fingerprinted())
	return b
}

// keys returns a map's keys, sorted.
func keys[V any](m map[string]V) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

func checkSites(sites []SiteSpec) error {
	seen := map[string]bool{}
	for i, st := range sites {
		key := fmt.Sprintf("site[%d]", i)
		if strings.TrimSpace(st.Name) == "" {
			return fmt.Errorf("spec: %s.name is empty; give every [[site]] a name", key)
		}
		if seen[st.Name] {
			return fmt.Errorf("spec: %s.name = %q appears twice", key, ingest.ShortText(st.Name))
		}
		seen[st.Name] = true
		if !(st.Lat >= -90 && st.Lat <= 90) || math.IsNaN(st.Lon) || math.IsInf(st.Lon, 0) {
			return fmt.Errorf("spec: %s (%q): lon = %v, lat = %v is not a position (degrees east, degrees north)", key, ingest.ShortText(st.Name), st.Lon, st.Lat)
		}
	}
	names := make([]string, len(sites))
	for i, st := range sites {
		names[i] = st.Name
	}
	return CheckFileNames("site", names, func(i int) string { return fmt.Sprintf("spec: site[%d].name", i) }, atlasreport.SiteNameOverhead)
}
