package corpus

import (
	"math"
	"os"
	"path/filepath"
	"syscall"

	"github.com/fhs/go-netcdf/netcdf"
)

// SameAsGood lists the processed cases whose tables must equal those of the
// well-formed input (Good): the case stores the same values differently
// (another axis order, NC_STRING text attributes, a NaN missing value).
var SameAsGood = map[string]bool{
	"orient_lat_descending_month":  true,
	"orient_lon_descending_lonlat": true,
	"attr_ncstring_units":          true,
	"attr_nan_fill_missing_value":  true,
	"attr_valid_range_wide":        true,
	"input_brackets_dir":           true,
	"input_non_utf8_names":         true,
}

// packShort stores hm0 of both files as int16 with the given packing
// (values rounded to the packing step of a scale of 0.001 m).
func packShort(scale, offset float64) func(jan, feb *ncDesc) {
	return func(jan, feb *ncDesc) {
		for _, d := range []*ncDesc{jan, feb} {
			v := d.v("hm0")
			v.typ = netcdf.SHORT
			for k, x := range v.data {
				v.data[k] = math.Round(x / 0.001)
			}
			v.setNum("_FillValue", -32767)
			v.setNum("scale_factor", scale)
			v.setNum("add_offset", offset)
		}
	}
}

// curvilinear replaces the 1-D lat(lat) and lon(lon) coordinates of a bulk
// description by 2-D auxiliary coordinates nav_lat(lat, lon) and
// nav_lon(lat, lon) (CF 1.8 section 5.2), making the grid curvilinear.
func curvilinear(d *ncDesc) {
	lon, lat := d.v("lon").data, d.v("lat").data
	d.drop("lon")
	d.drop("lat")
	var lon2, lat2 []float64
	for _, y := range lat {
		for k, x := range lon {
			lon2 = append(lon2, x+0.1*float64(k)*0) // a plain (unrotated) curvilinear grid
			lat2 = append(lat2, y)
		}
	}
	d.vars = append(d.vars,
		&ncVarDesc{name: "nav_lon", typ: netcdf.DOUBLE, dims: []string{"lat", "lon"}, data: lon2,
			attrs: []ncAttr{text("standard_name", "longitude"), text("units", "degrees_east")}},
		&ncVarDesc{name: "nav_lat", typ: netcdf.DOUBLE, dims: []string{"lat", "lon"}, data: lat2,
			attrs: []ncAttr{text("standard_name", "latitude"), text("units", "degrees_north")}})
}

// hugeClaim describes a small NetCDF-4 file whose dimensions claim far more
// data than it holds: time(nt), lat(nlat), lon(nlon) with CF coordinates, and
// hm0(time, lat, lon); only the time and latitude values (and the longitudes
// if writeLon) are written, nothing of hm0.
func hugeClaim(nt, nlat, nlon int, writeLon bool) *ncDesc {
	times := make([]float64, nt)
	for i := range times {
		times[i] = 3 * float64(i)
	}
	lat := make([]float64, nlat)
	for i := range lat {
		lat[i] = -80 + 160*float64(i)/float64(nlat)
	}
	var lon []float64
	if writeLon {
		lon = make([]float64, nlon)
		for i := range lon {
			lon[i] = -180 + 360*float64(i)/float64(nlon)
		}
	}
	return &ncDesc{netcdf4: true,
		dims:   []ncDim{{"time", nt}, {"lat", nlat}, {"lon", nlon}},
		global: syntheticGlobals,
		vars: []*ncVarDesc{
			{name: "time", typ: netcdf.DOUBLE, dims: []string{"time"}, data: times,
				attrs: []ncAttr{text("standard_name", "time"), text("units", baseRefUnits)}},
			{name: "lat", typ: netcdf.DOUBLE, dims: []string{"lat"}, data: lat,
				attrs: []ncAttr{text("standard_name", "latitude"), text("units", "degrees_north")}},
			{name: "lon", typ: netcdf.DOUBLE, dims: []string{"lon"}, data: lon,
				attrs: []ncAttr{text("standard_name", "longitude"), text("units", "degrees_east")}},
			{name: "hm0", typ: netcdf.FLOAT, dims: []string{"time", "lat", "lon"},
				attrs: []ncAttr{text("standard_name", "sea_surface_wave_significant_height"), text("units", "m")}},
		}}
}

// oneFile writes d as in/<name> under dir.
func oneFile(name string, d *ncDesc) func(string) (*Setup, error) {
	return func(dir string) (*Setup, error) {
		in, err := writeAll(dir, map[string]*ncDesc{name: d})
		return &Setup{Input: in}, err
	}
}

// goodIn writes the well-formed two months under dir/sub with the given
// file names and returns the input directory.
func goodIn(dir, sub, jan, feb string) (string, error) {
	a, b := bulkPair(7)
	in := filepath.Join(dir, sub)
	if err := os.MkdirAll(in, 0o755); err != nil {
		return "", err
	}
	if err := a.write(filepath.Join(in, jan)); err != nil {
		return "", err
	}
	return in, b.write(filepath.Join(in, feb))
}

// strictCases are the cases of per-file orientation and strict attributes.
func strictCases() []Case {
	both := func(f func(d *ncDesc)) func(jan, feb *ncDesc) {
		return func(jan, feb *ncDesc) { f(jan); f(feb) }
	}
	return []Case{
		{Name: "input_fifo", Breaks: "a named pipe (FIFO) named like a NetCDF file among the inputs (open blocked forever)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-03.nc", "not a regular file", "named pipe"},
			build: func(dir string) (*Setup, error) {
				in, err := goodIn(dir, "in", "cx_2001-01.nc", "cx_2001-02.nc")
				if err != nil {
					return nil, err
				}
				return &Setup{Input: in}, syscall.Mkfifo(filepath.Join(in, "cx_2001-03.nc"), 0o644)
			}},
		{Name: "input_brackets_dir", Breaks: `the input directory is named "brackets[2001]" (was taken as a glob: "no NetCDF files found")`, Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want: []string{"wrote"},
			build: func(dir string) (*Setup, error) {
				in, err := goodIn(dir, "brackets[2001]", "cx_2001-01.nc", "cx_2001-02.nc")
				return &Setup{Input: in}, err
			}},
		{Name: "input_non_utf8_names", Breaks: "file names with bytes that are not UTF-8 (Latin-1 \\xe9, \\xff): kept byte for byte, escaped as \\xNN in the manifest", Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want: []string{`cx_2001-01_caf\\xe9.nc`, `cx_2001-02_\\xff.nc`},
			build: func(dir string) (*Setup, error) {
				in, err := goodIn(dir, "in", "cx_2001-01_caf\xe9.nc", "cx_2001-02_\xff.nc")
				return &Setup{Input: in}, err
			}},
		{Name: "coord_points_inf", Breaks: "a station longitude of +Inf (was exit 4 at the export, after the computation)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_spec_2001-01.nc", `"longitude"`, "+Inf", "must be finite"},
			build: specCase(func(d *ncDesc) { d.v("longitude").data[1] = math.Inf(1) })},
		{Name: "coord_curvilinear_nan", Breaks: "a NaN node longitude of a curvilinear grid (was exit 4 at the export)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", `"nav_lon"`, "(lat 1, lon 2)", "NaN", "must be finite"},
			build: bulkCase(both(func(d *ncDesc) {
				curvilinear(d)
				d.v("nav_lon").data[baseNX+2] = math.NaN()
			}))},
		{Name: "huge_dimension_netcdf4", Breaks: "a NetCDF-4 file of a few KB whose longitude dimension claims 2^28 values (took 4.2 GB and minutes)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_huge4.nc", "declares", "more than compression can explain", "write or download it again"},
			build: oneFile("cx_huge4.nc", hugeClaim(2, 2, 1<<28, false))},
		{Name: "huge_values_netcdf4", Breaks: "a NetCDF-4 file of about 1 MB whose hm0 claims 2e11 values (2000 x 1000 x 100000; would take minutes to refuse)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_huge4v.nc", `"hm0"`, "200000000000 values", "more than compression can explain"},
			build: oneFile("cx_huge4v.nc", hugeClaim(2000, 1000, 100000, true))},
		{Name: "time_jump_year_9000", Breaks: `February's time units "hours since 9000-01-01 00:00:00" (reference year mistyped): a 7000-year gap`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-02.nc", "longer than the rest of the record", "hours since 9000-01-01", "input.allow_long_gaps"},
			build: bulkCase(func(_, feb *ncDesc) { feb.v("time").setText("units", "hours since 9000-01-01 00:00:00") })},
		{Name: "orient_lat_descending_month", Breaks: "February stored with latitude descending in an ascending record (same values at the same positions)", Outcome: Flagged, Exit: 0, Stage: "read",
			Want:  []string{"wrote"},
			build: bulkCase(func(_, feb *ncDesc) { feb.reverseDim("lat") })},
		{Name: "orient_lon_descending_lonlat", Breaks: "February stored with longitude descending and dimensions (time, lon, lat)", Outcome: Flagged, Exit: 0, Stage: "read",
			Want: []string{"wrote"},
			build: bulkCase(func(_, feb *ncDesc) {
				feb.reverseDim("lon")
				feb.transpose("lat", "lon")
			})},
		{Name: "orient_not_permutation", Breaks: "February latitude descending and one latitude moved by 0.25 degree: not a permutation of January's grid", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want: []string{"cx_2001-01.nc", "cx_2001-02.nc", "different grids", "one grid"},
			build: bulkCase(func(_, feb *ncDesc) {
				feb.reverseDim("lat")
				feb.v("lat").data[0] += 0.25
			})},
		{Name: "attr_scale_text", Breaks: `hm0 scale_factor stored as the text "0.1" (was skipped: Hm0 x10, power x100)`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "scale_factor", "stored as text", "store it as a number"},
			build: bulkCase(both(func(d *ncDesc) { d.v("hm0").setText("scale_factor", "0.1") }))},
		{Name: "attr_scale_two_values", Breaks: "hm0 scale_factor with two values (was skipped)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "scale_factor", "has 2 values", "fix or remove the attribute"},
			build: bulkCase(both(func(d *ncDesc) { d.v("hm0").setNum("scale_factor", 0.1, 0.1) }))},
		{Name: "attr_scale_inf", Breaks: "hm0 scale_factor = +Inf", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "scale_factor", "+Inf", "cannot unpack"},
			build: bulkCase(both(func(d *ncDesc) { d.v("hm0").setNum("scale_factor", math.Inf(1)) }))},
		{Name: "attr_scale_nan", Breaks: "te scale_factor = NaN", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"te"`, "scale_factor", "NaN"},
			build: bulkCase(both(func(d *ncDesc) { d.v("te").setNum("scale_factor", math.NaN()) }))},
		{Name: "attr_scale_1e308", Breaks: "hm0 packed as short with scale_factor 1e308 (unpacks to infinity)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "scale_factor", "1e+308", "fix the packing attributes"},
			build: bulkCase(packShort(1e308, 0))},
		{Name: "attr_scale_negative", Breaks: "hm0 packed as short with scale_factor -0.001: every height negative", Outcome: Refused, Exit: 2, Stage: "read",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "impossible for role hm0", "scale_factor -0.001"},
			build: bulkCase(packShort(-0.001, 0))},
		{Name: "attr_offset_inf", Breaks: "te add_offset = -Inf", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"te"`, "add_offset", "-Inf"},
			build: bulkCase(both(func(d *ncDesc) { d.v("te").setNum("add_offset", math.Inf(-1)) }))},
		// A _FillValue of the wrong type or count cannot be written through
		// NetCDF-C 4.9 (it refuses with "_FillValue type mismatch"); the check
		// stands for other writers, and missing_value shows it here.
		{Name: "attr_missing_value_text", Breaks: `te missing_value stored as the text "n/a"`, Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"te"`, "missing_value", "stored as text", `"n/a"`},
			build: bulkCase(both(func(d *ncDesc) { d.v("te").setText("missing_value", "n/a") }))},
		{Name: "attr_valid_range_reversed", Breaks: "hm0 valid_range = [30, 0] (empty: every value would be missing)", Outcome: Refused, Exit: 2, Stage: "catalog",
			Want:  []string{"cx_2001-01.nc", `"hm0"`, "valid range", "is empty"},
			build: bulkCase(both(func(d *ncDesc) { d.v("hm0").setNum("valid_range", 30, 0) }))},
		{Name: "attr_valid_range_wide", Breaks: "hm0 valid_range = [0, 30] (legal, wide: nothing is excluded)", Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want:  []string{"wrote"},
			build: bulkCase(both(func(d *ncDesc) { d.v("hm0").setNum("valid_range", 0, 30) }))},
		{Name: "attr_nan_fill_missing_value", Breaks: "_FillValue NaN on hm0 and missing_value NaN on te (legal: xarray writes them)", Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want: []string{"wrote"},
			build: bulkCase(both(func(d *ncDesc) {
				d.v("hm0").setNum("_FillValue", math.NaN())
				d.v("te").setNum("missing_value", math.NaN())
			}))},
		{Name: "attr_ncstring_units", Breaks: "units and standard_name of every variable stored as NC_STRING (NetCDF-4), not NC_CHAR", Outcome: Flagged, Exit: 0, Stage: "catalog",
			Want: []string{"wrote"},
			build: bulkCase(both(func(d *ncDesc) {
				d.netcdf4 = true
				for _, v := range d.vars {
					for _, a := range v.attrs {
						if a.text && (a.name == "units" || a.name == "standard_name" || a.name == "calendar") {
							v.setString(a.name, a.s)
						}
					}
				}
			}))},
	}
}
