package synth

import (
	"fmt"
	"math"
	"os"
	"path/filepath"

	"github.com/fhs/go-netcdf/netcdf"
)

// FillFloat is the _FillValue of float variables (the netCDF default NC_FILL_FLOAT).
const FillFloat float32 = 9.96921e36

// FillShort is the _FillValue of packed int16 variables.
const FillShort int16 = -32767

// monthSpan is one calendar month of the record.
type monthSpan struct {
	start      Date
	steps      int
	startHour  float64 // hours from the record start
	endHour    float64
	phaseMid   float64 // year fraction at mid-month
	firstIndex int     // index of the first step in the whole record
}

func (s *Scenario) monthSpans() []monthSpan {
	var out []monthSpan
	h, idx := 0.0, 0
	for k := 0; k < s.Months; k++ {
		d := addMonths(s.Start, k)
		days := s.Calendar.daysInMonth(d.Year, d.Month)
		m := monthSpan{start: d, steps: days * 24 / s.StepHours, startHour: h, endHour: h + float64(days*24), firstIndex: idx}
		m.phaseMid = (float64(s.Calendar.dayOfYear(d)) + float64(days)/2) / float64(s.Calendar.daysInYear(d.Year))
		out = append(out, m)
		h = m.endHour
		idx += m.steps
	}
	return out
}

// bulkVar describes one bulk output variable.
type bulkVar struct {
	name, std, units, long string
	scale, offset          float32 // int16 packing
}

var bulkVars = []bulkVar{
	{"hm0", "sea_surface_wave_significant_height", "m", "spectral significant wave height Hm0", 0.001, 0},
	{"te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", "energy period Te = m-1/m0", 0.001, 0},
	{"tp", "sea_surface_wave_period_at_variance_spectral_density_maximum", "s", "peak period Tp", 0.001, 0},
	{"wdir", "sea_surface_wave_from_direction", "degree", "mean direction waves come from, clockwise from north", 0.01, 180},
}

var depthVar = bulkVar{"depth", "sea_floor_depth_below_sea_surface", "m", "sea floor depth below mean sea surface", 0.01, 0}

const syntheticComment = "Invented, synthetic data made by the swellgrid synthetic hindcast generator " +
	"(package pipelines/synth). The sea states, coastline and depths describe no real place; " +
	"they are for tests and demonstrations only and must not be used for any real assessment."

// ncFile is one output file being written.
type ncFile struct {
	path, tmp string
	ds        netcdf.Dataset
	time      netcdf.Var
	vars      []netcdf.Var // bulk: hm0 te tp wdir; spectral: dirspec or freqspec
	perm      []int        // file cell order -> site index
	nsp       int          // cells (or stations) per time step
	t0        int          // first record index of this file
}

// Write writes the scenario into dir (created if missing) and returns the
// paths written, in order. Files are named <Name>.nc, or <Name>_YYYY-MM.nc
// with PerMonth; a scenario with both bulk fields and spectra writes
// <Name>_bulk[_YYYY-MM].nc and <Name>_spec[_YYYY-MM].nc, so that each kind has
// its own glob. Each file is written under a temporary name and
// renamed when complete. Same scenario, same values, whatever the machine.
func (s *Scenario) Write(dir string) ([]string, error) {
	if err := s.Check(); err != nil {
		return nil, err
	}
	c := s.withDefaults()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("synth: make output directory: %w", err)
	}
	tu, _ := parseTimeUnits(c.TimeUnits)
	months := c.monthSpans()
	sites := c.sites()
	gen := newSeaStates(&c, sites, months)
	var sp *specBuilder
	if c.Spectra != nil {
		sp = newSpecBuilder(&c, sites)
	}

	nBulk := 0
	var perm []int
	if c.Bulk {
		perm = c.filePerm(len(sites))
		if c.Grid.Kind == Mesh {
			perm = meshPerm(sites) // land is where the mesh is not
		}
		nBulk = len(perm)
	}
	nSpec := 0
	if sp != nil {
		nSpec = len(sp.stations)
	}
	// One producer goroutine generates the months in order (the only user of
	// the random streams, so the values do not depend on scheduling); this
	// goroutine makes every NetCDF call.
	blocks := make(chan *monthBlock, 1)
	stop := make(chan struct{})
	defer close(stop)
	go func() {
		defer close(blocks)
		for _, m := range months {
			blk := c.genMonth(m, tu, gen, sp, perm, nBulk, nSpec)
			select {
			case blocks <- blk:
			case <-stop:
				return
			}
		}
	}()

	groups := [][]monthSpan{months}
	if c.PerMonth {
		groups = nil
		for _, m := range months {
			groups = append(groups, []monthSpan{m})
		}
	}
	var written []string
	for _, grp := range groups {
		suffix := ""
		if c.PerMonth {
			suffix = fmt.Sprintf("_%04d-%02d", grp[0].start.Year, grp[0].start.Month)
		}
		nt := 0
		for _, m := range grp {
			nt += m.steps
		}
		var bulkF, specF *ncFile
		var err error
		if c.Bulk {
			name := c.Name + suffix + ".nc"
			if sp != nil {
				name = c.Name + "_bulk" + suffix + ".nc"
			}
			if bulkF, err = c.createBulk(filepath.Join(dir, name), nt, sites, perm); err != nil {
				return written, err
			}
			bulkF.t0 = grp[0].firstIndex
		}
		if sp != nil {
			name := c.Name + suffix + ".nc"
			if c.Bulk {
				name = c.Name + "_spec" + suffix + ".nc"
			}
			if specF, err = c.createSpec(filepath.Join(dir, name), nt, sites, sp); err != nil {
				abort(bulkF)
				return written, err
			}
			specF.t0 = grp[0].firstIndex
		}
		for range grp {
			blk := <-blocks
			if err := c.putMonth(blk, bulkF, specF); err != nil {
				abort(bulkF)
				abort(specF)
				return written, err
			}
		}
		for _, f := range []*ncFile{bulkF, specF} {
			if f == nil {
				continue
			}
			if err := f.finish(); err != nil {
				abort(specF)
				return written, err
			}
			written = append(written, f.path)
		}
	}
	return written, nil
}

func abort(f *ncFile) {
	if f != nil {
		f.ds.Close()
		os.Remove(f.tmp)
	}
}

func (f *ncFile) finish() error {
	if err := f.ds.Close(); err != nil {
		os.Remove(f.tmp)
		return fmt.Errorf("synth: close %s: %w", f.tmp, err)
	}
	if err := os.Rename(f.tmp, f.path); err != nil {
		return fmt.Errorf("synth: rename %s to %s: %w", f.tmp, f.path, err)
	}
	return nil
}

// monthBlock is one generated month, ready to write.
type monthBlock struct {
	m     monthSpan
	times []float64
	bulk  [4][]float64 // hm0, te, tp, wdir in file cell order, time-major
	spec  []float32
}

// genMonth generates the month's steps (no NetCDF calls).
func (c *Scenario) genMonth(m monthSpan, tu timeUnits, gen *seaStates, sp *specBuilder, perm []int, nBulk, nSpec int) *monthBlock {
	blk := &monthBlock{m: m, times: make([]float64, m.steps)}
	if nBulk > 0 {
		for k := range blk.bulk {
			blk.bulk[k] = make([]float64, m.steps*nBulk)
		}
	}
	var n int
	if sp != nil {
		n = sp.perStation()
		blk.spec = make([]float32, m.steps*nSpec*n)
	}
	yearDays := float64(c.Calendar.daysInYear(m.start.Year))
	doy0 := float64(c.Calendar.dayOfYear(m.start))
	for k := 0; k < m.steps; k++ {
		hr := k * c.StepHours
		d := Date{Year: m.start.Year, Month: m.start.Month, Day: 1 + hr/24, Hour: hr % 24}
		blk.times[k] = tu.value(c.Calendar, d)
		gen.step(m.startHour+float64(hr), (doy0+float64(hr)/24)/yearDays)
		for j, si := range perm {
			o := k*nBulk + j
			blk.bulk[0][o], blk.bulk[1][o], blk.bulk[2][o], blk.bulk[3][o] = gen.hm0[si], gen.te[si], gen.tp[si], gen.dir[si]
		}
		for j := 0; j < nSpec; j++ {
			o := (k*nSpec + j) * n
			sp.fill(blk.spec[o:o+n], j, gen)
		}
	}
	return blk
}

// putMonth writes a generated month to the open files.
func (c *Scenario) putMonth(blk *monthBlock, bulkF, specF *ncFile) error {
	m := blk.m
	for _, f := range []*ncFile{bulkF, specF} {
		if f == nil {
			continue
		}
		start := []uint64{uint64(m.firstIndex - f.t0)}
		if err := f.time.WriteFloat64Slice(blk.times, start, []uint64{uint64(m.steps)}); err != nil {
			return fmt.Errorf("synth: write time to %s: %w", f.tmp, err)
		}
	}
	if bulkF != nil {
		for k, v := range bulkF.vars {
			if err := c.writeField(v, blk.bulk[k], bulkVars[k], m.firstIndex-bulkF.t0, m.steps); err != nil {
				return fmt.Errorf("synth: write %s to %s: %w", bulkVars[k].name, bulkF.tmp, err)
			}
		}
	}
	if specF != nil {
		dims, err := specF.vars[0].LenDims()
		if err != nil {
			return err
		}
		start := make([]uint64, len(dims))
		count := append([]uint64(nil), dims...)
		start[0], count[0] = uint64(m.firstIndex-specF.t0), uint64(m.steps)
		if err := specF.vars[0].WriteFloat32Slice(blk.spec, start, count); err != nil {
			return fmt.Errorf("synth: write spectra to %s: %w", specF.tmp, err)
		}
	}
	return nil
}

// writeField writes steps time steps of a bulk variable from record index t0,
// as float32 or packed int16 (NaN becomes the fill value).
func (c *Scenario) writeField(v netcdf.Var, vals []float64, bv bulkVar, t0, steps int) error {
	dims, err := v.LenDims()
	if err != nil {
		return err
	}
	start := make([]uint64, len(dims))
	count := append([]uint64(nil), dims...)
	start[0], count[0] = uint64(t0), uint64(steps)
	if c.Packing == Int16 {
		return v.WriteInt16Slice(packInt16(vals, bv), start, count)
	}
	return v.WriteFloat32Slice(toFloat32(vals, c.KeepBits), start, count)
}

// toFloat32 converts to float32 (NaN becomes the fill value), rounding to
// keep mantissa bits when keep is in 1..22.
func toFloat32(vals []float64, keep int) []float32 {
	out := make([]float32, len(vals))
	for i, x := range vals {
		if math.IsNaN(x) {
			out[i] = FillFloat
		} else {
			out[i] = roundMantissa(float32(x), keep)
		}
	}
	return out
}

// packInt16 packs values as round((x - add_offset)/scale_factor) (CF
// Conventions 1.8 section 8.1: unpacked = packed * scale_factor + add_offset).
func packInt16(vals []float64, bv bulkVar) []int16 {
	out := make([]int16, len(vals))
	for i, x := range vals {
		if math.IsNaN(x) {
			out[i] = FillShort
			continue
		}
		p := math.Round((x - float64(bv.offset)) / float64(bv.scale))
		out[i] = int16(math.Max(-32766, math.Min(32767, p)))
	}
	return out
}

// --- file definition -------------------------------------------------------

type defs struct {
	ds  netcdf.Dataset
	err error
	at  string // file, for messages
}

func (d *defs) text(a netcdf.Attr, s string) {
	if d.err == nil {
		d.err = a.WriteBytes([]byte(s))
	}
}
func (d *defs) f64(a netcdf.Attr, v ...float64) {
	if d.err == nil {
		d.err = a.WriteFloat64s(v)
	}
}
func (d *defs) f32(a netcdf.Attr, v ...float32) {
	if d.err == nil {
		d.err = a.WriteFloat32s(v)
	}
}
func (d *defs) i16(a netcdf.Attr, v ...int16) {
	if d.err == nil {
		d.err = a.WriteInt16s(v)
	}
}
func (d *defs) i8(a netcdf.Attr, v ...int8) {
	if d.err == nil {
		d.err = a.WriteInt8s(v)
	}
}
func (d *defs) dim(name string, n int) netcdf.Dim {
	if d.err != nil {
		return netcdf.Dim{}
	}
	dm, err := d.ds.AddDim(name, uint64(n))
	d.err = err
	return dm
}
func (d *defs) v(name string, t netcdf.Type, dims ...netcdf.Dim) netcdf.Var {
	if d.err != nil {
		return netcdf.Var{}
	}
	v, err := d.ds.AddVar(name, t, dims)
	if err != nil {
		d.err = fmt.Errorf("define variable %s: %w", name, err)
	}
	return v
}

func (c *Scenario) create(path string) (*ncFile, *defs, error) {
	f := &ncFile{path: path, tmp: path + ".part"}
	mode := netcdf.CLOBBER
	if c.Format == NetCDF4 {
		mode |= netcdf.NETCDF4
	}
	ds, err := netcdf.CreateFile(f.tmp, mode)
	if err != nil {
		return nil, nil, fmt.Errorf("synth: create %s: %w (check the directory is writable)", f.tmp, err)
	}
	f.ds = ds
	d := &defs{ds: ds, at: f.tmp}
	g := ds.Attr
	d.text(g("Conventions"), "CF-1.8")
	d.text(g("title"), c.Title)
	d.text(g("synthetic"), "yes")
	d.text(g("comment"), syntheticComment)
	d.text(g("source"), "swellgrid synthetic hindcast generator; invented sea states, not model or measured data")
	d.text(g("synthetic_place"), c.Place+"; fictional: the coordinates are arbitrary and no such coast exists there")
	d.text(g("synthetic_scenario"), c.Name)
	d.text(g("synthetic_seed"), fmt.Sprint(c.Seed))
	d.text(g("caution"), "Invented data for software tests and demonstrations only. Not for design, siting, consenting or any decision.")
	return f, d, nil
}

func (c *Scenario) defineTime(d *defs, nt int) (netcdf.Dim, netcdf.Var) {
	td := d.dim("time", nt)
	tv := d.v("time", netcdf.DOUBLE, td)
	d.text(tv.Attr("standard_name"), "time")
	d.text(tv.Attr("long_name"), "time")
	d.text(tv.Attr("units"), c.TimeUnits)
	d.text(tv.Attr("calendar"), string(c.Calendar))
	d.text(tv.Attr("axis"), "T")
	return td, tv
}

func (d *defs) coordAttrs(lon, lat netcdf.Var, axes bool) {
	d.text(lon.Attr("standard_name"), "longitude")
	d.text(lon.Attr("long_name"), "longitude")
	d.text(lon.Attr("units"), "degrees_east")
	d.text(lat.Attr("standard_name"), "latitude")
	d.text(lat.Attr("long_name"), "latitude")
	d.text(lat.Attr("units"), "degrees_north")
	if axes {
		d.text(lon.Attr("axis"), "X")
		d.text(lat.Attr("axis"), "Y")
	}
}

func (c *Scenario) compress(d *defs, v netcdf.Var) {
	if c.Format == NetCDF4 && c.Deflate > 0 && d.err == nil {
		d.err = v.SetCompression(true, true, c.Deflate)
	}
}

// createBulk defines a bulk file: coordinates, hm0, te, tp, wdir (time, ...),
// depth and optionally the sea mask, and writes the time-independent fields.
func (c *Scenario) createBulk(path string, nt int, sites []site, perm []int) (*ncFile, error) {
	f, d, err := c.create(path)
	if err != nil {
		return nil, err
	}
	g := c.Grid
	td, tv := c.defineTime(d, nt)
	f.time = tv
	var sdims []netcdf.Dim
	var lonV, latV netcdf.Var
	var lonVals, latVals []float64
	auxCoords := true
	var writeMesh func() error
	switch g.Kind {
	case Regular:
		latD, lonD := d.dim("lat", g.NY), d.dim("lon", g.NX)
		latV, lonV = d.v("lat", netcdf.DOUBLE, latD), d.v("lon", netcdf.DOUBLE, lonD)
		d.coordAttrs(lonV, latV, true)
		auxCoords = false
		for a := 0; a < g.NY; a++ {
			latVals = append(latVals, sites[c.fileLatRow(a)*g.NX].lat)
		}
		for b := 0; b < g.NX; b++ {
			lonVals = append(lonVals, sites[b].lon)
		}
		sdims = []netcdf.Dim{latD, lonD}
		if g.LonFirst {
			sdims = []netcdf.Dim{lonD, latD}
		}
	case Curvilinear:
		yD, xD := d.dim("y", g.NY), d.dim("x", g.NX)
		sdims = []netcdf.Dim{yD, xD}
		lonV, latV = d.v("lon", netcdf.DOUBLE, yD, xD), d.v("lat", netcdf.DOUBLE, yD, xD)
		d.coordAttrs(lonV, latV, false)
		for _, st := range sites {
			lonVals, latVals = append(lonVals, st.lon), append(latVals, st.lat)
		}
	case Points:
		sD := d.dim("station", g.NX)
		sdims = []netcdf.Dim{sD}
		lonV, latV = d.v("lon", netcdf.DOUBLE, sD), d.v("lat", netcdf.DOUBLE, sD)
		d.coordAttrs(lonV, latV, false)
		for _, st := range sites {
			lonVals, latVals = append(lonVals, st.lon), append(latVals, st.lat)
		}
	case Mesh:
		nD := d.dim("node", len(perm))
		sdims = []netcdf.Dim{nD}
		lonV, latV = d.v("lon", netcdf.DOUBLE, nD), d.v("lat", netcdf.DOUBLE, nD)
		d.coordAttrs(lonV, latV, false)
		for _, si := range perm {
			lonVals, latVals = append(lonVals, sites[si].lon), append(latVals, sites[si].lat)
		}
		writeMesh = c.defineMesh(d, nD, sites, perm)
	}
	f.perm = perm
	f.nsp = len(f.perm)
	dataType := netcdf.FLOAT
	if c.Packing == Int16 {
		dataType = netcdf.SHORT
	}
	attrs := func(v netcdf.Var, bv bulkVar) {
		d.text(v.Attr("standard_name"), bv.std)
		d.text(v.Attr("long_name"), bv.long)
		d.text(v.Attr("units"), bv.units)
		if c.Packing == Int16 {
			d.i16(v.Attr("_FillValue"), FillShort)
			d.f32(v.Attr("scale_factor"), bv.scale)
			d.f32(v.Attr("add_offset"), bv.offset)
		} else {
			d.f32(v.Attr("_FillValue"), FillFloat)
		}
		if auxCoords {
			d.text(v.Attr("coordinates"), "lon lat")
		}
		if g.Kind == Mesh {
			d.text(v.Attr("mesh"), "mesh")
			d.text(v.Attr("location"), "node")
		}
		if k := c.KeepBits; k >= 1 && k <= 22 && c.Packing == Float32 && bv.name != depthVar.name {
			d.text(v.Attr("synthetic_precision"), fmt.Sprintf("values rounded to %d float32 mantissa bits (relative error below %.1e) to help compression", k, math.Ldexp(1, -(k+1))))
		}
		d.text(v.Attr("comment"), "synthetic: invented values, no real place")
		c.compress(d, v)
	}
	for _, bv := range bulkVars {
		v := d.v(bv.name, dataType, append([]netcdf.Dim{td}, sdims...)...)
		attrs(v, bv)
		f.vars = append(f.vars, v)
	}
	depV := d.v(depthVar.name, dataType, sdims...)
	attrs(depV, depthVar)
	d.text(depV.Attr("positive"), "down")
	var maskV netcdf.Var
	if c.Mask {
		maskV = d.v("sea_mask", netcdf.BYTE, sdims...)
		d.text(maskV.Attr("standard_name"), "sea_binary_mask")
		d.text(maskV.Attr("long_name"), "1 on sea cells, 0 on land")
		d.i8(maskV.Attr("flag_values"), 0, 1)
		d.text(maskV.Attr("flag_meanings"), "land sea")
		if auxCoords {
			d.text(maskV.Attr("coordinates"), "lon lat")
		}
	}
	if d.err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: define %s: %w", f.tmp, d.err)
	}
	if err := f.ds.EndDef(); err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: end definitions of %s: %w", f.tmp, err)
	}
	depth := make([]float64, f.nsp)
	mask := make([]int8, f.nsp)
	for j, si := range f.perm {
		depth[j] = sites[si].depth
		if sites[si].sea {
			mask[j] = 1
		}
	}
	err = lonV.WriteFloat64s(lonVals)
	if err == nil {
		err = latV.WriteFloat64s(latVals)
	}
	if err == nil {
		if c.Packing == Int16 {
			err = depV.WriteInt16s(packInt16(depth, depthVar))
		} else {
			err = depV.WriteFloat32s(toFloat32(depth, 0))
		}
	}
	if err == nil && c.Mask {
		err = maskV.WriteInt8s(mask)
	}
	if err == nil && writeMesh != nil {
		err = writeMesh()
	}
	if err != nil {
		abort(f)
		return nil, fmt.Errorf("synth: write coordinates and depth to %s: %w", f.tmp, err)
	}
	return f, nil
}

// filePerm maps the bulk file's cell order (the flattened spatial dimensions
// as written) to the internal site index.
func (c *Scenario) filePerm(nSites int) []int {
	g := c.Grid
	if g.Kind != Regular {
		perm := make([]int, nSites)
		for i := range perm {
			perm[i] = i
		}
		return perm
	}
	var perm []int
	if g.LonFirst {
		for b := 0; b < g.NX; b++ {
			for a := 0; a < g.NY; a++ {
				perm = append(perm, c.fileLatRow(a)*g.NX+b)
			}
		}
		return perm
	}
	for a := 0; a < g.NY; a++ {
		for b := 0; b < g.NX; b++ {
			perm = append(perm, c.fileLatRow(a)*g.NX+b)
		}
	}
	return perm
}

// fileLatRow maps the file's latitude index a to the internal south-to-north row.
func (c *Scenario) fileLatRow(a int) int {
	if c.Grid.LatDescending {
		return c.Grid.NY - 1 - a
	}
	return a
}
