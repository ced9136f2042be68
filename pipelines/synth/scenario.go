package synth

import (
	"fmt"
	"math"
)

// GridKind says how the cells of a scenario are laid out.
type GridKind int

const (
	// Regular is a lon/lat grid with 1-D coordinate variables lon(lon), lat(lat).
	Regular GridKind = iota
	// Curvilinear is a rotated grid with dimensions (y, x) and 2-D lon(y,x), lat(y,x).
	Curvilinear
	// Points is a set of stations: dimension station, lon(station), lat(station).
	Points
	// Mesh is a UGRID 1.0 triangular mesh of the box's sea (mesh.go):
	// dimension node, lon(node), lat(node), face_nodes(face, 3).
	Mesh
)

func (k GridKind) String() string {
	switch k {
	case Regular:
		return "regular"
	case Curvilinear:
		return "curvilinear"
	case Points:
		return "points"
	case Mesh:
		return "mesh"
	}
	return fmt.Sprintf("GridKind(%d)", int(k))
}

// Format is the NetCDF file format.
type Format int

const (
	// NetCDF4 is the HDF5-based format (deflate possible).
	NetCDF4 Format = iota
	// Classic is the netCDF-3 classic format (no compression).
	Classic
)

// Grid places the cells of a scenario on the globe. The invented coastline is
// always on the east side of the box (land where the eastern edge is reached),
// so that waves arrive from the open west; cells are ordered west to east and
// south to north internally whatever the file axis order.
type Grid struct {
	Kind GridKind
	// NX, NY: cells along longitude (x) and latitude (y); for Points, NX is the
	// number of stations and NY is ignored.
	NX, NY int
	// The box the grid covers (cell centres), degrees.
	LonMin, LonMax, LatMin, LatMax float64
	// LatDescending writes lat(lat) north to south (Regular only).
	LatDescending bool
	// LonFirst writes data as (time, lon, lat) instead of (time, lat, lon) (Regular only).
	LonFirst bool
	// RotationDeg turns a Curvilinear grid about the box centre, degrees anticlockwise.
	RotationDeg float64
	// NoLand makes every cell sea (no coastline).
	NoLand bool
}

// Packing selects how bulk variables are stored.
type Packing int

const (
	// Float32 stores bulk variables as float with a float _FillValue.
	Float32 Packing = iota
	// Int16 stores bulk variables as short with scale_factor, add_offset and _FillValue.
	Int16
)

// JonswapParams fixes the spectrum of one station for the whole record (used by
// the reference fixtures). Every field must be set (Gamma >= 1, the others > 0
// except DirFrom).
type JonswapParams struct {
	Hm0     float64 // m, of the continuous spectrum
	Tp      float64 // s, 1/fp
	Gamma   float64 // peak enhancement factor
	SpreadS float64 // exponent s of the cos^2s spreading
	DirFrom float64 // mean direction waves come from, degrees clockwise from north
}

// Spectra asks for spectral output at stations.
type Spectra struct {
	// OneD writes the frequency spectrum freqspec(time, station, frequency) instead of
	// the directional spectrum dirspec(time, station, frequency, direction).
	OneD bool
	// PerDegree writes dirspec in m2 s degree-1 instead of m2 s rad-1.
	PerDegree bool
	// Frequency axis f_n = F0 * FRatio^n, n = 0..NFreq-1 (Hz). Defaults 0.035, 1.1, 29.
	F0, FRatio float64
	NFreq      int
	// Direction axis: NDir bins of 360/NDir degrees starting at DirStart and
	// wrapping past 360 (so not monotonic when DirStart > 0). Default 24 bins from 0.
	NDir     int
	DirStart float64
	// Cells picks the grid cells (index iy*NX+ix, or the station index for
	// Points) that get spectra; empty with a Points grid means every station.
	// With Bulk also set, the spectra go to a separate file set named
	// <Name>_spec (and the bulk fields to <Name>_bulk).
	Cells []int
	// Fixed, if not empty, gives constant-in-time spectrum parameters per
	// station (same length as the stations); the generator's sea states are
	// then not used for the spectra.
	Fixed []JonswapParams
	// Gamma and SpreadS used with generated sea states (defaults 3.3 and 8).
	Gamma, SpreadS float64
	// FloorRel, if > 0, writes 0 for spectral values below FloorRel times the
	// station's largest value at that time step (again to help compression).
	// With 1e-4 (the demo) m0 falls by under 0.1 % for Tp 6-15 s on the
	// default axes (TestFloorLoss).
	FloorRel float64
}

// Scenario describes one invented, synthetic hindcast. The zero value is not
// usable; start from Demo, a fixture, or fill every field the comments mark.
type Scenario struct {
	// Name is the file-name prefix (no extension). Required.
	Name string
	// Title goes to the title attribute; Place names the invented coast.
	Title, Place string
	Grid         Grid
	// Bulk writes hm0, te, tp, wdir and depth on the grid.
	Bulk bool
	// Spectra, if not nil, writes spectra at stations.
	Spectra *Spectra
	// Start is the first month (Day and Hour ignored); Months the record length.
	Start  Date
	Months int
	// StepHours is the time step; must divide 24.
	StepHours int
	Calendar  Calendar
	// TimeUnits, e.g. "hours since 2001-01-01 00:00:00" (the default).
	TimeUnits string
	Packing   Packing
	Format    Format
	// Deflate is the zlib level 0..9 (NetCDF4 only; 0 = none). Shuffle goes with it.
	Deflate int
	// PerMonth writes one file per calendar month, named <Name>_YYYY-MM.nc.
	PerMonth bool
	// Mask writes a sea_binary_mask variable beside the bulk variables.
	Mask bool
	// KeepBits, if in 1..22, rounds every float32 data value (bulk and
	// spectra) to that many mantissa bits (relative error below
	// 2^-(KeepBits+1)) so that deflate can shrink the files; 0 keeps full
	// float32 precision. Coordinates and depth are never rounded.
	KeepBits int
	// Seed drives every random draw (math/rand/v2 PCG).
	Seed uint64
}

func (s *Scenario) withDefaults() Scenario {
	c := *s
	if c.Calendar == "" {
		c.Calendar = Standard
	}
	if c.TimeUnits == "" {
		c.TimeUnits = "hours since 2001-01-01 00:00:00"
	}
	if c.Title == "" {
		c.Title = "swellgrid synthetic wave hindcast " + c.Name
	}
	if c.Place == "" {
		c.Place = "an invented stretch of coast"
	}
	if c.Spectra != nil {
		sp := *c.Spectra
		if sp.F0 == 0 {
			sp.F0 = 0.035
		}
		if sp.FRatio == 0 {
			sp.FRatio = 1.1
		}
		if sp.NFreq == 0 {
			sp.NFreq = 29
		}
		if sp.NDir == 0 {
			sp.NDir = 24
		}
		if sp.Gamma == 0 {
			sp.Gamma = 3.3
		}
		if sp.SpreadS == 0 {
			sp.SpreadS = 8
		}
		c.Spectra = &sp
	}
	return c
}

// Check reports what is wrong with the scenario (after defaults are filled
// in), naming the field to fix; Write runs the same check.
func (s *Scenario) Check() error {
	c := s.withDefaults()
	if err := c.validate(); err != nil {
		return err
	}
	if c.Spectra != nil && len(c.stations()) == 0 {
		return fmt.Errorf("synth: scenario %q: Spectra on a %s grid needs Spectra.Cells", c.Name, c.Grid.Kind)
	}
	return nil
}

// validate checks a defaulted scenario and says which field to fix.
func (s *Scenario) validate() error {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("synth: scenario %q: "+format, append([]any{s.Name}, a...)...)
	}
	if s.Name == "" {
		return fmt.Errorf("synth: scenario has no Name; set Scenario.Name (the file prefix)")
	}
	if !s.Bulk && s.Spectra == nil {
		return bad("nothing to write; set Bulk or Spectra")
	}
	g := s.Grid
	if g.NX < 1 || (g.Kind != Points && g.NY < 1) {
		return bad("grid size %dx%d; set Grid.NX (and Grid.NY unless Points) to at least 1", g.NX, g.NY)
	}
	if !(g.LonMax >= g.LonMin) || !(g.LatMax >= g.LatMin) || g.LatMin < -90 || g.LatMax > 90 {
		return bad("grid box lon [%g,%g] lat [%g,%g] is not a valid box", g.LonMin, g.LonMax, g.LatMin, g.LatMax)
	}
	if (g.LatDescending || g.LonFirst) && g.Kind != Regular {
		return bad("LatDescending/LonFirst apply to Regular grids only")
	}
	if s.Months < 1 || s.Start.Month < 1 || s.Start.Month > 12 {
		return bad("record of %d months from month %d; set Months >= 1 and Start.Month in 1..12", s.Months, s.Start.Month)
	}
	if s.StepHours < 1 || 24%s.StepHours != 0 {
		return bad("StepHours %d must divide 24", s.StepHours)
	}
	if !s.Calendar.valid() {
		return bad("calendar %q not one of standard, proleptic_gregorian, noleap, 360_day, all_leap, julian", s.Calendar)
	}
	tu, err := parseTimeUnits(s.TimeUnits)
	if err != nil {
		return err
	}
	if s.Calendar == Standard && (s.Start.Year < 1583 || tu.epoch.Year < 1583) {
		return bad("the standard calendar is written only after 1582; use proleptic_gregorian")
	}
	if s.Format == Classic && s.Deflate != 0 {
		return bad("Deflate needs Format NetCDF4 (the classic format has no compression)")
	}
	if s.Deflate < 0 || s.Deflate > 9 {
		return bad("Deflate level %d not in 0..9", s.Deflate)
	}
	if sp := s.Spectra; sp != nil {
		if sp.NFreq < 2 || sp.NDir < 1 || sp.F0 <= 0 || sp.FRatio <= 1 {
			return bad("spectral axes: need NFreq >= 2, NDir >= 1, F0 > 0, FRatio > 1")
		}
		n := s.nSites()
		for _, c := range sp.Cells {
			if c < 0 || c >= n {
				return bad("Spectra.Cells holds %d, outside 0..%d", c, n-1)
			}
		}
		if len(sp.Fixed) > 0 && len(sp.Fixed) != len(s.stations()) {
			return bad("Spectra.Fixed has %d entries for %d stations", len(sp.Fixed), len(s.stations()))
		}
		for i, p := range sp.Fixed {
			if p.Hm0 <= 0 || p.Tp <= 0 || p.Gamma < 1 || p.SpreadS <= 0 || math.IsNaN(p.DirFrom) {
				return bad("Spectra.Fixed[%d] needs Hm0 > 0, Tp > 0, Gamma >= 1, SpreadS > 0", i)
			}
		}
	}
	return nil
}

func (s *Scenario) nSites() int {
	if s.Grid.Kind == Points {
		return s.Grid.NX
	}
	return s.Grid.NX * s.Grid.NY
}

// stations lists the site indices that carry spectra.
func (s *Scenario) stations() []int {
	if s.Spectra == nil {
		return nil
	}
	if len(s.Spectra.Cells) > 0 {
		return s.Spectra.Cells
	}
	if s.Grid.Kind == Points {
		st := make([]int, s.Grid.NX)
		for i := range st {
			st[i] = i
		}
		return st
	}
	return nil
}
