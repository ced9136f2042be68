package ingest

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/grid"
)

// scan is what one file says about itself.
type scan struct {
	f        *ncFile
	info     FileInfo
	cal      Calendar
	grid     *grid.Grid
	gridDim  map[string]axis
	spectral *Spectral
	warnings []string
	vars     []VarSummary // the file's data variables (for a refusal's listing)
	names    []string     // station names of a point set, canonical order
	mesh     *meshInfo    // a UGRID mesh (ugrid.go); nil otherwise
	readings []Reading    // how the spectral conventions were read (findSpectral)
	invX     []int
	invY     []int
	mapping  *GridMapping // the CF grid mapping of a projected or rotated native grid (gridmapping.go); nil otherwise
}

func errf(path, v, format string, a ...any) error {
	if v == "" {
		return fmt.Errorf("ingest: %s: %s", TermText(path), fmt.Sprintf(format, a...))
	}
	return fmt.Errorf("ingest: %s: variable %q: %s", TermText(path), ShortText(v), fmt.Sprintf(format, a...))
}

// scanFile reads the metadata, the time axis and the grid of one file, and
// finds its role variables.
func scanFile(path string, opt Options) (*scan, error) {
	format, size, stamp, err := checkMagicStamp(path)
	if err != nil {
		return nil, err
	}
	f, err := openNC(path)
	if err != nil {
		return nil, err
	}
	defer f.close()
	s := &scan{f: f, info: FileInfo{Path: path, Size: size, Format: format, stamp: stamp}}
	if err := s.checkDeclaredSize(); err != nil {
		return nil, err
	}
	// A file without a time coordinate may hold static fields (depth, mask)
	// of a set whose wave variables are in other files.
	tv, terr := s.findTime()
	timeDim := ""
	if terr == nil {
		if err := s.readTime(tv); err != nil {
			return nil, err
		}
		timeDim = tv.dims[0]
	}
	if err := s.findGrid(timeDim); err != nil {
		if terr != nil {
			return nil, terr
		}
		return nil, err
	}
	s.vars = s.dataVars()
	if s.names, err = s.findNames(); err != nil {
		return nil, err
	}
	s.info.vars = map[Role]*VarInfo{}
	for _, r := range append(append([]Role{}, Roles...), Mask) {
		vi, err := s.findRole(r, opt, timeDim)
		if err != nil {
			return nil, err
		}
		if vi != nil {
			s.info.vars[r] = vi
		}
	}
	timeRoles := 0
	for r, vi := range s.info.vars {
		s.info.Roles = append(s.info.Roles, r)
		if !vi.Static() {
			timeRoles++
		}
	}
	sortRoles(s.info.Roles)
	if timeRoles == 0 {
		if len(s.info.vars) == 0 {
			if terr != nil {
				return nil, terr
			}
			return nil, &NoRoleError{Path: path, Vars: s.vars, Err: errf(path, "", "no variable for any role: none has a wave standard_name (e.g. %s) and none is named in the spec's [roles] table; name the variables in [roles] (see the list below) or leave the file out",
				StandardNames[Hm0][0])}
		}
		// Only static fields: the file's time axis, if any, is not part of the record.
		s.info.Static, s.info.Steps, s.info.times = true, 0, nil
		s.info.From, s.info.To, s.info.First, s.info.Last = "", "", 0, 0
	}
	// Whether a role variable holds any value (or any possible one) is
	// found while streaming (Block.Cook, Catalog.CheckTally): the catalog
	// reads metadata only, so each file is decompressed once.
	if err := s.findSpectral(opt); err != nil {
		return nil, err
	}
	for _, vi := range s.info.vars {
		vi.v = nil // the file is closed after the scan
	}
	return s, nil
}

// scanStatic reads a file that holds only static fields (a bathymetry file).
func scanStatic(path string, opt Options) (*scan, error) {
	f, err := openNC(path)
	if err != nil {
		return nil, err
	}
	s := &scan{f: f, info: FileInfo{Path: path}}
	if format, size, err := checkMagic(path); err == nil {
		s.info.Format, s.info.Size = format, size
	}
	if err := s.checkDeclaredSize(); err != nil {
		f.close()
		return nil, err
	}
	if err := s.findGrid(""); err != nil {
		f.close()
		return nil, err
	}
	s.info.vars = map[Role]*VarInfo{}
	vi, err := s.findRole(Depth, opt, "")
	if err != nil {
		f.close()
		return nil, err
	}
	if vi != nil {
		s.info.vars[Depth] = vi
	}
	return s, nil
}

// typeBytes is the stored size of one value of a NetCDF type (NetCDF User's
// Guide, classic format specification: NC_BYTE/CHAR 1, NC_SHORT 2, NC_INT and
// NC_FLOAT 4, NC_DOUBLE 8; the NetCDF-4 types by their width).
func typeBytes(t netcdf.Type) uint64 {
	switch t {
	case netcdf.BYTE, netcdf.UBYTE, netcdf.CHAR:
		return 1
	case netcdf.SHORT, netcdf.USHORT:
		return 2
	case netcdf.INT, netcdf.UINT, netcdf.FLOAT:
		return 4
	}
	return 8
}

// checkDeclaredSize refuses a file whose header declares more data than the
// file can hold, before any value is read (a huge claimed dimension would
// make a reader allocate it, and NetCDF-C returns fill values for data that
// are not there).
//
// Classic files store every variable uncompressed and in full (record
// variables for numrecs records), so the file must be at least as long as
// the sum of the variables' sizes; a shorter file was cut off (an
// interrupted transfer), or its header claims dimensions it does not hold.
//
// NetCDF-4 (HDF5) files may be compressed, and chunks never written take no
// space, so their bound is looser: the declared data may exceed the file by
// at most maxNC4Ratio plus 1 MiB of headroom. Deflate, the compression of
// NetCDF-4, cannot compress by more than about 1032:1 (zlib technical notes,
// "maximum compression factor"; figure quoted from memory). A file beyond
// that holds unwritten data (its writer stopped) or a damaged header.
func (s *scan) checkDeclaredSize() error {
	if s.info.Format == "" {
		return nil
	}
	var total uint64
	var big *ncVar
	var bigBytes uint64
	for i := range s.f.vars {
		v := &s.f.vars[i]
		n := typeBytes(v.typ)
		for _, d := range v.shape {
			if d != 0 && n > math.MaxUint64/d {
				n = math.MaxUint64
				break
			}
			n *= d
		}
		if n > bigBytes {
			big, bigBytes = v, n
		}
		if total+n < total {
			total = math.MaxUint64
		} else {
			total += n
		}
	}
	if big == nil {
		return nil
	}
	size := uint64(max(s.info.Size, 0))
	if s.info.Format != "netcdf4" {
		if total > size {
			return errf(s.f.path, big.name, "the header declares %d bytes of data (this variable alone %d values of shape %v) but the file has only %d bytes; the file is truncated or corrupt: copy or download it again",
				total, big.size(), big.shape, s.info.Size)
		}
		return nil
	}
	if limit := size*maxNC4Ratio + 1<<20; total > limit {
		return errf(s.f.path, big.name, "the header declares %d bytes of data (this variable alone %d values of shape %v) but the file has only %d bytes, more than compression can explain (%d:1 at most); the file was not completely written, or its header claims dimensions it does not hold: write or download it again",
			total, big.size(), big.shape, s.info.Size, maxNC4Ratio)
	}
	return nil
}

// maxNC4Ratio bounds declared data over file size for NetCDF-4 files.
const maxNC4Ratio = 1100

func (s *scan) findTime() (*ncVar, error) {
	var cands []*ncVar
	for i := range s.f.vars {
		v := &s.f.vars[i]
		if len(v.dims) != 1 {
			continue
		}
		if v.str("standard_name") == "time" || strings.EqualFold(v.str("axis"), "T") ||
			(v.dims[0] == v.name && strings.Contains(strings.ToLower(v.str("units")), " since ")) {
			cands = append(cands, v)
		}
	}
	if len(cands) == 0 {
		return nil, errf(s.f.path, "", "no time coordinate (a 1-D variable with standard_name \"time\", axis \"T\", or units \"<unit> since <date>\"); add one, or check that this is a hindcast file")
	}
	if len(cands) > 1 {
		names := []string{}
		for _, c := range cands {
			names = append(names, c.name)
		}
		// Prefer the coordinate variable (named like its dimension).
		for _, c := range cands {
			if c.dims[0] == c.name {
				return c, nil
			}
		}
		return nil, errf(s.f.path, "", "several time coordinates (%s); keep one", strings.Join(names, ", "))
	}
	return cands[0], nil
}

func (s *scan) readTime(tv *ncVar) error {
	cal, err := ParseCalendar(tv.str("calendar"))
	if err != nil {
		return errf(s.f.path, tv.name, "%v", err)
	}
	s.cal = cal
	tu, err := ParseTimeUnits(tv.str("units"), cal)
	if err != nil {
		return errf(s.f.path, tv.name, "%v", err)
	}
	s.info.timeUnits = tv.str("units")
	vals, err := tv.readAll(s.f.path)
	if err != nil {
		return err
	}
	if len(vals) == 0 {
		return errf(s.f.path, tv.name, "the time dimension has size 0; the file holds no data: remove it from the input")
	}
	fills := tv.nums("_FillValue")
	if len(fills) == 0 {
		if df := defaultFill(tv.typ); !math.IsNaN(df) {
			fills = []float64{df} // CF 1.8 section 2.5.1: the NetCDF default fill applies
		}
	}
	s.info.times = make([]Stamp, len(vals))
	for i, v := range vals {
		for _, fv := range fills {
			if v == fv {
				return errf(s.f.path, tv.name, "time step %d is a fill value; every time must be set", i)
			}
		}
		st, err := tu.Stamp(v)
		if err != nil {
			return errf(s.f.path, tv.name, "step %d: %v", i, err)
		}
		if i > 0 && st <= s.info.times[i-1] {
			what := "goes back"
			if st == s.info.times[i-1] {
				what = "repeats"
			}
			return errf(s.f.path, tv.name, "time %s at step %d %s (previous %s); times must increase strictly: remove the duplicated or misordered steps",
				DateOf(cal, st), i, what, DateOf(cal, s.info.times[i-1]))
		}
		s.info.times[i] = st
	}
	s.info.Steps = len(vals)
	s.info.First, s.info.Last = s.info.times[0], s.info.times[len(vals)-1]
	s.info.From, s.info.To = DateOf(cal, s.info.First).String(), DateOf(cal, s.info.Last).String()
	return nil
}

func (s *scan) coordVar(stdName, unitsPrefix string) []*ncVar {
	var out []*ncVar
	for i := range s.f.vars {
		v := &s.f.vars[i]
		u := strings.ToLower(v.str("units"))
		if v.str("standard_name") == stdName || (v.str("standard_name") == "" && strings.HasPrefix(u, unitsPrefix)) {
			out = append(out, v)
		}
	}
	return out
}

// findGrid identifies the grid from the longitude/latitude coordinates (CF
// Conventions 1.8, sections 4.1-4.2 and 5: standard_name longitude/latitude or
// units degrees_east/degrees_north). Point sets may store their coordinates
// over (time, station), as spectral point output often does; they must then
// be constant in time (within 1e-6 degree).
func (s *scan) findGrid(timeDim string) error {
	if found, err := s.findMesh(timeDim); found || err != nil {
		return err
	}
	lons := s.coordVar("longitude", "degrees_east")
	lats := s.coordVar("latitude", "degrees_north")
	pick := func(vs []*ncVar) *ncVar {
		for _, v := range vs {
			if len(v.dims) == 1 && v.dims[0] == v.name {
				return v
			}
		}
		if len(vs) > 0 {
			return vs[0]
		}
		return nil
	}
	lon, lat := pick(lons), pick(lats)
	gm, err := s.findMapping()
	if err != nil {
		return err
	}
	if (lon == nil || lat == nil) && gm != nil {
		return s.projectedGrid(gm)
	}
	if lon == nil || lat == nil {
		return errf(s.f.path, "", "no longitude/latitude coordinates (variables with standard_name longitude and latitude, or units degrees_east and degrees_north) and no grid mapping with projected x/y axes; add them")
	}
	lonv, err := lon.readAll(s.f.path)
	if err != nil {
		return err
	}
	latv, err := lat.readAll(s.f.path)
	if err != nil {
		return err
	}
	// Every coordinate must be finite, on every kind of grid: a node or
	// station without a position cannot be placed in the tables or on the map
	// (and would fail only at the export, after the computation).
	for _, c := range []struct {
		v    *ncVar
		vals []float64
	}{{lon, lonv}, {lat, latv}} {
		for i, x := range c.vals {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				where := ""
				if len(c.v.shape) == 2 {
					where = fmt.Sprintf(" (%s %d, %s %d)", c.v.dims[0], i/int(c.v.shape[1]), c.v.dims[1], i%int(c.v.shape[1]))
				}
				return errf(s.f.path, c.v.name, "value %d%s is %v; coordinates must be finite: give every grid node or station a position, or leave it out of the file", i, where, x)
			}
		}
	}
	lonDims, latDims := lon.dims, lat.dims
	if timeDim != "" && len(lonDims) == 2 && len(latDims) == 2 && lonDims[0] == timeDim && latDims[0] == timeDim && lonDims[1] == latDims[1] {
		if lonv, err = constantInTime(s.f.path, lon.name, lonv, lon.shape); err != nil {
			return err
		}
		if latv, err = constantInTime(s.f.path, lat.name, latv, lat.shape); err != nil {
			return err
		}
		lonDims, latDims = lonDims[1:], latDims[1:]
	}
	s.gridDim = map[string]axis{}
	switch {
	case len(lonDims) == 1 && len(latDims) == 1 && lonDims[0] != latDims[0]:
		if len(lonv) == 0 || len(latv) == 0 {
			return errf(s.f.path, lon.name+"/"+lat.name, "a grid dimension has size 0 (%d lon, %d lat); the file holds no cells: remove it from the input or write it again", len(lonv), len(latv))
		}
		g, err := grid.NewRegular(lonv, latv)
		if err != nil {
			return errf(s.f.path, lon.name+"/"+lat.name, "%v", err)
		}
		s.grid = g
		s.gridDim[lonDims[0]] = axX
		s.gridDim[latDims[0]] = axY
	case len(lonDims) == 1 && len(latDims) == 1:
		g, err := grid.NewPoints(lonv, latv)
		if err != nil {
			return errf(s.f.path, lon.name+"/"+lat.name, "%v", err)
		}
		s.grid = g
		s.gridDim[lonDims[0]] = axP
	case len(lonDims) == 2 && len(latDims) == 2 && lonDims[0] == latDims[0] && lonDims[1] == latDims[1]:
		g, err := grid.NewCurvilinear(int(lon.shape[1]), int(lon.shape[0]), lonv, latv)
		if err != nil {
			return errf(s.f.path, lon.name+"/"+lat.name, "%v", err)
		}
		s.grid = g
		s.gridDim[lonDims[0]] = axY
		s.gridDim[lonDims[1]] = axX
		if gm != nil && len(gm.X) == int(lon.shape[1]) && len(gm.Y) == int(lon.shape[0]) {
			s.mapping = gm // the native grid of the given lat/lon, kept for atlas.nc
		}
	default:
		return errf(s.f.path, lon.name+"/"+lat.name, "coordinates of dimensions %v and %v form no grid swellgrid reads (1-D axes, 2-D curvilinear, or a station dimension)", lonDims, latDims)
	}
	s.invX, s.invY = invert(s.grid.XFile), invert(s.grid.YFile)
	s.info.xFile, s.info.yFile = s.grid.XFile, s.grid.YFile
	return nil
}

// projectedGrid builds the curvilinear grid of a file that gives only
// projected x/y (or rotated rlon/rlat) axes and their grid mapping: every
// node's longitude and latitude computed by PROJ (GridMapping.LonLat).
func (s *scan) projectedGrid(gm *GridMapping) error {
	lon, lat, err := gm.LonLat()
	if err != nil {
		return errf(s.f.path, gm.Var, "%v", err)
	}
	g, err := grid.NewCurvilinear(len(gm.X), len(gm.Y), lon, lat)
	if err != nil {
		return errf(s.f.path, gm.XName+"/"+gm.YName, "%v", err)
	}
	gm.Computed = true
	s.grid, s.mapping = g, gm
	xv, yv := s.f.find(gm.XName), s.f.find(gm.YName)
	s.gridDim = map[string]axis{xv.dims[0]: axX, yv.dims[0]: axY}
	s.invX, s.invY = invert(s.grid.XFile), invert(s.grid.YFile)
	s.info.xFile, s.info.yFile = s.grid.XFile, s.grid.YFile
	return nil
}

// constantInTime reduces coordinates stored over (time, station) to one row,
// refusing stations that move by more than 1e-6 degree (a moving platform is
// not a point set swellgrid reads).
func constantInTime(path, name string, v []float64, shape []uint64) ([]float64, error) {
	nt, np := int(shape[0]), int(shape[1])
	row := append([]float64(nil), v[:np]...)
	for t := 1; t < nt; t++ {
		for p := 0; p < np; p++ {
			x := v[t*np+p]
			if x != x && row[p] != row[p] {
				continue
			}
			if d := math.Abs(x - row[p]); !(d <= 1e-6) {
				return nil, errf(path, name, "station %d moves: %v at step 0 but %v at step %d (more than 1e-6 degree); swellgrid reads fixed points only: give coordinates that are constant in time, or split the record per position", p, row[p], x, t)
			}
		}
	}
	return row, nil
}

func invert(p []int) []int {
	q := make([]int, len(p))
	for i, v := range p {
		q[v] = i
	}
	return q
}

func (s *scan) findRole(r Role, opt Options, timeDim string) (*VarInfo, error) {
	var v *ncVar
	if timeDim == "" && !static(r) {
		return nil, nil // a file without time holds only static fields
	}
	if name := opt.Vars[r]; name != "" {
		// In a set with one variable per file, a named variable is in some
		// files only; Open refuses a name found in none of them.
		if v = s.f.find(name); v == nil {
			return nil, nil
		}
	} else {
		var found []*ncVar
		for i := range s.f.vars {
			if cv := &s.f.vars[i]; len(cv.dims) == 1 && cv.dims[0] == cv.name && len(cv.shape) == 1 && !static(r) {
				continue // a coordinate variable (e.g. the spectral direction axis), not a field
			}
			for _, sn := range StandardNames[r] {
				if s.f.vars[i].str("standard_name") == sn {
					found = append(found, &s.f.vars[i])
				}
			}
		}
		if len(found) == 0 {
			return nil, nil
		}
		if len(found) > 1 {
			names := []string{}
			for _, f := range found {
				names = append(names, f.name)
			}
			return nil, errf(s.f.path, "", "several variables for role %s (%s); choose one in the spec's [roles] table", r, strings.Join(names, ", "))
		}
		v = found[0]
	}
	if err := s.checkMeshRole(v, r); err != nil {
		return nil, err
	}
	vi := &VarInfo{Role: r, Name: v.name, StandardName: v.str("standard_name"), Dims: v.dims, Type: v.typ.String(), v: v}
	vi.DirTo = strings.Contains(vi.StandardName, "_to_direction")
	var err error
	if vi.ChunkBytes, vi.Filtered, vi.chunks, err = v.chunkBytes(); err != nil {
		return nil, errf(s.f.path, v.name, "%v; the file may be corrupt", err)
	}
	// Axes and rank.
	nspat := 0
	for _, d := range v.dims {
		switch {
		case d == timeDim && timeDim != "":
			vi.axes = append(vi.axes, axT)
		case s.gridDim[d] != 0:
			vi.axes = append(vi.axes, s.gridDim[d])
			nspat++
		default:
			vi.axes = append(vi.axes, 0) // spectral, resolved by findSpectral
		}
	}
	wantSpat := 2
	if s.grid.Unstructured() {
		wantSpat = 1
	}
	other := len(v.dims) - nspat
	hasT := timeDim != "" && len(v.dims) > 0 && vi.axes[0] == axT
	wantOther := map[Role]int{Spectrum2D: 3, Spectrum1D: 2, Depth: 0, Mask: 0}
	wo, ok := wantOther[r]
	if !ok {
		wo = 1
	}
	if r == Depth && hasT {
		wo = 1 // depth that varies in time (tides): (time, station) or (time, y, x)
	}
	if nspat != wantSpat || other != wo || (!static(r) && !hasT) {
		spat := map[bool]string{true: "station", false: "y, x"}[wantSpat == 1]
		if s.mesh != nil {
			spat = s.mesh.dim()
		}
		expect := "(time, " + spat
		switch r {
		case Spectrum2D:
			expect += ", frequency, direction) with time first"
		case Spectrum1D:
			expect += ", frequency) with time first"
		case Depth:
			expect = "(" + spat + ") or, varying in time, (time, " + spat + ")"
		case Mask:
			expect = "(" + spat + ")"
		default:
			expect += ") with time first"
		}
		return nil, errf(s.f.path, v.name, "role %s has dimensions %v; expected %s, using the grid's dimensions; check the variable or the role mapping", r, v.dims, expect)
	}
	for i, sz := range v.shape {
		if sz == 0 {
			return nil, errf(s.f.path, v.name, "dimension %q has size 0; the variable holds no data", v.dims[i])
		}
	}
	if r == Mask {
		// CF sea_binary_mask: 1 = sea, 0 = land; dimensionless.
		vi.Scale, vi.Factor, vi.ValidMin, vi.ValidMax = 1, 1, math.Inf(-1), math.Inf(1)
		if fv := v.nums("_FillValue"); len(fv) > 0 {
			vi.Fill = fv[:1]
		}
		return vi, nil
	}
	// Units.
	vi.Units = v.str("units")
	vi.longName, vi.comment = v.str("long_name"), v.str("comment")
	if u := opt.Units[r]; u != "" {
		vi.Units, vi.unitsFromSpec = u, true
	}
	if vi.Units == "" {
		return nil, errf(s.f.path, v.name, "no units attribute; add one or set units for role %s in the spec", r)
	}
	if r == Spectrum2D || r == Spectrum1D {
		// Checked here as far as the units alone allow; the factor
		// depends on the axes' units and the encoding too (findSpectral).
		_, inner, _ := splitLogUnits(vi.Units)
		if _, err := ConversionFactor(inner, roleQuantity[r]); err != nil {
			eg := map[Role]string{Spectrum2D: `"m2 s rad-1" (per Hz per radian), "m2 s degree-1", "m2 s rad-2" (per rad/s per radian)`,
				Spectrum1D: `"m2 s" (per Hz) or "m2 s rad-1" (per rad/s)`}[r]
			return nil, errf(s.f.path, v.name, "%v (%s, %s); set units.%s in the spec to the units the values are in, e.g. %s, wrapped as \"log10(...)\" or \"ln(...)\" for logarithms",
				err, quoteAttrs([]attr{{"standard_name", vi.StandardName}, {"long_name", vi.longName}}), attr{"units", v.str("units")}, r, eg)
		}
	} else {
		fac, err := ConversionFactor(vi.Units, roleQuantity[r])
		if err != nil {
			return nil, errf(s.f.path, v.name, "%v; set units for role %s in the spec if the attribute is wrong", err, r)
		}
		vi.Factor = fac
	}
	fac := vi.Factor
	if r == Depth && strings.EqualFold(strings.TrimSpace(v.str("positive")), "up") {
		// A height (CF 1.8 section 4.3: positive = "up"), negative below the
		// surface: depth = -height.
		vi.Factor, vi.PositiveUp = -fac, true
	}
	// Packing and missing values (CF 1.8 sections 2.5.1 and 8.1), read
	// strictly: a packing attribute that is skipped would leave values scaled
	// by orders of magnitude, so text, the wrong count or a non-finite value
	// is refused.
	if err := s.packing(v, vi); err != nil {
		return nil, err
	}
	return vi, nil
}

// packing reads the packing, missing-value and valid-range attributes of a
// role variable into vi, refusing those that CF does not allow (CF 1.8
// section 8.1: scale_factor and add_offset are single numbers; section 2.5.1:
// _FillValue is a single number of the variable's type, missing_value one or
// more, valid_range two, valid_min and valid_max one). A NaN _FillValue or
// missing_value is legal (xarray writes one): a NaN raw value is missing in
// any case. The scale must be non-zero, and the unpacked values of the
// variable's type must stay within plausible magnitudes (|x| <= 1e12 in the
// stored unit; a scale of 1e308 makes them infinite).
func (s *scan) packing(v *ncVar, vi *VarInfo) error {
	vi.Scale, vi.Offset = 1, 0
	sf, err := s.numAttr(v, "scale_factor", true, 1)
	if err != nil {
		return err
	}
	ao, err := s.numAttr(v, "add_offset", true, 1)
	if err != nil {
		return err
	}
	if sf != nil {
		vi.Scale, vi.Packed = sf[0], true
	}
	if ao != nil {
		vi.Offset, vi.Packed = ao[0], true
	}
	if vi.Scale == 0 {
		return errf(s.f.path, v.name, "attribute scale_factor is 0, which unpacks every value to add_offset %v; fix the packing attributes (CF 1.8 section 8.1)", vi.Offset)
	}
	const maxMag = 1e12
	if lo, hi := typeRange(v.typ); math.Abs(vi.Offset) > maxMag || math.Abs(vi.Scale) > maxMag ||
		math.Abs(lo*vi.Scale+vi.Offset) > 1e3*maxMag || math.Abs(hi*vi.Scale+vi.Offset) > 1e3*maxMag {
		return errf(s.f.path, v.name, "attributes scale_factor %v and add_offset %v unpack values of %s beyond plausible magnitudes (scale and offset at most %g, unpacked values at most %g %s); fix the packing attributes (CF 1.8 section 8.1)", vi.Scale, vi.Offset, typeName(v.typ), maxMag, 1e3*maxMag, vi.Units)
	}
	fv, err := s.numAttr(v, "_FillValue", false, 1)
	if err != nil {
		return err
	}
	// A NaN raw value is missing whatever the attributes say (unpack), so a
	// NaN _FillValue or missing_value needs no entry in Fill.
	if fv != nil {
		if !math.IsNaN(fv[0]) {
			vi.Fill = append(vi.Fill, fv[0])
		}
	} else if df := defaultFill(v.typ); !math.IsNaN(df) {
		vi.Fill = append(vi.Fill, df)
	}
	mv, err := s.numAttr(v, "missing_value", false)
	if err != nil {
		return err
	}
	for _, x := range mv {
		if !math.IsNaN(x) {
			vi.Fill = append(vi.Fill, x)
		}
	}
	vi.ValidMin, vi.ValidMax = math.Inf(-1), math.Inf(1)
	vr, err := s.numAttr(v, "valid_range", true, 2)
	if err != nil {
		return err
	}
	if vr != nil {
		vi.ValidMin, vi.ValidMax = vr[0], vr[1]
	}
	// An infinite valid_min or valid_max (some writers store -Inf/+Inf for
	// "no limit") is read as an open bound; NaN bounds nothing and is refused.
	if vm, err := s.boundAttr(v, "valid_min"); err != nil {
		return err
	} else if vm != nil {
		vi.ValidMin = vm[0]
	}
	if vm, err := s.boundAttr(v, "valid_max"); err != nil {
		return err
	} else if vm != nil {
		vi.ValidMax = vm[0]
	}
	if vi.ValidMin > vi.ValidMax {
		return errf(s.f.path, v.name, "valid range %v..%v is empty (minimum above maximum), so every value would be missing; fix valid_range or valid_min/valid_max", vi.ValidMin, vi.ValidMax)
	}
	return nil
}

// typeIsInt reports whether a NetCDF type is an integer type.
func typeIsInt(t netcdf.Type) bool {
	switch t {
	case netcdf.BYTE, netcdf.UBYTE, netcdf.SHORT, netcdf.USHORT, netcdf.INT, netcdf.UINT, netcdf.INT64, netcdf.UINT64:
		return true
	}
	return false
}

// typeRange is the range of values of an integer NetCDF type of up to 32 bits
// (0, 0 for other types).
func typeRange(t netcdf.Type) (float64, float64) {
	switch t {
	case netcdf.BYTE:
		return math.MinInt8, math.MaxInt8
	case netcdf.UBYTE:
		return 0, math.MaxUint8
	case netcdf.SHORT:
		return math.MinInt16, math.MaxInt16
	case netcdf.USHORT:
		return 0, math.MaxUint16
	case netcdf.INT:
		return math.MinInt32, math.MaxInt32
	case netcdf.UINT:
		return 0, math.MaxUint32
	}
	return 0, 0
}

// FrequencyNames are the CF standard names of a spectral frequency
// coordinate (CF standard name table: sea_surface_wave_frequency and
// wave_frequency, canonical units s-1; quoted from memory).
var FrequencyNames = []string{"sea_surface_wave_frequency", "wave_frequency"}

// findSpectral resolves the frequency and direction dimensions of a
// spectrum, the convention of its directions (resolveDirection), the
// encoding of its densities (resolveEncoding) and the basis of their units
// against the axes' units (readDensityUnits), and records each reading.
func (s *scan) findSpectral(opt Options) error {
	vi := s.info.vars[Spectrum2D]
	if vi == nil {
		vi = s.info.vars[Spectrum1D]
	}
	if vi == nil {
		return nil
	}
	sp := &Spectral{}
	var freqUnits, dirUnits string
	var dirFrom string
	var seen []string // each spectral dimension's coordinate, for messages
	for k, d := range vi.Dims {
		if vi.axes[k] != 0 {
			continue
		}
		cv := s.f.find(d)
		if cv == nil || len(cv.dims) != 1 {
			return errf(s.f.path, vi.Name, "dimension %q has no coordinate variable, so its frequencies or directions are unknown; no spec key gives them: add %s(%s) with standard_name %s and units \"Hz\" (a frequency) or standard_name %s and units \"degree\" (a direction)",
				d, d, d, FrequencyNames[0], StandardNames[Dir][0])
		}
		sn := cv.str("standard_name")
		u := cv.str("units")
		found := quoteAttrs([]attr{{"standard_name", sn}, {"long_name", cv.str("long_name")}})
		seen = append(seen, fmt.Sprintf("%q (units %q, %s)", d, u, found))
		vals, err := cv.readAll(s.f.path)
		if err != nil {
			return err
		}
		ffac, ferr := ConversionFactor(u, Frequency)
		if ferr == nil && (sn == "" || slices.Contains(FrequencyNames, sn)) {
			vi.axes[k] = axF
			freqUnits = u
			for i, f := range vals {
				f *= ffac
				if !(f > 0) || math.IsInf(f, 0) {
					return errf(s.f.path, cv.name, "frequency %d is %v (units %q, %s); frequencies must be positive and finite; no spec key overrides a coordinate's values: correct the coordinate", i, vals[i], u, found)
				}
				sp.FreqHz = append(sp.FreqHz, f)
			}
			continue
		}
		if ferr == nil {
			return errf(s.f.path, cv.name, "coordinate of spectral dimension %q has units %q, a frequency, but %s, which is not the standard_name of a frequency (%s); no spec key overrides a coordinate's attributes: correct or remove its standard_name",
				d, u, found, strings.Join(FrequencyNames, ", "))
		}
		if fac, err := ConversionFactor(u, Angle); err == nil {
			vi.axes[k] = axD
			dirUnits = u
			conv, from, err := resolveDirection(s.f.path, cv.name,
				[]attr{{"standard_name", sn}, {"long_name", cv.str("long_name")}, {"comment", cv.str("comment")}},
				dirSpec{opt.DirConvention, opt.DirForce})
			if err != nil {
				return err
			}
			sp.DirConvention, sp.DirTo, dirFrom = conv, conv != NauticalFrom, from
			for i, d := range vals {
				d *= fac
				if math.IsNaN(d) || math.IsInf(d, 0) || d < -360 || d > 720 {
					return errf(s.f.path, cv.name, "direction %d is %v (units %q: %v degrees; %s); directions must lie in 0-360 degrees; no spec key overrides a coordinate's values or units: correct the values or the units", i, vals[i], u, d, found)
				}
				sp.DirDeg = append(sp.DirDeg, conv.ToNauticalFrom(d))
			}
			continue
		}
		return errf(s.f.path, cv.name, "coordinate of spectral dimension %q has units %q (%s), which are neither a frequency (Hz, s-1, rad s-1) nor a direction (degree, rad); no spec key overrides a coordinate's attributes: correct its units",
			d, u, found)
	}
	if len(sp.FreqHz) == 0 || (vi.Role == Spectrum2D && len(sp.DirDeg) == 0) {
		return errf(s.f.path, vi.Name, "spectral dimensions %s: found %d frequencies and %d directions; the spectrum needs a frequency and (2-D) a direction coordinate; no spec key overrides a coordinate's attributes: give the frequency coordinate units \"Hz\" (standard_name %s) and the direction coordinate units \"degree\" (standard_name %s)",
			strings.Join(seen, ", "), len(sp.FreqHz), len(sp.DirDeg), FrequencyNames[0], StandardNames[Dir][0])
	}
	// The density: its encoding, then its units against the axes'.
	encKey, basisKey, unitsKey := "units."+string(vi.Role)+"_encoding", "units."+string(vi.Role)+"_basis", "units."+string(vi.Role)
	es := encSpec{enc: opt.Encoding[vi.Role], encKey: encKey, unitsKey: unitsKey, fileUnits: vi.v.str("units")}
	if vi.unitsFromSpec {
		es.units = vi.Units
	}
	enc, encFrom, inner, err := resolveEncoding(s.f.path, vi.Name, es, vi.longName, vi.comment)
	if err != nil {
		return err
	}
	axisRadS := false
	if d, err := parseUnits(freqUnits); err == nil && d.rd == 1 {
		axisRadS = true
	}
	dirRad := false
	if d, err := parseUnits(dirUnits); err == nil && dirUnits != "" && d.deg == 0 {
		dirRad = true
	}
	du, err := readDensityUnits(inner, roleQuantity[vi.Role], axisRadS, dirRad, opt.Basis[vi.Role], basisKey)
	if err != nil {
		return errf(s.f.path, vi.Name, "%v", err)
	}
	vi.Encoding, vi.Factor, vi.logStored = enc, du.factor, enc == Log10 || enc == Ln
	rd := func(what, reading, from string) Reading {
		return Reading{Role: vi.Role, Variable: vi.Name, What: what, Reading: reading, From: from}
	}
	if vi.Role == Spectrum2D {
		s.readings = append(s.readings, rd("direction convention", string(sp.DirConvention)+": "+sp.DirConvention.Describe(), dirFrom))
	}
	encReading := string(enc)
	if enc != Linear {
		encReading += map[Encoding]string{Log10: ": stored as log10 of the density, decoded as 10^x", Ln: ": stored as the natural logarithm of the density, decoded as e^x"}[enc]
	}
	s.readings = append(s.readings, rd("density encoding", encReading, encFrom))
	unitsFrom := fmt.Sprintf("units %q", vi.v.str("units"))
	if vi.unitsFromSpec {
		unitsFrom = fmt.Sprintf("spec %s = %q", unitsKey, vi.Units)
	}
	ur := rd("density units", du.text, unitsFrom)
	if du.stated {
		ur.From += fmt.Sprintf(" and spec %s", basisKey)
	}
	ur.Ambiguous, ur.Other, ur.Stated = du.ambiguous, du.other, du.stated
	if du.ambiguous {
		ur.Key = basisKey
	}
	s.readings = append(s.readings, ur)
	s.spectral = sp
	return nil
}

// physical reports whether an unpacked value (SI units) is possible for a
// role: heights and spectral densities are >= 0, periods > 0 (common
// practice: definitions of the quantities). Directions are always possible
// (they are wrapped). counts.possible applies the same rule to a tally.
func physical(r Role, x float64) bool {
	switch r {
	case Hm0, Spectrum1D, Spectrum2D:
		return x >= 0
	case Te, Tp:
		return x > 0
	}
	return true
}

func physicalRule(r Role) string {
	switch r {
	case Hm0, Spectrum1D, Spectrum2D:
		return ">= 0"
	case Te, Tp:
		return "> 0"
	}
	return "valid"
}

func sameFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-9*math.Max(1, math.Abs(a[i])) {
			return false
		}
	}
	return true
}

// readStatic reads a field with only grid dimensions into dst (canonical
// cell order), unpacked and in SI units.
// A field that varies in time (depth with tides) gives its first step.
func (s *scan) readStatic(vi *VarInfo, dst []float64) error {
	shape := append([]uint64(nil), vi.v.shape...)
	for k, ax := range vi.axes {
		if ax == axT {
			shape[k] = 1
		}
	}
	n := 1
	for _, d := range shape {
		n *= int(d)
	}
	raw := make([]float64, n)
	if err := vi.v.readSlab(s.f.path, make([]uint64, len(shape)), shape, raw); err != nil {
		return err
	}
	invX, invY := invert(s.grid.XFile), invert(s.grid.YFile)
	nx := s.grid.NX
	for i, x := range raw {
		var fx, fy int
		rem := i
		for k := len(shape) - 1; k >= 0; k-- {
			idx := rem % int(shape[k])
			rem /= int(shape[k])
			switch vi.axes[k] {
			case axX, axP:
				fx = idx
			case axY:
				fy = idx
			}
		}
		cell := invY[fy]*nx + invX[fx]
		dst[cell] = vi.unpack(x)
	}
	return nil
}

// static reports whether a role is a field without a time dimension.
func static(r Role) bool { return r == Depth || r == Mask }
