package ingest

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"swellgrid/grid"
)

// Role is what a variable means to swellgrid.
type Role string

// The roles ingest looks for.
const (
	Spectrum2D Role = "spectrum2d"
	Spectrum1D Role = "spectrum1d"
	Hm0        Role = "hm0"
	Te         Role = "te"
	Tp         Role = "tp"
	Dir        Role = "dir"
	DirPeak    Role = "dir_peak"
	Depth      Role = "depth"
	Mask       Role = "mask"
)

// Roles lists every role in a fixed order.
var Roles = []Role{Spectrum2D, Spectrum1D, Hm0, Te, Tp, Dir, DirPeak, Depth}

// StandardNames are the CF standard names (CF standard name table) that
// identify each role. Directions "to" are converted to "from".
var StandardNames = map[Role][]string{
	Spectrum2D: {"sea_surface_wave_directional_variance_spectral_density"},
	Spectrum1D: {"sea_surface_wave_variance_spectral_density"},
	Hm0:        {"sea_surface_wave_significant_height"},
	Te:         {"sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment"},
	Tp:         {"sea_surface_wave_period_at_variance_spectral_density_maximum"},
	Dir:        {"sea_surface_wave_from_direction", "sea_surface_wave_to_direction"},
	DirPeak:    {"sea_surface_wave_from_direction_at_variance_spectral_density_maximum", "sea_surface_wave_to_direction_at_variance_spectral_density_maximum"},
	Depth:      {"sea_floor_depth_below_sea_surface"},
	Mask:       {"sea_binary_mask"},
}

var roleQuantity = map[Role]Quantity{
	Spectrum2D: Density2D, Spectrum1D: Density1D, Hm0: Length, Te: Period, Tp: Period,
	Dir: Angle, DirPeak: Angle, Depth: Length,
}

// Options say how to read a hindcast where discovery by standard_name is not
// enough.
type Options struct {
	Vars           map[Role]string // explicit role -> variable name; overrides discovery
	Units          map[Role]string // units to use instead of a variable's units attribute
	DepthConstant  float64         // > 0: the same depth everywhere, m
	DeepWater      bool            // assume deep water (no depth needed)
	BathymetryFile string          // a separate file holding the depth role
	DirectionTo    *bool           // spectral direction convention when the coordinate does not say
	AllowLongGaps  bool            // accept time gaps longer than the rest of the record
	// Ctx, if set, stops Open between files when it is cancelled (a signal).
	Ctx context.Context
}

// VarInfo describes how one role is stored and unpacked in one file.
type VarInfo struct {
	Role         Role      `json:"role"`
	Name         string    `json:"variable"`
	StandardName string    `json:"standard_name,omitempty"`
	Units        string    `json:"units"`
	Factor       float64   `json:"factor_to_si"`
	Type         string    `json:"type"`
	Packed       bool      `json:"packed"`
	Scale        float64   `json:"scale_factor"`
	Offset       float64   `json:"add_offset"`
	Fill         []float64 `json:"fill_values,omitempty"`
	ValidMin     float64   `json:"-"`
	ValidMax     float64   `json:"-"`
	DirTo        bool      `json:"direction_to,omitempty"`
	Dims         []string  `json:"dims"`
	axes         []axis
	v            *ncVar
}

// axis is the meaning of one dimension of a role variable.
type axis byte

const (
	axT axis = 't'
	axY axis = 'y'
	axX axis = 'x'
	axP axis = 'p'
	axF axis = 'f'
	axD axis = 'd'
)

// unpack turns one raw stored value into SI units, NaN when missing
// (CF Conventions 1.8, section 8.1 packing and 2.5.1 missing data: values equal
// to _FillValue or missing_value, or outside valid_min/valid_max, are missing;
// unpacked = raw * scale_factor + add_offset). A direction (roles dir and
// dir_peak) more than a turn outside 0-360 degrees, i.e. outside -360..720,
// is missing too (common practice: such a value is an error, not an unwrapped
// angle); directions within it are wrapped to 0-360 by the reader.
func (vi *VarInfo) unpack(raw float64) float64 {
	if raw != raw || raw < vi.ValidMin || raw > vi.ValidMax {
		return math.NaN()
	}
	for _, f := range vi.Fill {
		if raw == f {
			return math.NaN()
		}
	}
	x := (raw*vi.Scale + vi.Offset) * vi.Factor
	if (vi.Role == Dir || vi.Role == DirPeak) && !(x >= -360 && x <= 720) {
		// A direction more than a turn outside 0-360 degrees is not a
		// direction that was merely stored unwrapped; treat it as missing.
		return math.NaN()
	}
	return x
}

// FileInfo describes one input file.
type FileInfo struct {
	Path   string `json:"path"`
	Size   int64  `json:"size_bytes"`
	Format string `json:"format"`
	Steps  int    `json:"steps"`
	First  Stamp  `json:"-"`
	Last   Stamp  `json:"-"`
	From   string `json:"first_time"`
	To     string `json:"last_time"`
	// Offset is the index of the file's first step in the whole record.
	Offset int `json:"-"`

	vars  map[Role]*VarInfo
	times []Stamp

	timeUnits string    // the time variable's units attribute
	stamp     fileStamp // the file as the catalog saw it (identity.go)
	// xFile, yFile are this file's own orientation: the file index of each
	// canonical column and row (grid.Grid.XFile/YFile of the file's axes).
	xFile, yFile []int
}

// Gap is a stretch of missing time steps between two records.
type Gap struct {
	After   string `json:"after"`
	Before  string `json:"before"`
	Missing int    `json:"missing_steps"`
}

// Spectral is the frequency/direction layout of the spectra, in file order.
type Spectral struct {
	FreqHz []float64 `json:"frequency_hz"`
	DirDeg []float64 `json:"direction_from_deg,omitempty"` // nautical "from", degrees
	DirTo  bool      `json:"stored_as_to"`
}

// Catalog is everything known about a hindcast before its values are read.
type Catalog struct {
	Files       []FileInfo        `json:"files"`
	Calendar    Calendar          `json:"calendar"`
	Steps       int               `json:"steps"`
	StepSeconds int64             `json:"step_seconds"`
	Start, End  string            `json:"-"`
	Gaps        []Gap             `json:"gaps"`
	Grid        *grid.Grid        `json:"-"`
	Vars        map[Role]*VarInfo `json:"roles"`
	Spectral    *Spectral         `json:"spectral,omitempty"`
	Depth       []float64         `json:"-"` // per cell, m; NaN unknown; +Inf deep water
	DepthSource string            `json:"depth_source"`
	Masked      []bool            `json:"-"`
	Warnings    []string          `json:"warnings"`

	times   []Stamp
	gridDim map[string]axis // dimension name -> spatial axis
}

// Times returns the time of every step of the record, in order.
func (c *Catalog) Times() []Stamp { return c.times }

// Date converts a stamp to a date in the catalog's calendar.
func (c *Catalog) Date(s Stamp) Date { return DateOf(c.Calendar, s) }

// Expand turns a file, directory or glob (or several) into a sorted list of
// files. A directory contributes its *.nc, *.nc4 and *.cdf files.
func Expand(inputs []string) ([]string, error) {
	var out []string
	for _, in := range inputs {
		st, err := os.Stat(in)
		switch {
		case err == nil && st.IsDir():
			for _, pat := range []string{"*.nc", "*.nc4", "*.cdf"} {
				m, _ := filepath.Glob(filepath.Join(globEscape(in), pat)) // the directory's name literally
				out = append(out, m...)
			}
		case err == nil:
			out = append(out, in)
		case strings.ContainsAny(in, "*?["):
			m, gerr := filepath.Glob(in)
			if gerr != nil {
				return nil, fmt.Errorf("ingest: input pattern %q: %v", in, gerr)
			}
			out = append(out, m...)
		default:
			return nil, fmt.Errorf("ingest: input %q: %v", in, err)
		}
	}
	sort.Strings(out)
	uniq := out[:0]
	for i, p := range out {
		if i == 0 || p != out[i-1] {
			uniq = append(uniq, p)
		}
	}
	if len(uniq) == 0 {
		return nil, fmt.Errorf("ingest: no NetCDF files found in %v (a directory contributes its .nc, .nc4 and .cdf files)", inputs)
	}
	return uniq, nil
}

// Open builds the catalog of a hindcast from files, directories or globs.
func Open(inputs []string, opt Options) (*Catalog, error) {
	paths, err := Expand(inputs)
	if err != nil {
		return nil, err
	}
	ncMu.Lock()
	defer ncMu.Unlock()
	defer ncThread()()
	c := &Catalog{Vars: map[Role]*VarInfo{}}
	var first *scan
	for _, p := range paths {
		if opt.Ctx != nil && opt.Ctx.Err() != nil {
			return nil, opt.Ctx.Err()
		}
		s, err := scanFile(p, opt)
		if err != nil {
			return nil, err
		}
		if first == nil {
			first = s
			c.Calendar = s.cal
			c.Grid = s.grid
			c.gridDim = s.gridDim
			c.Spectral = s.spectral
			for r, vi := range s.info.vars {
				c.Vars[r] = vi
			}
		} else {
			if err := first.compatible(s); err != nil {
				return nil, err
			}
		}
		c.Files = append(c.Files, s.info)
		c.Warnings = append(c.Warnings, s.warnings...)
	}
	sort.SliceStable(c.Files, func(i, j int) bool { return c.Files[i].First < c.Files[j].First })
	if err := c.buildTimeAxis(); err != nil {
		return nil, err
	}
	if err := c.checkLongGaps(opt.AllowLongGaps); err != nil {
		return nil, err
	}
	if err := c.resolveDepth(first, opt); err != nil {
		return nil, err
	}
	c.Masked = make([]bool, c.Grid.NCells())
	for i, d := range c.Depth {
		if d <= 0 || math.IsNaN(d) && c.DepthSource != "none" {
			c.Masked[i] = true
		}
	}
	for i := range c.Grid.Lon {
		if math.IsNaN(c.Grid.Lon[i]) || math.IsNaN(c.Grid.Lat[i]) {
			c.Masked[i] = true
		}
	}
	if err := c.readMask(first); err != nil {
		return nil, err
	}
	sea := 0
	for _, m := range c.Masked {
		if !m {
			sea++
		}
	}
	if sea == 0 {
		return nil, fmt.Errorf("ingest: every cell of the grid is land or unknown: depth from %s is <= 0 m or missing in every cell (or no cell has finite coordinates); check the depth's sign convention (positive down, standard_name sea_floor_depth_below_sea_surface) or set depth.source in the spec", c.DepthSource)
	}
	return c, nil
}

// buildTimeAxis checks that files follow each other in time and records gaps.
func (c *Catalog) buildTimeAxis() error {
	for i := range c.Files {
		f := &c.Files[i]
		if i > 0 {
			p := &c.Files[i-1]
			if f.First <= p.Last {
				what := "overlap in time"
				if f.First == p.First {
					what = "start at the same time"
				}
				return fmt.Errorf("ingest: %s and %s %s (%s .. %s vs %s .. %s); remove the duplicate or overlapping file from the input", p.Path, f.Path, what, p.From, p.To, f.From, f.To)
			}
		}
		f.Offset = len(c.times)
		c.times = append(c.times, f.times...)
	}
	c.Steps = len(c.times)
	if c.Steps == 0 {
		return fmt.Errorf("ingest: the input files hold no time steps")
	}
	c.Start, c.End = c.Date(c.times[0]).String(), c.Date(c.times[c.Steps-1]).String()
	// Nominal step: the most common difference (ties: the smallest).
	count := map[int64]int{}
	for i := 1; i < len(c.times); i++ {
		count[int64(c.times[i]-c.times[i-1])]++
	}
	best, bestN := int64(0), -1
	for d, n := range count {
		if n > bestN || n == bestN && d < best {
			best, bestN = d, n
		}
	}
	c.StepSeconds = best
	if best == 0 && c.Steps > 1 {
		return fmt.Errorf("ingest: cannot determine the time step")
	}
	irregular := 0
	for i := 1; i < len(c.times) && best > 0; i++ {
		d := int64(c.times[i] - c.times[i-1])
		if d > best {
			c.Gaps = append(c.Gaps, Gap{After: c.Date(c.times[i-1]).String(), Before: c.Date(c.times[i]).String(), Missing: int((d+best/2)/best) - 1})
		}
		if d%best != 0 {
			irregular++
		}
	}
	if irregular > 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d time steps are not a whole multiple of the nominal step of %d s", irregular, best))
	}
	if len(c.Gaps) > 0 {
		miss := 0
		for _, g := range c.Gaps {
			miss += g.Missing
		}
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d gaps in the time axis, %d missing steps in all", len(c.Gaps), miss))
	}
	return nil
}

func (c *Catalog) resolveDepth(first *scan, opt Options) error {
	n := c.Grid.NCells()
	c.Depth = make([]float64, n)
	fill := func(v float64) {
		for i := range c.Depth {
			c.Depth[i] = v
		}
	}
	switch {
	case opt.DeepWater:
		fill(math.Inf(1))
		c.DepthSource = "deep-water assumption (given)"
		return nil
	case opt.DepthConstant > 0:
		fill(opt.DepthConstant)
		c.DepthSource = fmt.Sprintf("constant %g m (given)", opt.DepthConstant)
		return nil
	case opt.DepthConstant < 0 || math.IsNaN(opt.DepthConstant):
		return fmt.Errorf("ingest: depth constant %v m is not a depth; give a positive depth in metres or choose the deep-water assumption", opt.DepthConstant)
	case opt.BathymetryFile != "":
		if _, _, err := checkMagic(opt.BathymetryFile); err != nil {
			return err
		}
		s, err := scanStatic(opt.BathymetryFile, opt)
		if err != nil {
			return err
		}
		if ok, why := c.Grid.Same(s.grid); !ok {
			return fmt.Errorf("ingest: bathymetry %s: its grid differs from the hindcast's (%s); regrid the bathymetry to the hindcast grid", opt.BathymetryFile, why)
		}
		vi := s.info.vars[Depth]
		if vi == nil {
			return fmt.Errorf("ingest: bathymetry %s: no variable with standard_name %q; set depth variable in the spec", opt.BathymetryFile, StandardNames[Depth][0])
		}
		if err := s.readStatic(vi, c.Depth); err != nil {
			return err
		}
		s.f.close()
		c.DepthSource = "bathymetry file " + opt.BathymetryFile + " variable " + vi.Name
	default:
		vi := first.info.vars[Depth]
		if vi == nil {
			fill(math.NaN())
			c.DepthSource = "none"
			c.Warnings = append(c.Warnings, "no depth: no variable with standard_name sea_floor_depth_below_sea_surface; give a bathymetry file, a constant depth or the deep-water assumption")
			return nil
		}
		if err := c.readStaticField(first.info.Path, vi, c.Depth); err != nil {
			return err
		}
		c.DepthSource = "variable " + vi.Name + " in " + first.info.Path
	}
	bad := 0
	for _, d := range c.Depth {
		if !math.IsNaN(d) && d <= 0 {
			bad++
		}
	}
	if bad > 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d cells have depth <= 0 m and are treated as land", bad))
	}
	return nil
}

// readMask applies a sea_binary_mask variable of the first file (CF standard
// name table: 1 = sea, 0 = land) to the cell mask.
func (c *Catalog) readMask(first *scan) error {
	vi := first.info.vars[Mask]
	if vi == nil {
		return nil
	}
	m := make([]float64, c.Grid.NCells())
	if err := c.readStaticField(first.info.Path, vi, m); err != nil {
		return err
	}
	land := 0
	for i, x := range m {
		if !(x > 0.5) {
			if !c.Masked[i] {
				land++
			}
			c.Masked[i] = true
		}
	}
	if land > 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d cells masked as land by %s", land, vi.Name))
	}
	return nil
}

// readStaticField reads a field without a time dimension (depth, mask) of the
// file at path into dst, in canonical cell order.
func (c *Catalog) readStaticField(path string, vi *VarInfo, dst []float64) error {
	f, err := openNC(path)
	if err != nil {
		return err
	}
	defer f.close()
	vi.v = f.find(vi.Name)
	defer func() { vi.v = nil }()
	if vi.v == nil {
		return errf(path, vi.Name, "variable disappeared since the file was scanned")
	}
	s := &scan{f: f, grid: c.Grid, gridDim: c.gridDim}
	return s.readStatic(vi, dst)
}
