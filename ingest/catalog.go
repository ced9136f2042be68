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
	AllowLongGaps  bool            // accept time gaps longer than the rest of the record
	// Duplicates says which file's values a time held by two files of a
	// role takes (spec key input.duplicate_steps).
	Duplicates DuplicatePolicy
	// DirConvention is the spec's convention of spectral direction
	// coordinates ("" none): it settles attributes that say nothing or
	// disagree, and must agree with those that agree unless DirForce.
	DirConvention DirConvention
	DirForce      bool
	// Encoding and Basis are the spec's statements of a spectral density's
	// encoding (linear, log10, ln) and frequency basis (per Hz, per rad/s).
	Encoding map[Role]Encoding
	Basis    map[Role]DensityBasis
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
	PositiveUp   bool      `json:"positive_up,omitempty"` // depth stored as a height (positive = "up")
	Dims         []string  `json:"dims"`
	// ChunkBytes is the size of one chunk decompressed (0: not chunked)
	// and Filtered says the chunks are compressed or shuffled (chunkBytes).
	ChunkBytes int64 `json:"-"`
	Filtered   bool  `json:"-"`
	chunks     []int // the chunk's extent along each dimension (nil: not chunked)
	axes       []axis
	v          *ncVar
	// Encoding is how a spectral density's values are stored (linear,
	// log10, ln); unpack decodes them before the unit factor.
	Encoding Encoding `json:"encoding,omitempty"`
	// longName and comment are the variable's attributes, for messages.
	longName, comment string
	unitsFromSpec     bool // Units come from the spec's [units]
	logStored         bool // Encoding is Log10 or Ln (unpack's test, per value)
}

// Static reports whether the variable has no time dimension.
func (vi *VarInfo) Static() bool {
	for _, a := range vi.axes {
		if a == axT {
			return false
		}
	}
	return true
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
// unpacked = raw * scale_factor + add_offset), decoded when the values are
// logarithms (Encoding.decode) and converted by Factor. A direction (roles dir and
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
	x := raw*vi.Scale + vi.Offset
	if vi.logStored {
		x = vi.Encoding.decode(x) // a logarithm stored: the density is 10^x or e^x
	}
	x *= vi.Factor
	if (vi.Role == Dir || vi.Role == DirPeak) && !(x >= -360 && x <= 720) && x == x {
		// A direction more than a turn outside 0-360 degrees (or infinite)
		// is not a direction that was merely stored unwrapped: a value
		// present but unusable, passed on as +Inf so that the state counts
		// it (climate.ScreenStep) instead of taking it for a missing one.
		return math.Inf(1)
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
	// Roles are the roles the file carries, in the order of Roles.
	Roles []Role `json:"roles"`
	// Static is true for a file holding only fields without time (depth,
	// mask); it has no steps.
	Static bool `json:"static,omitempty"`
	// Offset is the index of the file's first step in the whole record.
	// Files are in order of Offset, and file i is read as the record's
	// steps Offset(i) .. Offset(i+1)-1, every role from the file of that
	// role holding them (Read); a file starting at the same step as the
	// next has none of its own.
	Offset int `json:"-"`

	vars  map[Role]*VarInfo
	times []Stamp
	uidx  []int // index in the record of each of the file's steps read (file steps lead..keep-1)
	// lead and keep bound the file's steps that are read, lead..keep-1: the
	// steps before lead and from keep on are shared with the neighbouring
	// file of a role, which gives their values (Catalog.Duplicates).
	lead, keep int
	axes       int       // index of the file's spectral axes in Catalog.SpectralAxes (files with spectra)
	timeUnits  string    // the time variable's units attribute
	stamp      fileStamp // the file as the catalog saw it (identity.go)
	// xFile, yFile are this file's own orientation: the file index of each
	// canonical column and row (grid.Grid.XFile/YFile of the file's axes).
	xFile, yFile []int
}

// Gap is time that no step of the record covers (between two of its times:
// First is where the uncovered time begins, Hours its length; see
// timeaxis.go for the rule that tells a gap from a longer step), or (with
// Role) steps of the record that no file of one role holds (First and Last
// are the first and last of them, Missing their number, Hours the time they
// stand for).
type Gap struct {
	Role    string  `json:"role,omitempty"`
	After   string  `json:"after,omitempty"`  // the last time before the gap ("" at the start)
	Before  string  `json:"before,omitempty"` // the first time after it ("" at the end)
	First   string  `json:"first_missing,omitempty"`
	Last    string  `json:"last_missing,omitempty"`
	Missing int     `json:"missing_steps,omitempty"`
	Hours   float64 `json:"missing_hours"`
}

// Spectral is the frequency/direction layout of the spectra, in file order.
type Spectral struct {
	FreqHz []float64 `json:"frequency_hz"`
	DirDeg []float64 `json:"direction_from_deg,omitempty"` // nautical "from", degrees
	DirTo  bool      `json:"stored_as_to"`
	// DirConvention is the convention the direction coordinate was stored
	// in (converted to nautical from in DirDeg).
	DirConvention DirConvention `json:"stored_convention,omitempty"`
}

// Catalog is everything known about a hindcast before its values are read.
type Catalog struct {
	Files    []FileInfo `json:"files"`
	Calendar Calendar   `json:"calendar"`
	Steps    int        `json:"steps"`
	// StepSeconds is the most common step (ties: the shortest); each step's
	// own duration is StepHours(i), and Segments lists where it changes.
	StepSeconds int64       `json:"step_seconds"`
	Segments    []Segment   `json:"time_segments"`
	Start, End  string      `json:"-"`
	Gaps        []Gap       `json:"gaps"`
	Duplicates  []Duplicate `json:"duplicate_steps,omitempty"`
	Grid        *grid.Grid  `json:"-"`
	// Mapping is the CF grid mapping of a projected or rotated native grid
	// (gridmapping.go; nil on a longitude/latitude grid, a point set or a mesh).
	Mapping *GridMapping      `json:"grid_mapping,omitempty"`
	Vars    map[Role]*VarInfo `json:"roles"`
	// Spectral is the spectral axes of the first file with spectra, and
	// SpectralAxes every distinct set of them, in order of first use (the
	// first is Spectral); AxisSegments lists the record's stretches on one
	// set when there is more than one (spectralaxes.go).
	Spectral     *Spectral     `json:"spectral,omitempty"`
	SpectralAxes []*Spectral   `json:"-"`
	AxisSegments []AxisSegment `json:"spectral_axis_segments,omitempty"`
	RoleGaps     []Gap         `json:"role_gaps,omitempty"`
	Depth        []float64     `json:"-"` // per cell, m; NaN unknown; +Inf deep water
	DepthSource  string        `json:"depth_source"`
	// Readings say how each file's spectral conventions were read.
	Readings []Reading `json:"spectral_readings,omitempty"`
	// DepthVaries is true when depth varies in time: the reader then gives
	// each step's depth as Block.Bulk[Depth], and Depth holds the first step.
	DepthVaries bool     `json:"depth_varies,omitempty"`
	Masked      []bool   `json:"-"`
	Warnings    []string `json:"warnings"`
	// Names are the station names of a point set (cf_role =
	// "timeseries_id"), per cell; nil when the files give none.
	Names []string `json:"-"`

	times     []Stamp
	dur       []int64         // seconds each step stands for (timeaxis.go)
	gapAfter  []bool          // time no step covers follows the step
	gridDim   map[string]axis // dimension name -> spatial axis
	roleFiles map[Role][]int  // role varying in time -> indices of the files holding it, in time order
}

// FilteredChunks gives, per role varying in time, the largest filtered
// (compressed or shuffled) chunk of its variable over all files, in bytes
// decompressed; a role whose chunks are unfiltered, or that is not chunked,
// is absent. HDF5 decompresses such a chunk whole to read any part of it.
func (c *Catalog) FilteredChunks() map[Role]int64 {
	out := map[Role]int64{}
	for _, f := range c.Files {
		for r, vi := range f.vars {
			if vi.Filtered && !vi.Static() && vi.ChunkBytes > out[r] {
				out[r] = vi.ChunkBytes
			}
		}
	}
	return out
}

// RowChunks gives the largest chunk extent along the grid's rows (the y
// axis of a structured grid, the point axis of a point set or mesh) over the
// time-varying role variables of every file, with one variable of that
// extent, the name of its rows' dimension, its file and its chunk shape by
// dimension ("time/1,lat/100,lon/100"); rows is 0 when no such variable is
// chunked. A shard reading rows r0..r1-1 decompresses the chunks that cover
// them whole.
func (c *Catalog) RowChunks() (rows int, dim, name, file, shape string) {
	for _, f := range c.Files {
		for _, r := range Roles { // in a fixed order: the first of the largest
			vi := f.vars[r]
			if vi == nil || vi.Static() || vi.chunks == nil {
				continue
			}
			for k, a := range vi.axes {
				if (a == axY || a == axP) && k < len(vi.chunks) && vi.chunks[k] > rows {
					parts := make([]string, len(vi.Dims))
					for d := range vi.Dims {
						parts[d] = fmt.Sprintf("%s/%d", vi.Dims[d], vi.chunks[d])
					}
					rows, dim, name, file, shape = vi.chunks[k], vi.Dims[k], vi.Name, f.Path, strings.Join(parts, ",")
				}
			}
		}
	}
	return rows, dim, name, file, shape
}

// Times returns the time of every step of the record, in order.
func (c *Catalog) Times() []Stamp { return c.times }

// Date converts a stamp to a date in the catalog's calendar.
func (c *Catalog) Date(s Stamp) Date { return DateOf(c.Calendar, s) }

// Expand turns a file, directory or glob (or several) into a sorted list of
// files. A directory contributes its *.nc, *.nc4 and *.cdf files.
func Expand(inputs []string) ([]string, error) {
	return expand(inputs, []string{"*.nc", "*.nc4", "*.cdf"}, "input",
		"no NetCDF files found in %v (a directory contributes its .nc, .nc4 and .cdf files)")
}

// expand is Expand and ExpandObservations: an existing path is taken
// literally before it is tried as a glob, a directory contributes the files
// matching pats, and the result is sorted without duplicates. what names the
// kind of input in errors; none is the message (with %v for the inputs) when
// nothing is found.
func expand(inputs, pats []string, what, none string) ([]string, error) {
	var out []string
	for _, in := range inputs {
		st, err := os.Stat(in)
		switch {
		case err == nil && st.IsDir():
			for _, pat := range pats {
				m, _ := filepath.Glob(filepath.Join(globEscape(in), pat)) // the directory's name literally
				out = append(out, m...)
			}
		case err == nil:
			out = append(out, in)
		case strings.ContainsAny(in, "*?["):
			m, gerr := filepath.Glob(in)
			if gerr != nil {
				return nil, fmt.Errorf("ingest: %s pattern %q: %w", what, in, gerr)
			}
			out = append(out, m...)
		default:
			return nil, fmt.Errorf("ingest: %s %q: %w", what, in, err)
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
		return nil, fmt.Errorf("ingest: "+none, inputs)
	}
	return uniq, nil
}

// Open builds the catalog of a hindcast from files, directories or globs.
//
// Files are grouped by the roles they carry: a set may hold every role in
// each file, one variable per file (hs_2001-01.nc, tp_2001-01.nc, ...), or
// anything between, and a static field (depth, mask) may sit in a file of
// its own. Each role's files must tile the record without overlap; the
// record's time axis is the union of every file's times, and a step where a
// role has no file is missing for that role (a per-role gap).
func Open(inputs []string, opt Options) (*Catalog, error) {
	c, err := openLocked(inputs, opt)
	if err != nil {
		return nil, err
	}
	if err := c.checkDuplicates(opt.Duplicates); err != nil {
		return nil, err
	}
	return c, nil
}

// openLocked is Open but for the comparison of duplicate steps, with ncMu
// held throughout.
func openLocked(inputs []string, opt Options) (*Catalog, error) {
	paths, err := Expand(inputs)
	if err != nil {
		return nil, err
	}
	ncMu.Lock()
	defer ncMu.Unlock()
	defer ncThread()()
	c := &Catalog{Vars: map[Role]*VarInfo{}}
	var scans []*scan
	for _, p := range paths {
		if opt.Ctx != nil && opt.Ctx.Err() != nil {
			return nil, opt.Ctx.Err()
		}
		s, err := scanFile(p, opt)
		if err != nil {
			return nil, err
		}
		scans = append(scans, s)
	}
	// Static-only files first, then by first time, then by path.
	sort.SliceStable(scans, func(i, j int) bool {
		a, b := &scans[i].info, &scans[j].info
		if a.Static != b.Static {
			return a.Static
		}
		return a.First < b.First
	})
	first := scans[0]
	c.Calendar, c.Grid, c.gridDim, c.Mapping = first.cal, first.grid, first.gridDim, first.mapping
	var w warnings
	for _, s := range scans {
		if err := c.compatible(first, s); err != nil {
			return nil, err
		}
		c.Readings = addReadings(c.Readings, s.info.Path, s.readings)
		if s.spectral != nil {
			c.addAxes(s) // each file keeps its own axes (spectralaxes.go)
		}
		for _, r := range s.info.Roles {
			vi := s.info.vars[r]
			if a := c.Vars[r]; a == nil {
				c.Vars[r] = vi
			} else if a.Packed != vi.Packed || a.Scale != vi.Scale || a.Offset != vi.Offset {
				w.add("packing", vi.Name, s.info.Path, fmt.Sprintf("scale %.6g offset %.6g", vi.Scale, vi.Offset), vi.Scale,
					fmt.Sprintf("is packed differently from %s (each file is unpacked with its own attributes)", filepath.Base(c.fileOf(r))))
			}
		}
		c.Files = append(c.Files, s.info)
		if c.Names == nil && s.names != nil {
			c.Names = s.names
		}
		for _, m := range s.warnings {
			w.plain(m)
		}
	}
	for r, name := range opt.Vars {
		if name != "" && c.Vars[r] == nil {
			return nil, fmt.Errorf("ingest: variable %q is named for role %s in the spec but is in none of the %d input files (e.g. %s); fix the name in the spec's [roles] table", name, r, len(c.Files), c.Files[0].Path)
		}
	}
	if err := c.checkRoles(scans); err != nil {
		return nil, err
	}
	if err := c.buildTimeAxis(opt.Duplicates); err != nil {
		return nil, err
	}
	if err := c.checkLongGaps(opt.AllowLongGaps); err != nil {
		return nil, err
	}
	c.axisSegments()
	if err := c.resolveDepth(scans, opt); err != nil {
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
	if err := c.readMask(scans); err != nil {
		return nil, err
	}
	c.Warnings = append(w.lines(), c.Warnings...)
	sea := 0
	for _, m := range c.Masked {
		if !m {
			sea++
		}
	}
	if sea == 0 {
		return nil, fmt.Errorf("ingest: every cell of the grid is land or unknown: depth from %s is <= 0 m or missing in every cell (or no cell has finite coordinates); check the depth's sign convention (positive down, standard_name sea_floor_depth_below_sea_surface, or a height with positive = \"up\") or set depth.source in the spec", c.DepthSource)
	}
	return c, nil
}

// fileOf is the path of the first file holding role r (so far).
func (c *Catalog) fileOf(r Role) string {
	for i := range c.Files {
		if c.Files[i].vars[r] != nil {
			return c.Files[i].Path
		}
	}
	return ""
}

// compatible checks that a file has the grid and calendar of the first.
func (c *Catalog) compatible(a, b *scan) error {
	if a == b {
		return nil
	}
	if a.cal != b.cal && !b.info.Static {
		if a.info.Static {
			a.cal = b.cal
			c.Calendar = b.cal
		} else {
			return fmt.Errorf("ingest: %s uses the %s calendar but %s uses %s; all files of a hindcast must share one calendar", a.info.Path, a.cal, b.info.Path, b.cal)
		}
	}
	if ok, why := a.grid.Same(b.grid); !ok {
		return fmt.Errorf("ingest: %s and %s have different grids (%s); give only files of one grid", a.info.Path, b.info.Path, why)
	}
	return nil
}

// checkRoles refuses a set without the roles a run needs and records, for
// every role that varies in time, the files that carry it.
func (c *Catalog) checkRoles(scans []*scan) error {
	if c.Vars[Spectrum2D] == nil && c.Vars[Spectrum1D] == nil && c.Vars[Hm0] == nil {
		return &NoRoleError{Path: scans[0].info.Path, Vars: allDataVars(scans), Err: fmt.Errorf("ingest: %s: no variable for the wave height or spectrum roles (standard_name %s, %s or %s) in any of the %d input files; name the variable in the spec's [roles] table if it lacks a standard_name",
			filesWord(c.Files), StandardNames[Spectrum2D][0], StandardNames[Spectrum1D][0], StandardNames[Hm0][0], len(c.Files))}
	}
	if c.Vars[Spectrum2D] == nil && c.Vars[Spectrum1D] == nil && c.Vars[Te] == nil && c.Vars[Tp] == nil {
		return &NoRoleError{Path: scans[0].info.Path, Vars: allDataVars(scans), Err: fmt.Errorf("ingest: %s: bulk wave height found but no period: need a variable with standard_name %s (Te) or %s (Tp), or one named for te or tp in the spec's [roles] table",
			filesWord(c.Files), StandardNames[Te][0], StandardNames[Tp][0])}
	}
	if c.Vars[Spectrum2D] != nil && c.Vars[Spectrum1D] != nil {
		// Spectral axes may change between files, but the directional
		// statistics (mean direction, directional power, direction
		// sectors) need a direction axis over the whole record.
		return fmt.Errorf("ingest: %s holds a 2-D spectrum (%q, on a direction axis) and %s a 1-D spectrum (%q, without one); the directional statistics (mean direction, directional power, direction sectors) need the direction axis in every file of the record, so a record cannot mix them: map one of them in the spec's [roles] table (roles.spectrum2d or roles.spectrum1d) and give it in every file",
			PathText(c.fileOf(Spectrum2D)), c.Vars[Spectrum2D].Name, PathText(c.fileOf(Spectrum1D)), c.Vars[Spectrum1D].Name)
	}
	if vi := c.Vars[Depth]; vi != nil {
		// Depth is static or varies in time in every file that has it.
		for _, s := range scans {
			if d := s.info.vars[Depth]; d != nil && d.Static() != vi.Static() {
				return errf(s.info.Path, d.Name, "depth has dimensions %v here but %v in %s; give depth either with or without time in every file", d.Dims, vi.Dims, scans[0].info.Path)
			}
		}
	}
	c.roleFiles = map[Role][]int{}
	for i := range c.Files {
		for _, r := range c.Files[i].Roles {
			if !c.Files[i].vars[r].Static() {
				c.roleFiles[r] = append(c.roleFiles[r], i)
			}
		}
	}
	return nil
}

func filesWord(fs []FileInfo) string {
	if len(fs) == 1 {
		return fs[0].Path
	}
	return fmt.Sprintf("%s .. %s", fs[0].Path, fs[len(fs)-1].Path)
}

// buildTimeAxis builds the record's time axis, the union of every file's
// times, checks that each role's files follow each other without overlap
// (but for shared boundary steps, held by two files: each is read from one
// file, per policy, and compared by checkDuplicates), finds each step's
// duration, the segments of constant step and the gaps (timeaxis.go), and
// records the gaps of each role.
func (c *Catalog) buildTimeAxis(policy DuplicatePolicy) error {
	for i := range c.Files {
		c.Files[i].lead, c.Files[i].keep = 0, len(c.Files[i].times)
	}
	type dupKey struct {
		t    Stamp
		a, b int
	}
	dupAt := map[dupKey]int{}
	for _, r := range sortedRoles(c.roleFiles) {
		fs := c.roleFiles[r]
		for k := 1; k < len(fs); k++ {
			p, f := &c.Files[fs[k-1]], &c.Files[fs[k]]
			if f.First > p.Last {
				continue
			}
			n := sharedSteps(p.times, f.times)
			if n == 0 || n >= len(f.times) || n >= len(p.times) {
				what := "overlap in time"
				if f.First == p.First {
					what = "start at the same time"
				}
				return fmt.Errorf("ingest: %s and %s %s (%s .. %s vs %s .. %s), both holding role %s (variable %q); remove the duplicate or overlapping file from the input (only steps shared at a boundary, the last steps of one file being the first of the next, are read once)", p.Path, f.Path, what, p.From, p.To, f.From, f.To, r, f.vars[r].Name)
			}
			// The shared steps are read from one of the two files.
			if policy == DuplicatesLast {
				p.keep = min(p.keep, len(p.times)-n)
			} else {
				f.lead = max(f.lead, n)
			}
			used := p
			if policy == DuplicatesLast {
				used = f
			}
			for _, t := range f.times[:n] {
				key := dupKey{t, fs[k-1], fs[k]}
				if i, ok := dupAt[key]; ok {
					c.Duplicates[i].Roles = append(c.Duplicates[i].Roles, string(r))
					continue
				}
				dupAt[key] = len(c.Duplicates)
				c.Duplicates = append(c.Duplicates, Duplicate{Roles: []string{string(r)}, Time: c.Date(t).String(), Files: []string{p.Path, f.Path}, Identical: true, Used: used.Path, stamp: t, a: fs[k-1], b: fs[k]})
			}
		}
	}
	var all []Stamp
	for i := range c.Files {
		all = append(all, c.Files[i].times...)
	}
	sort.Slice(all, func(i, j int) bool { return all[i] < all[j] })
	for _, t := range all {
		if len(c.times) == 0 || t != c.times[len(c.times)-1] {
			c.times = append(c.times, t)
		}
	}
	c.Steps = len(c.times)
	if c.Steps == 0 {
		return fmt.Errorf("ingest: the input files hold no time steps")
	}
	for i := range c.Files {
		f := &c.Files[i]
		kept := f.times[f.lead:f.keep]
		f.uidx = make([]int, len(kept))
		for k, t := range kept {
			f.uidx[k] = sort.Search(len(c.times), func(j int) bool { return c.times[j] >= t })
		}
		if len(f.uidx) > 0 {
			f.Offset = f.uidx[0]
		}
	}
	c.Start, c.End = c.Date(c.times[0]).String(), c.Date(c.times[c.Steps-1]).String()
	// Most common step: the most common difference (ties: the smallest).
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
	c.timeDurations()
	sort.SliceStable(c.Duplicates, func(i, j int) bool { return c.Duplicates[i].stamp < c.Duplicates[j].stamp })
	if len(c.Duplicates) > 0 {
		c.Warnings = append(c.Warnings, fmt.Sprintf("%d time steps are held by two files (first %s, in %s and %s); each is read once, from %s", len(c.Duplicates), c.Duplicates[0].Time, c.Duplicates[0].Files[0], c.Duplicates[0].Files[1], policyText(policy)))
	}
	// Per-role gaps: steps of the record that no file of the role holds.
	for _, r := range sortedRoles(c.roleFiles) {
		have := make([]bool, c.Steps)
		for _, fi := range c.roleFiles[r] {
			for _, u := range c.Files[fi].uidx {
				have[u] = true
			}
		}
		var gaps []Gap
		miss := 0
		for i := 0; i < c.Steps; {
			if have[i] {
				i++
				continue
			}
			j := i
			var secs int64
			for j < c.Steps && !have[j] {
				secs += c.dur[j]
				j++
			}
			g := Gap{Role: string(r), Missing: j - i, Hours: float64(secs) / 3600, First: c.Date(c.times[i]).String(), Last: c.Date(c.times[j-1]).String()}
			if i > 0 {
				g.After = c.Date(c.times[i-1]).String()
			}
			if j < c.Steps {
				g.Before = c.Date(c.times[j]).String()
			}
			gaps = append(gaps, g)
			miss += j - i
			i = j
		}
		if len(gaps) > 0 {
			c.RoleGaps = append(c.RoleGaps, gaps...)
			c.Warnings = append(c.Warnings, fmt.Sprintf("role %s (variable %q): %d steps of the record are in no file of the role (%d gaps, first %s .. %s); they are missing for %s", r, c.Vars[r].Name, miss, len(gaps), gaps[0].First, gaps[0].Last, r))
		}
	}
	return nil
}

// sharedSteps is the number n of steps that end a and begin b (a's last n
// times are b's first n), or 0 when the overlap of the two is not such a
// boundary.
func sharedSteps(a, b []Stamp) int {
	i := sort.Search(len(a), func(k int) bool { return a[k] >= b[0] })
	n := len(a) - i
	if n == 0 || n > len(b) {
		return 0
	}
	for k := 0; k < n; k++ {
		if a[i+k] != b[k] {
			return 0
		}
	}
	return n
}

func policyText(p DuplicatePolicy) string {
	switch p {
	case DuplicatesLast:
		return "the later file (input.duplicate_steps = \"last\")"
	case DuplicatesFirst:
		return "the earlier file (input.duplicate_steps = \"first\")"
	}
	return "the earlier file (their values are compared: different values are refused)"
}

func (c *Catalog) resolveDepth(scans []*scan, opt Options) error {
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
		var from *scan
		for _, s := range scans {
			if s.info.vars[Depth] != nil {
				from = s
				break
			}
		}
		if from == nil {
			fill(math.NaN())
			c.DepthSource = "none"
			c.Warnings = append(c.Warnings, "no depth: no variable with standard_name sea_floor_depth_below_sea_surface; give a bathymetry file, a constant depth or the deep-water assumption")
			return nil
		}
		vi := from.info.vars[Depth]
		if err := c.readStaticField(&from.info, vi, c.Depth); err != nil {
			return err
		}
		c.DepthSource = "variable " + vi.Name + " in " + from.info.Path
		if !vi.Static() {
			c.DepthVaries = true
			c.DepthSource = "variable " + vi.Name + " (varying in time; group velocity uses each step's depth; the per-cell depth shown is the first step's, from " + from.info.Path + ")"
		}
		if vi.PositiveUp {
			c.DepthSource += ", a height with positive = \"up\" converted to depth"
		}
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

// readMask applies a sea_binary_mask variable of the first file holding one (CF standard
// name table: 1 = sea, 0 = land) to the cell mask.
func (c *Catalog) readMask(scans []*scan) error {
	var from *scan
	for _, s := range scans {
		if s.info.vars[Mask] != nil {
			from = s
			break
		}
	}
	if from == nil {
		return nil
	}
	vi := from.info.vars[Mask]
	m := make([]float64, c.Grid.NCells())
	if err := c.readStaticField(&from.info, vi, m); err != nil {
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
func (c *Catalog) readStaticField(fe *FileInfo, vi *VarInfo, dst []float64) error {
	path := fe.Path
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
	// Read in the file's own orientation.
	fg := *c.Grid
	if fe.xFile != nil {
		fg.XFile, fg.YFile = fe.xFile, fe.yFile
	}
	s := &scan{f: f, grid: &fg, gridDim: c.gridDim}
	return s.readStatic(vi, dst)
}
