package ingest

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	proj "github.com/twpayne/go-proj/v11"
)

// GridMapping is the native grid of a hindcast stored on projected x/y
// (or rotated-pole rlon/rlat) axes with a CF grid mapping (CF Conventions
// 1.8, section 5.6 and Appendix F): what atlas.nc needs to keep the model's
// own grid and CRS beside the longitudes and latitudes the tables use.
type GridMapping struct {
	// Var is the grid-mapping variable's name, Name its grid_mapping_name.
	Var  string `json:"variable"`
	Name string `json:"grid_mapping_name"`
	// Attrs are every attribute of the grid-mapping variable as the file
	// gives them (texts and numbers), so that atlas.nc repeats them.
	Attrs []MappingAttr `json:"attributes"`
	// Proj is the definition PROJ transformed the axes with: the file's
	// crs_wkt when it has one, else a PROJ string built from the CF
	// attributes (ProjFromCF).
	Proj string `json:"proj_definition"`
	// WKT is the CRS as OGC WKT: the file's crs_wkt, else PROJ's WKT2:2019
	// of Proj (projWKT).
	WKT string `json:"crs_wkt"`
	// X, Y: the native axes' names, units, standard names and values, in
	// the file's order (the cells' order on a curvilinear grid).
	XName  string    `json:"x_name"`
	YName  string    `json:"y_name"`
	XUnits string    `json:"x_units"`
	YUnits string    `json:"y_units"`
	XStd   string    `json:"x_standard_name"`
	YStd   string    `json:"y_standard_name"`
	X      []float64 `json:"x"`
	Y      []float64 `json:"y"`
	// Computed is true when the longitudes and latitudes were computed by
	// PROJ from the axes (the file gives no 2-D lat/lon).
	Computed bool `json:"lon_lat_computed"`
}

// MappingAttr is one attribute of a grid-mapping variable.
type MappingAttr struct {
	Name string    `json:"name"`
	Text string    `json:"text,omitempty"`
	Nums []float64 `json:"values,omitempty"`
}

// findMapping reads the grid mapping the file's variables name (the
// grid_mapping attribute of a data variable; its simple form, a variable
// name), with its x/y axes: nil when there is none or it is plain
// latitude_longitude. A named mapping that is missing or has no axes is an
// error naming it.
func (s *scan) findMapping() (*GridMapping, error) {
	name := ""
	for i := range s.f.vars {
		if g := strings.TrimSpace(s.f.vars[i].str("grid_mapping")); g != "" {
			name = g
			break
		}
	}
	if name == "" {
		return nil, nil
	}
	if strings.ContainsAny(name, ": ") {
		// CF 1.8's extended form "crs: x y ..." lists coordinates too; the first word names the variable
		name = strings.TrimSuffix(strings.Fields(name)[0], ":")
	}
	mv := s.f.find(name)
	if mv == nil {
		return nil, errf(s.f.path, name, "named by a grid_mapping attribute but not in the file; add the grid-mapping variable or remove the attribute")
	}
	gm := &GridMapping{Var: name, Name: mv.str("grid_mapping_name")}
	if gm.Name == "" {
		return nil, errf(s.f.path, name, "grid-mapping variable without grid_mapping_name; set it (CF 1.8 Appendix F)")
	}
	if gm.Name == "latitude_longitude" {
		return nil, nil
	}
	n, err := mv.v.NAttrs()
	if err != nil {
		return nil, errf(s.f.path, name, "cannot list its attributes: %v", err)
	}
	for k := 0; k < n && k < 64; k++ {
		a, err := mv.v.AttrN(k)
		if err != nil {
			continue
		}
		av := mv.attr(a.Name())
		if av.err != nil || !av.present {
			continue
		}
		ma := MappingAttr{Name: a.Name()}
		if av.isText {
			ma.Text = av.text // at most maxAttrValues bytes (attr)
		} else {
			ma.Nums = av.nums
		}
		gm.Attrs = append(gm.Attrs, ma)
	}
	sort.Slice(gm.Attrs, func(i, j int) bool { return gm.Attrs[i].Name < gm.Attrs[j].Name })
	xs, ys := "projection_x_coordinate", "projection_y_coordinate"
	if gm.Name == "rotated_latitude_longitude" {
		xs, ys = "grid_longitude", "grid_latitude"
	}
	var xv, yv *ncVar
	for i := range s.f.vars {
		v := &s.f.vars[i]
		if len(v.dims) != 1 {
			continue
		}
		switch v.str("standard_name") {
		case xs:
			xv = v
		case ys:
			yv = v
		}
	}
	if xv == nil || yv == nil {
		return nil, errf(s.f.path, name, "grid mapping %q found, but no 1-D coordinate variables with standard_name %s and %s; add them (CF 1.8 section 5.6)", ShortText(gm.Name), xs, ys)
	}
	if gm.X, err = xv.readAll(s.f.path); err != nil {
		return nil, err
	}
	if gm.Y, err = yv.readAll(s.f.path); err != nil {
		return nil, err
	}
	gm.XName, gm.YName = xv.name, yv.name
	gm.XUnits, gm.YUnits = xv.str("units"), yv.str("units")
	gm.XStd, gm.YStd = xs, ys
	if wkt := strings.TrimSpace(mv.str("crs_wkt")); wkt != "" {
		gm.Proj, gm.WKT = wkt, wkt
	} else if gm.Proj, err = ProjFromCF(gm.Name, gm.Attrs); err != nil {
		return nil, errf(s.f.path, name, "%v", err)
	} else if gm.WKT, err = projWKT(gm.Proj); err != nil {
		return nil, errf(s.f.path, name, "%v", err)
	}
	return gm, nil
}

// attrNum is the first value of a numeric mapping attribute.
func attrNum(attrs []MappingAttr, name string) (float64, bool) {
	for _, a := range attrs {
		if a.Name == name && len(a.Nums) > 0 {
			return a.Nums[0], true
		}
	}
	return 0, false
}

func attrNums(attrs []MappingAttr, name string) []float64 {
	for _, a := range attrs {
		if a.Name == name {
			return a.Nums
		}
	}
	return nil
}

// ProjFromCF builds a PROJ string from a CF grid mapping's attributes (CF
// Conventions 1.8, Appendix F, each parameter mapped to its PROJ name as the
// PROJ documentation's operation pages define them; the table of this
// mapping follows common practice, as GDAL's CF reader does it, from
// memory): transverse_mercator (tmerc), lambert_conformal_conic (lcc),
// polar_stereographic (stere), mercator (merc), albers_conical_equal_area
// (aea), lambert_azimuthal_equal_area (laea), stereographic (stere) and
// rotated_latitude_longitude (ob_tran). The figure of the Earth comes from
// semi_major_axis with inverse_flattening or semi_minor_axis, or
// earth_radius; with none of them WGS 84 (an assumption the manifest
// records). Another mapping is refused, naming what would work.
func ProjFromCF(name string, attrs []MappingAttr) (string, error) {
	p := []string{}
	add := func(key, attr string, def float64, need bool) error {
		v, ok := attrNum(attrs, attr)
		if !ok {
			if need {
				return fmt.Errorf("grid mapping %s needs attribute %s (CF 1.8 Appendix F)", name, attr)
			}
			v = def
		}
		p = append(p, "+"+key+"="+strconv.FormatFloat(v, 'g', -1, 64))
		return nil
	}
	type arg struct {
		key, attr string
		def       float64
		need      bool
	}
	run := func(args ...arg) error {
		for _, a := range args {
			if err := add(a.key, a.attr, a.def, a.need); err != nil {
				return err
			}
		}
		return nil
	}
	offsets := []arg{{"x_0", "false_easting", 0, false}, {"y_0", "false_northing", 0, false}}
	parallels := func() error {
		sp := attrNums(attrs, "standard_parallel")
		if len(sp) == 0 {
			return fmt.Errorf("grid mapping %s needs attribute standard_parallel (CF 1.8 Appendix F)", name)
		}
		p = append(p, "+lat_1="+strconv.FormatFloat(sp[0], 'g', -1, 64))
		if len(sp) > 1 {
			p = append(p, "+lat_2="+strconv.FormatFloat(sp[1], 'g', -1, 64))
		}
		return nil
	}
	var err error
	switch name {
	case "transverse_mercator":
		p = append(p, "+proj=tmerc")
		err = run(append([]arg{{"lat_0", "latitude_of_projection_origin", 0, true}, {"lon_0", "longitude_of_central_meridian", 0, true},
			{"k_0", "scale_factor_at_central_meridian", 1, false}}, offsets...)...)
	case "lambert_conformal_conic":
		p = append(p, "+proj=lcc")
		if err = parallels(); err == nil {
			err = run(append([]arg{{"lat_0", "latitude_of_projection_origin", 0, true}, {"lon_0", "longitude_of_central_meridian", 0, true}}, offsets...)...)
		}
	case "albers_conical_equal_area":
		p = append(p, "+proj=aea")
		if err = parallels(); err == nil {
			err = run(append([]arg{{"lat_0", "latitude_of_projection_origin", 0, true}, {"lon_0", "longitude_of_central_meridian", 0, true}}, offsets...)...)
		}
	case "lambert_azimuthal_equal_area":
		p = append(p, "+proj=laea")
		err = run(append([]arg{{"lat_0", "latitude_of_projection_origin", 0, true}, {"lon_0", "longitude_of_projection_origin", 0, true}}, offsets...)...)
	case "mercator":
		p = append(p, "+proj=merc")
		if _, ok := attrNum(attrs, "standard_parallel"); ok {
			err = run(append([]arg{{"lon_0", "longitude_of_projection_origin", 0, false}, {"lat_ts", "standard_parallel", 0, true}}, offsets...)...)
		} else {
			err = run(append([]arg{{"lon_0", "longitude_of_projection_origin", 0, false}, {"k_0", "scale_factor_at_projection_origin", 1, false}}, offsets...)...)
		}
	case "polar_stereographic":
		p = append(p, "+proj=stere")
		err = run(arg{"lat_0", "latitude_of_projection_origin", 0, true}, arg{"lon_0", "straight_vertical_longitude_from_pole", 0, true})
		if err == nil {
			if _, ok := attrNum(attrs, "standard_parallel"); ok {
				err = run(arg{"lat_ts", "standard_parallel", 0, true})
			} else {
				err = run(arg{"k_0", "scale_factor_at_projection_origin", 1, false})
			}
		}
		if err == nil {
			err = run(offsets...)
		}
	case "stereographic":
		p = append(p, "+proj=stere")
		err = run(append([]arg{{"lat_0", "latitude_of_projection_origin", 0, true}, {"lon_0", "longitude_of_projection_origin", 0, true},
			{"k_0", "scale_factor_at_projection_origin", 1, false}}, offsets...)...)
	case "rotated_latitude_longitude":
		lat, ok1 := attrNum(attrs, "grid_north_pole_latitude")
		lon, ok2 := attrNum(attrs, "grid_north_pole_longitude")
		if !ok1 || !ok2 {
			return "", fmt.Errorf("grid mapping %s needs attributes grid_north_pole_latitude and grid_north_pole_longitude (CF 1.8 Appendix F)", name)
		}
		olon, _ := attrNum(attrs, "north_pole_grid_longitude")
		p = append(p, "+proj=ob_tran", "+o_proj=longlat",
			"+o_lat_p="+strconv.FormatFloat(lat, 'g', -1, 64),
			"+o_lon_p="+strconv.FormatFloat(olon, 'g', -1, 64),
			"+lon_0="+strconv.FormatFloat(180+lon, 'g', -1, 64))
	default:
		return "", fmt.Errorf("grid mapping %q is not one swellgrid reads (transverse_mercator, lambert_conformal_conic, albers_conical_equal_area, lambert_azimuthal_equal_area, mercator, polar_stereographic, stereographic, rotated_latitude_longitude); give the grid mapping a crs_wkt attribute, or add 2-D longitude/latitude variables named in the data variables' coordinates attribute", ShortText(name))
	}
	if err != nil {
		return "", err
	}
	a, okA := attrNum(attrs, "semi_major_axis")
	rf, okF := attrNum(attrs, "inverse_flattening")
	b, okB := attrNum(attrs, "semi_minor_axis")
	r, okR := attrNum(attrs, "earth_radius")
	switch {
	case okA && okF && rf > 0:
		p = append(p, "+a="+strconv.FormatFloat(a, 'g', -1, 64), "+rf="+strconv.FormatFloat(rf, 'g', -1, 64))
	case okA && okF: // inverse_flattening 0: a sphere
		p = append(p, "+R="+strconv.FormatFloat(a, 'g', -1, 64))
	case okA && okB:
		p = append(p, "+a="+strconv.FormatFloat(a, 'g', -1, 64), "+b="+strconv.FormatFloat(b, 'g', -1, 64))
	case okR:
		p = append(p, "+R="+strconv.FormatFloat(r, 'g', -1, 64))
	case okA:
		p = append(p, "+R="+strconv.FormatFloat(a, 'g', -1, 64))
	default:
		p = append(p, "+ellps=WGS84")
	}
	p = append(p, "+no_defs", "+type=crs")
	return strings.Join(p, " "), nil
}

// AxisScale is the factor from a projected axis's units to metres (CF units
// of length as UDUNITS spells them; a rotated grid's axes are in degrees).
func AxisScale(units string) (float64, bool) {
	switch strings.TrimSpace(strings.ToLower(units)) {
	case "m", "metre", "metres", "meter", "meters", "1":
		return 1, true
	case "km", "kilometre", "kilometres", "kilometer", "kilometers":
		return 1000, true
	case "degree", "degrees", "degrees_east", "degrees_north", "degree_east", "degree_north":
		return 1, true
	}
	return 0, false
}

// LonLat computes the longitude and latitude of every node of the native
// grid (y major, x minor: the file's order) with PROJ, from gm.Proj to
// OGC:CRS84 (WGS 84, longitude first). A node PROJ cannot place, or an axis
// in units other than a length (or degrees, rotated), is an error.
func (gm *GridMapping) LonLat() (lon, lat []float64, err error) {
	sx, okx := AxisScale(gm.XUnits)
	sy, oky := AxisScale(gm.YUnits)
	if !okx || !oky {
		return nil, nil, fmt.Errorf("axes %s/%s in units %q/%q; give them in m or km (degrees for a rotated grid)", gm.XName, gm.YName, ShortText(gm.XUnits), ShortText(gm.YUnits))
	}
	ctx := proj.NewContext()
	pj, err := ctx.NewCRSToCRS(gm.Proj, "OGC:CRS84", nil)
	if err != nil {
		return nil, nil, fmt.Errorf("PROJ cannot read the grid mapping (%s): %v; give it a crs_wkt attribute PROJ reads, or 2-D longitude/latitude variables", ShortText(gm.Proj), err)
	}
	nx, ny := len(gm.X), len(gm.Y)
	coords := make([]proj.Coord, 0, nx*ny)
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			coords = append(coords, proj.NewCoord(gm.X[i]*sx, gm.Y[j]*sy, 0, 0))
		}
	}
	if err := pj.ForwardArray(coords); err != nil {
		return nil, nil, fmt.Errorf("PROJ: %v", err)
	}
	lon, lat = make([]float64, len(coords)), make([]float64, len(coords))
	for k, c := range coords {
		lon[k], lat[k] = c[0], c[1]
		if math.IsNaN(c[0]) || math.IsInf(c[0], 0) || !(c[1] >= -90 && c[1] <= 90) {
			return nil, nil, fmt.Errorf("node (%s %d, %s %d) at (%g, %g) has no longitude/latitude under the grid mapping", gm.YName, k/nx, gm.XName, k%nx, gm.X[k%nx], gm.Y[k/nx])
		}
	}
	return lon, lat, nil
}
