// Package raster writes atlas.nc: the per-cell results of a finished run as a
// CF-1.8 NetCDF-4 raster on the run's own grid (regular: 1-D lat/lon axes;
// curvilinear: the 2-D lat/lon of the input), for GIS users who load mean
// power as a raster layer rather than as points. Longitudes are in the
// grid's continuous frame (grid.LonFrame: 0..360 for a grid across 180
// degrees, as the lon variable's comment says), so that a regular grid keeps
// a regular axis and its raster a geotransform.
//
// Every numeric column of cells.parquet becomes a 2-D variable with units,
// long_name, and standard_name and cell_methods where the schema gives them,
// tied to a WGS 84 grid_mapping; the calendar-month climatology of power and
// Hm0 from monthly.parquet becomes (month, y, x). raster encodes values it is
// given (through export/rundir); it computes nothing. Its NetCDF calls run
// inside ingest.WithNetCDF, the lock every NetCDF call of the program takes,
// because NetCDF-C and HDF5 are not thread-safe.
package raster

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/ingest"
)

// FileName is the raster's name in the run directory.
const FileName = contract.AtlasNCFile

// IntFill is the _FillValue of the integer variables (counts; never negative).
const IntFill int64 = -1

// WGS84WKT is the OGC WKT of EPSG:4326 (WGS 84 geographic 2-D), as GDAL
// writes it (OGC 06-103r4 / EPSG registry).
const WGS84WKT = `GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AXIS["Latitude",NORTH],AXIS["Longitude",EAST],AUTHORITY["EPSG","4326"]]`

// CFUnits maps swellgrid's column units to UDUNITS-2 strings, which CF
// requires ("kW/m" -> "kW m-1"); units already in UDUNITS form pass through.
func CFUnits(u string) string {
	switch u {
	case "kW/m":
		return "kW m-1"
	case "MWh/yr":
		return "MW h yr-1"
	case "1/yr":
		return "yr-1"
	case contract.LCOEUnit: // UDUNITS has no currency: per MWh, the currency in long_name
		return "MWh-1"
	case "degree":
		return "degree"
	case "":
		return ""
	}
	return strings.ReplaceAll(u, "/", " ")
}

// Write writes dir/atlas.nc from the run r, atomically: a temporary file in
// dir renamed when complete. Point sets have no raster and are refused.
func Write(r *rundir.Run) error {
	if !r.Structured() && r.Mesh == nil {
		return fmt.Errorf("raster: %s: the grid is a point set (%s); there is no raster to write, use cells.parquet or atlas.gpkg", r.Dir, r.GridKind)
	}
	// the columns Climatology reads, not the whole table (a large grid's
	// monthly.parquet has a row per cell and month)
	var monthly *rundir.Table
	if r.Manifest == nil || r.Manifest.Parameters.Output.LongTablesCells != contract.LongCellsSites {
		// (With output.long_tables_cells = "sites", monthly.parquet has the
		// sites' cells only: the monthly layers would be blank everywhere
		// else, so they are left out.)
		var err error
		if monthly, err = r.Columns(contract.TableMonthly, "period", contract.ColCellID, "month", contract.ColPowerMean, contract.ColHm0Mean); err != nil {
			return err
		}
	}
	final := filepath.Join(r.Dir, FileName)
	part, err := export.NewPartial(r.Dir, FileName)
	if err != nil {
		return err
	}
	defer part.Close()
	tmp := part.File() // NetCDF-C and SQLite write by path: see export.Partial
	err = ingest.WithNetCDF(func() error {
		if r.Mesh != nil {
			return writeMesh(tmp, r, monthly) // ugrid.go
		}
		return write(tmp, r, monthly)
	})
	if err != nil {
		err = rundir.NoSpace(r.Dir, err) // NetCDF-C says only "HDF error"; before the partial file's space is freed
		return fmt.Errorf("raster: writing %s: %w", final, err)
	}
	return part.CommitFile(final)
}

// text writes the text attribute a; an empty value is left out (go-netcdf's
// WriteBytes takes the address of the first byte, so a zero-length value
// would panic, and an absent attribute reads the same to CF readers).
func text(a netcdf.Attr, s string) error {
	if s == "" {
		return nil
	}
	return a.WriteBytes([]byte(s))
}

// globalAttrs writes the global attributes of atlas.nc, on grids and on
// meshes alike: conventions, title, source (what the file holds), the record,
// the depth source, the caution and the synthetic label of demo data.
func globalAttrs(ds netcdf.Dataset, r *rundir.Run, conventions, holds string) error {
	m := r.Manifest
	for _, kv := range [][2]string{
		{"Conventions", conventions},
		{"title", "swellgrid wave-energy resource atlas"},
		{"source", fmt.Sprintf("%s %s: %s", m.Software, m.Version, holds)},
		{"time_coverage_start", m.Start},
		{"time_coverage_end", m.End},
		{"calendar_of_record", m.Calendar},
		{"depth_source", m.DepthSource},
		{"caution", m.Caution},
	} {
		if err := text(ds.Attr(kv[0]), kv[1]); err != nil {
			return err
		}
	}
	if s := r.Cells.Meta["swellgrid:synthetic"]; s != "" {
		if err := text(ds.Attr("comment"), s); err != nil {
			return err
		}
	}
	return nil
}

func write(path string, r *rundir.Run, monthly *rundir.Table) (err error) {
	ds, err := netcdf.CreateFile(path, netcdf.CLOBBER|netcdf.NETCDF4)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := ds.Close(); err == nil && cerr != nil {
			err = cerr
		}
	}()
	nx, ny := r.NX, r.NY
	var yd, xd netcdf.Dim
	regular := r.GridKind == grid.Regular
	yn, xn := "y", "x"
	if regular {
		yn, xn = "lat", "lon"
	}
	gm := nativeMapping(r)
	if gm != nil {
		yn, xn = axisNames(r, gm)
	}
	if yd, err = ds.AddDim(yn, uint64(ny)); err != nil {
		return err
	}
	if xd, err = ds.AddDim(xn, uint64(nx)); err != nil {
		return err
	}
	md, err := ds.AddDim("month", 12)
	if err != nil {
		return err
	}
	if err := globalAttrs(ds, r, "CF-1.8", "per-cell results of a wave hindcast (cells.parquet, monthly.parquet of this run directory)"); err != nil {
		return err
	}
	crs, err := ds.AddVar("crs", netcdf.INT, nil)
	if err != nil {
		return err
	}
	if gm != nil {
		// the input's own grid mapping, every attribute as the input gave it
		if err := nativeAxes(ds, crs, gm, yd, xd, yn, xn); err != nil {
			return err
		}
	} else if err := text(crs.Attr("grid_mapping_name"), "latitude_longitude"); err != nil {
		return err
	}
	if gm == nil {
		if err := crs.Attr("semi_major_axis").WriteFloat64s([]float64{6378137}); err != nil {
			return err
		}
		if err := crs.Attr("inverse_flattening").WriteFloat64s([]float64{298.257223563}); err != nil {
			return err
		}
		if err := crs.Attr("longitude_of_prime_meridian").WriteFloat64s([]float64{0}); err != nil {
			return err
		}
		if err := text(crs.Attr("crs_wkt"), WGS84WKT); err != nil {
			return err
		}
		if err := text(crs.Attr("spatial_ref"), WGS84WKT); err != nil { // GDAL reads this name
			return err
		}
	}
	fr := r.Frame()
	lonComment := fmt.Sprintf("longitudes in the grid's continuous frame %s", fr)
	if fr.Crosses180() {
		lonComment += " (the grid crosses 180 degrees east/west; cells.parquet gives the same positions in [-180, 180))"
	}
	coord := func(name, std, units, long, axis string, dims []netcdf.Dim, vals []float64) error {
		v, err := ds.AddVar(name, netcdf.DOUBLE, dims)
		if err != nil {
			return err
		}
		comment := ""
		if name == "lon" {
			comment = lonComment
		}
		for _, kv := range [][2]string{{"standard_name", std}, {"units", units}, {"long_name", long}, {"axis", axis}, {"comment", comment}} {
			if kv[1] == "" {
				continue
			}
			if err := text(v.Attr(kv[0]), kv[1]); err != nil {
				return err
			}
		}
		return v.WriteFloat64s(vals)
	}
	lon, lat := fr.ShiftAll(r.Lon()), r.Lat()
	dims2 := []netcdf.Dim{yd, xd}
	coordsAttr := ""
	if regular {
		if err := coord("lat", "latitude", "degrees_north", "latitude", "Y", []netcdf.Dim{yd}, column(lat, nx, ny, false)); err != nil {
			return err
		}
		if err := coord("lon", "longitude", "degrees_east", "longitude", "X", []netcdf.Dim{xd}, column(lon, nx, ny, true)); err != nil {
			return err
		}
	} else {
		if err := coord("lat", "latitude", "degrees_north", "latitude", "", dims2, lat); err != nil {
			return err
		}
		if err := coord("lon", "longitude", "degrees_east", "longitude", "", dims2, lon); err != nil {
			return err
		}
		coordsAttr = "lat lon"
	}
	months := make([]int32, 12)
	for i := range months {
		months[i] = int32(i + 1)
	}
	mv, err := ds.AddVar("month", netcdf.INT, []netcdf.Dim{md})
	if err != nil {
		return err
	}
	if err := text(mv.Attr("long_name"), "calendar month (1 = January)"); err != nil {
		return err
	}
	if err := text(mv.Attr("units"), "1"); err != nil {
		return err
	}
	if err := mv.WriteInt32s(months); err != nil {
		return err
	}
	attrs := func(v netcdf.Var, c *rundir.Column, long string) error {
		for _, kv := range [][2]string{{"units", CFUnits(c.Unit)}, {"long_name", long}, {"standard_name", c.StandardName},
			{"cell_methods", c.CellMethods}, {"grid_mapping", "crs"}, {"coordinates", coordsAttr}} {
			if kv[1] == "" {
				continue
			}
			if err := text(v.Attr(kv[0]), kv[1]); err != nil {
				return err
			}
		}
		return nil
	}
	// floatVar adds a compressed double variable with a NaN fill, its
	// attributes and its values.
	floatVar := func(name string, dims []netcdf.Dim, c *rundir.Column, long string, vals []float64) error {
		return addFloatVar(ds, name, dims, vals, func(v netcdf.Var) error { return attrs(v, c, long) })
	}
	for _, c := range r.Cells.Columns {
		if !c.Numeric() || c.Name == contract.ColLon || c.Name == contract.ColLat {
			continue
		}
		long := c.LongName
		if long == "" {
			long = c.Doc
		}
		switch c.Kind {
		case rundir.Float:
			if err := floatVar(c.Name, dims2, c, long, c.Float); err != nil {
				return err
			}
		case rundir.Int:
			v, err := ds.AddVar(c.Name, netcdf.INT64, dims2)
			if err != nil {
				return err
			}
			if err := v.SetCompression(true, true, 4); err != nil {
				return err
			}
			if err := v.Attr("_FillValue").WriteInt64s([]int64{IntFill}); err != nil {
				return err
			}
			if err := attrs(v, c, long); err != nil {
				return err
			}
			vals := make([]int64, len(c.Int))
			for i, x := range c.Int {
				vals[i] = x
				if !c.Valid[i] {
					vals[i] = IntFill
				}
			}
			if err := v.WriteInt64s(vals); err != nil {
				return fmt.Errorf("variable %s: %w", c.Name, err)
			}
		}
	}
	if err := lcoeVars(ds, r, func(c *rundir.Column, long string) error { return floatVar(c.Name, dims2, c, long, c.Float) }); err != nil {
		return err
	}
	if monthly == nil {
		return nil
	}
	clim, err := Climatology(monthly, nx*ny)
	if err != nil {
		return err
	}
	for _, cv := range []struct{ name, col, std, long string }{
		{"power_monthly_mean_kw_m", contract.ColPowerMean, "", "mean wave power J of each calendar month over the included years"},
		{"hm0_monthly_mean_m", contract.ColHm0Mean, "sea_surface_wave_significant_height", "mean significant wave height Hm0 of each calendar month over the included years"},
	} {
		c := &rundir.Column{Unit: monthly.Col(cv.col).Unit, StandardName: cv.std, CellMethods: "time: mean"}
		if err := floatVar(cv.name, []netcdf.Dim{md, yd, xd}, c, cv.long, clim[cv.col]); err != nil {
			return err
		}
	}
	return nil
}

// column extracts a regular grid's 1-D axis from the per-cell coordinates in
// canonical order (rows of ascending latitude, each of ascending longitude).
// addFloatVar adds a compressed double variable with a NaN fill, the
// attributes set writes, and its values; atlas.nc on grids and on meshes both
// use it.
func addFloatVar(ds netcdf.Dataset, name string, dims []netcdf.Dim, vals []float64, set func(netcdf.Var) error) error {
	v, err := ds.AddVar(name, netcdf.DOUBLE, dims)
	if err != nil {
		return err
	}
	if err := v.SetCompression(true, true, 4); err != nil {
		return err
	}
	if err := v.Attr("_FillValue").WriteFloat64s([]float64{math.NaN()}); err != nil {
		return err
	}
	if err := set(v); err != nil {
		return err
	}
	if err := v.WriteFloat64s(vals); err != nil {
		return fmt.Errorf("variable %s: %w", name, err)
	}
	return nil
}

func column(v []float64, nx, ny int, isLon bool) []float64 {
	if isLon {
		return append([]float64(nil), v[:nx]...)
	}
	out := make([]float64, ny)
	for j := range out {
		out[j] = v[j*nx]
	}
	return out
}

// Climatology arranges the calendar_month rows of monthly.parquet as
// (month, cell) arrays of power_mean_kw_m and hm0_mean_m, NaN where a cell
// has no row.
func Climatology(monthly *rundir.Table, cells int) (map[string][]float64, error) {
	out := map[string][]float64{}
	period, id, month := monthly.Col("period"), monthly.Col(contract.ColCellID), monthly.Col("month")
	if period == nil || id == nil || month == nil {
		return nil, fmt.Errorf("%s: no period, cell_id or month column", monthly.Path)
	}
	for _, name := range []string{contract.ColPowerMean, contract.ColHm0Mean} {
		src := monthly.Col(name)
		if src == nil {
			return nil, fmt.Errorf("%s: no column %s", monthly.Path, name)
		}
		a := make([]float64, 12*cells)
		for i := range a {
			a[i] = math.NaN()
		}
		for i := 0; i < monthly.Rows; i++ {
			if period.Str[i] != "calendar_month" {
				continue
			}
			mo, c := month.Int[i], id.Int[i]
			if mo < 1 || mo > 12 || c < 0 || int(c) >= cells {
				return nil, fmt.Errorf("%s: row %d: month %d of cell %d is out of range", monthly.Path, i, mo, c)
			}
			a[int(mo-1)*cells+int(c)] = src.Float[i]
		}
		out[name] = a
	}
	return out, nil
}

// nativeMapping is the input's projected or rotated native grid when atlas.nc
// is written on it (a curvilinear run whose manifest records the grid
// mapping, with axes of the grid's shape), else nil.
func nativeMapping(r *rundir.Run) *ingest.GridMapping {
	gm := r.Manifest.Grid.Mapping
	if gm == nil || r.GridKind != grid.Curvilinear || len(gm.X) != r.NX || len(gm.Y) != r.NY {
		return nil
	}
	return gm
}

// axisNames are the names of atlas.nc's native axes: the input's, unless one
// would clash with a name atlas.nc uses for something else.
func axisNames(r *rundir.Run, gm *ingest.GridMapping) (y, x string) {
	used := map[string]bool{"lat": true, "lon": true, "month": true, "crs": true}
	for _, c := range r.Cells.Columns {
		used[c.Name] = true
	}
	y, x = gm.YName, gm.XName
	if used[y] || used[x] || y == x || y == "" || x == "" {
		return "y", "x"
	}
	return y, x
}

// nativeAxes writes the native 1-D axes (the input's values, in metres when
// the input gives another length unit, with their standard names; CF 1.8
// section 5.6) and the grid mapping's attributes on
// crs, so that GDAL georeferences atlas.nc in the model's own CRS and the
// 2-D lat/lon stay as auxiliary coordinates.
func nativeAxes(ds netcdf.Dataset, crs netcdf.Var, gm *ingest.GridMapping, yd, xd netcdf.Dim, yn, xn string) error {
	for _, a := range gm.Attrs {
		var err error
		if a.Nums != nil {
			err = crs.Attr(a.Name).WriteFloat64s(a.Nums)
		} else {
			err = text(crs.Attr(a.Name), a.Text)
		}
		if err != nil {
			return fmt.Errorf("grid mapping attribute %s: %w", a.Name, err)
		}
	}
	has := func(n string) bool {
		for _, a := range gm.Attrs {
			if a.Name == n {
				return true
			}
		}
		return false
	}
	if gm.WKT != "" && !has("crs_wkt") {
		if err := text(crs.Attr("crs_wkt"), gm.WKT); err != nil {
			return err
		}
	}
	for _, ax := range []struct {
		name, std, units, axis string
		dim                    netcdf.Dim
		vals                   []float64
	}{{yn, gm.YStd, gm.YUnits, "Y", yd, gm.Y}, {xn, gm.XStd, gm.XUnits, "X", xd, gm.X}} {
		// projected axes in metres, the unit of the mapping's CRS (GDAL
		// takes the axis values as they are)
		if f, ok := ingest.AxisScale(ax.units); ok && f != 1 {
			vals := make([]float64, len(ax.vals))
			for i, x := range ax.vals {
				vals[i] = x * f
			}
			ax.vals, ax.units = vals, "m"
		}
		v, err := ds.AddVar(ax.name, netcdf.DOUBLE, []netcdf.Dim{ax.dim})
		if err != nil {
			return err
		}
		for _, kv := range [][2]string{{"standard_name", ax.std}, {"units", ax.units}, {"axis", ax.axis}} {
			if kv[1] == "" {
				continue
			}
			if err := text(v.Attr(kv[0]), kv[1]); err != nil {
				return err
			}
		}
		if err := v.WriteFloat64s(ax.vals); err != nil {
			return err
		}
	}
	return nil
}

// lcoeVars adds, through add, a variable per screening scenario with a
// levelised cost (rundir.LCOEFields: screening.parquet's lcoe_per_mwh, named
// contract.LCOELayer), with the caution and contract.LCOENote as its
// comment. A run without screening costs has none.
func lcoeVars(ds netcdf.Dataset, r *rundir.Run, add func(c *rundir.Column, long string) error) error {
	fs, err := r.LCOEFields()
	if err != nil {
		return err
	}
	for _, f := range fs {
		if r.Cells.Col(f.Column.Name) != nil {
			return fmt.Errorf("%s: the levelised cost of scenario %s would be named %s, which cells.parquet already has", r.Dir, f.Scenario, f.Column.Name)
		}
		long := "levelised cost of energy of the cell's layout under screening scenario " + f.Scenario + " (currency of the spec's cost inputs per MWh; screening.parquet lcoe_per_mwh)"
		if err := add(f.Column, long); err != nil {
			return err
		}
		v, err := ds.Var(f.Column.Name)
		if err != nil {
			return err
		}
		if err := text(v.Attr("comment"), contract.LCOENote+" "+r.Manifest.Caution); err != nil {
			return err
		}
	}
	return nil
}
