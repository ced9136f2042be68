package pipelines

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"
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
	Devices    []DeviceSpec      `toml:"device" json:"devices"`
	Contours   ContourSpec       `toml:"contours" json:"contours"`
	Output     OutputSpec        `toml:"output" json:"output"`
	Run        RunSpec           `toml:"run" json:"run"`

	dir string // directory of the spec file: relative paths are relative to it
}

// InputSpec names the hindcast.
type InputSpec struct {
	Paths []string `toml:"paths" json:"paths"` // files, directories or globs
	// DirectionConvention of spectral direction coordinates without a
	// standard_name: "from" or "to" ("" = refuse such files).
	DirectionConvention string `toml:"direction_convention" json:"direction_convention"`
	// AllowLongGaps accepts a time gap longer than the rest of the record
	// (refused by default: usually a mistyped reference date).
	AllowLongGaps bool `toml:"allow_long_gaps" json:"allow_long_gaps,omitempty"`
}

// DepthSpec says where the water depth comes from.
type DepthSpec struct {
	// Source: "file" (a variable with standard_name
	// sea_floor_depth_below_sea_surface in the hindcast), "constant",
	// "bathymetry" (a separate file) or "deep-water".
	Source         string  `toml:"source" json:"source"`
	ConstantM      float64 `toml:"constant_m" json:"constant_m"`
	BathymetryFile string  `toml:"bathymetry_file" json:"bathymetry_file"`
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
}

// ExtremesSpec holds the extreme-value settings.
type ExtremesSpec struct {
	ReturnPeriodsY    []float64 `toml:"return_periods_y" json:"return_periods_y"`
	YearStartMonth    int       `toml:"year_start_month" json:"year_start_month"`
	SeparationH       float64   `toml:"separation_h" json:"separation_h"`
	ThresholdRule     string    `toml:"threshold_rule" json:"threshold_rule"` // "quantile" or "peaks_per_year"
	ThresholdQuantile float64   `toml:"threshold_quantile" json:"threshold_quantile"`
	PeaksPerYear      float64   `toml:"peaks_per_year" json:"peaks_per_year"`
	MinYears          int       `toml:"min_years" json:"min_years"`
	Bootstrap         int       `toml:"bootstrap" json:"bootstrap"`
	Seed              uint64    `toml:"seed" json:"seed"`
}

// DeviceSpec names a device power matrix.
type DeviceSpec struct {
	Name        string `toml:"name" json:"name"`
	PowerMatrix string `toml:"power_matrix" json:"power_matrix"`
	Lookup      string `toml:"lookup" json:"lookup"` // "bin" or "bilinear"
}

// ContourSpec chooses the contour layers.
type ContourSpec struct {
	Columns []string             `toml:"columns" json:"columns"`
	Levels  map[string][]float64 `toml:"levels" json:"levels"`
}

// OutputSpec names the run directory.
type OutputSpec struct {
	Dir string `toml:"dir" json:"dir"`
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

// DefaultSpec is the spec of the common case.
func DefaultSpec() *Spec {
	return &Spec{
		Roles: map[string]string{}, Units: map[string]string{},
		Depth:   DepthSpec{Source: "file"},
		Physics: PhysicsSpec{Rho: 1025, G: 9.81, TeOverTp: 0.9},
		Statistics: StatisticsSpec{Hm0BinM: 0.05, Percentiles: []float64{10, 50, 90, 99}, ScatterHm0BinM: 0.5, ScatterTeBinS: 1,
			WindowLimitsM: []float64{1.5, 2.0, 2.5}, WindowDurationsH: []float64{6, 12, 24, 48}, CoverageMin: 0.8},
		Extremes: ExtremesSpec{ReturnPeriodsY: []float64{1, 5, 10, 25, 50, 100}, YearStartMonth: 1, SeparationH: 48,
			ThresholdRule: "quantile", ThresholdQuantile: 0.99, PeaksPerYear: 5, MinYears: 10, Seed: 1},
		Contours: ContourSpec{Columns: []string{"power_mean_kw_m", "hm0_mean_m", "hm0_rl100y_m"}, Levels: map[string][]float64{}},
		Output:   OutputSpec{Dir: "swellgrid-out"},
		Run:      RunSpec{MemoryLimit: "2GiB", BlockSteps: 64, CheckpointEveryS: 60},
	}
}

// LoadSpec reads a TOML spec over the defaults. Unknown keys are refused.
func LoadSpec(path string) (*Spec, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("spec: %v", err)
	}
	return ParseSpec(raw, path)
}

// ParseSpec reads a TOML spec from data over the defaults; path names it in
// messages and its directory anchors relative paths. Unknown keys are refused.
func ParseSpec(data []byte, path string) (*Spec, error) {
	s := DefaultSpec()
	md, err := toml.Decode(string(data), s)
	if err != nil {
		return nil, fmt.Errorf("spec %s: %v", path, err)
	}
	if und := md.Undecoded(); len(und) > 0 {
		keys := make([]string, len(und))
		for i, k := range und {
			keys[i] = k.String()
		}
		return nil, fmt.Errorf("spec %s: unknown key %s; see the README's run spec section for the keys", path, strings.Join(keys, ", "))
	}
	s.dir = filepath.Dir(path)
	for i, p := range s.Input.Paths {
		s.Input.Paths[i] = s.resolve(p)
	}
	for i := range s.Devices {
		s.Devices[i].PowerMatrix = s.resolve(s.Devices[i].PowerMatrix)
	}
	if s.Depth.BathymetryFile != "" {
		s.Depth.BathymetryFile = s.resolve(s.Depth.BathymetryFile)
	}
	return s, nil
}

func (s *Spec) resolve(p string) string {
	if p == "" || filepath.IsAbs(p) || s.dir == "" {
		return p
	}
	return filepath.Join(s.dir, p)
}

// Validate refuses values that make no sense, naming the key.
func (s *Spec) Validate() error {
	bad := func(key, why string, v any) error {
		return fmt.Errorf("spec: %s = %v: %s", key, v, why)
	}
	if len(s.Input.Paths) == 0 {
		return fmt.Errorf("spec: no input: give input.paths in the spec or --input")
	}
	switch s.Depth.Source {
	case "file", "deep-water":
	case "constant":
		if !(s.Depth.ConstantM > 0) || math.IsInf(s.Depth.ConstantM, 0) {
			return bad("depth.constant_m", "must be a positive depth in metres", s.Depth.ConstantM)
		}
	case "bathymetry":
		if s.Depth.BathymetryFile == "" {
			return bad("depth.bathymetry_file", "must name a NetCDF file when depth.source = \"bathymetry\"", `""`)
		}
	default:
		return bad("depth.source", `must be "file", "constant", "bathymetry" or "deep-water"`, strconv.Quote(s.Depth.Source))
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
	case "quantile":
		if !(ex.ThresholdQuantile > 0.5 && ex.ThresholdQuantile < 1) {
			return bad("extremes.threshold_quantile", "must lie in (0.5, 1)", ex.ThresholdQuantile)
		}
	case "peaks_per_year":
		if !(ex.PeaksPerYear > 0 && ex.PeaksPerYear <= 50) {
			return bad("extremes.peaks_per_year", "must lie in (0, 50]", ex.PeaksPerYear)
		}
	default:
		return bad("extremes.threshold_rule", `must be "quantile" or "peaks_per_year"`, strconv.Quote(ex.ThresholdRule))
	}
	if ex.MinYears < 2 {
		return bad("extremes.min_years", "must be at least 2", ex.MinYears)
	}
	if ex.Bootstrap < 0 || ex.Bootstrap > 10000 {
		return bad("extremes.bootstrap", "must lie in 0..10000", ex.Bootstrap)
	}
	names := map[string]bool{}
	for i, d := range s.Devices {
		key := fmt.Sprintf("device[%d]", i)
		if d.Name == "" || strings.ContainsAny(d.Name, " /\\.\"") {
			return bad(key+".name", "must be a short name without spaces, dots or slashes (it names columns)", strconv.Quote(d.Name))
		}
		if names[d.Name] {
			return bad(key+".name", "appears twice", d.Name)
		}
		names[d.Name] = true
		if _, err := os.Stat(d.PowerMatrix); err != nil {
			return bad(key+".power_matrix", "cannot be read: "+err.Error(), strconv.Quote(d.PowerMatrix))
		}
		if d.Lookup != "" && d.Lookup != "bin" && d.Lookup != "bilinear" {
			return bad(key+".lookup", `must be "bin" or "bilinear"`, strconv.Quote(d.Lookup))
		}
	}
	for col, lv := range s.Contours.Levels {
		if err := increasing("contours.levels."+col, lv, math.Inf(-1), math.Inf(1)); err != nil {
			return err
		}
	}
	if s.Output.Dir == "" {
		return fmt.Errorf("spec: output.dir is empty; give --out or output.dir")
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
	return nil
}

func increasing(key string, v []float64, lo, hi float64) error {
	if len(v) == 0 {
		return fmt.Errorf("spec: %s is empty", key)
	}
	for i, x := range v {
		if math.IsNaN(x) || x <= lo && lo != math.Inf(-1) || x > hi {
			return fmt.Errorf("spec: %s = %v: value %v is out of range (%v, %v]", key, v, x, lo, hi)
		}
		if i > 0 && x <= v[i-1] {
			return fmt.Errorf("spec: %s = %v: values must be strictly increasing", key, v)
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
// the run settings nor the output directory): a checkpoint or an update is
// refused when it differs.
func (s *Spec) Fingerprint() string {
	c := *s
	c.Output = OutputSpec{}
	c.Input.Paths = nil // inputs are compared file by file (size, checksum)
	c.Run = RunSpec{}
	b, _ := json.Marshal(&c)
	// Maps marshal with sorted keys, so the bytes are stable.
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
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

var _ = bytes.Compare
