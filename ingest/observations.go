package ingest

// #cgo pkg-config: netcdf
// #include <netcdf.h>
import "C"

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/fhs/go-netcdf/netcdf"
)

// Station is the measured record of one station (a buoy or a gauge), as
// read from an observation file: the input of `swellgrid validate`.
type Station struct {
	Name     string
	Lon, Lat float64 // degrees; Lon normalised to [-180, 180)
	// Calendar of Times: the file's (NetCDF), standard for CSV (UTC).
	Calendar Calendar
	Times    []Stamp // strictly increasing
	// Values holds each measured role present (Hm0, Te, Tp, Dir) per time,
	// SI units (m, s), directions in degrees "from" wrapped to [0, 360),
	// NaN where missing.
	Values map[Role][]float64
	// Units are the units as stored, per role (CSV: the header's).
	Units map[Role]string
	// Source is the file, Format "csv" or the NetCDF format.
	Source, Format string
	// Attrs are the file's global attributes that say where the record
	// comes from (title, source, institution, comment, history), when present.
	Attrs map[string]string
}

// ObsRoles are the roles an observation file may carry.
var ObsRoles = []Role{Hm0, Te, Tp, Dir}

// ExpandObservations turns files, directories or globs into a sorted list of
// observation files: a directory contributes its *.nc, *.nc4, *.cdf and
// *.csv files.
func ExpandObservations(inputs []string) ([]string, error) {
	return expand(inputs, []string{"*.nc", "*.nc4", "*.cdf", "*.csv"}, "observations",
		"no observation files found in %v (give CF NetCDF station files, .nc, or CSV files, .csv)")
}

// ReadObservations reads every station of the observation files (see
// ExpandObservations): CSV files (.csv, ReadObservationCSV) and CF NetCDF
// station files (every other name, ReadObservationNC). A station name may
// appear in one file only.
func ReadObservations(inputs []string) ([]*Station, error) {
	paths, err := ExpandObservations(inputs)
	if err != nil {
		return nil, err
	}
	var all []*Station
	seen := map[string]string{}
	for _, p := range paths {
		var st []*Station
		if strings.EqualFold(filepath.Ext(p), ".csv") {
			st, err = ReadObservationCSV(p)
		} else {
			st, err = ReadObservationNC(p)
		}
		if err != nil {
			return nil, err
		}
		for _, s := range st {
			if f, ok := seen[s.Name]; ok {
				return nil, fmt.Errorf("ingest: %s: station %q is also in %s; give each station's record in one file (or rename one)", p, s.Name, f)
			}
			seen[s.Name] = p
		}
		all = append(all, st...)
	}
	return all, nil
}

// ReadObservationNC reads a CF NetCDF station file: a discrete sampling
// geometry with the global attribute featureType = "timeSeries" (CF 1.8
// chapter 9 and appendix H.2), in the orthogonal multidimensional
// representation: one time coordinate shared by the stations, the measured
// variables over (station, time), (time, station) or, for a single station
// with scalar latitude and longitude, (time). Variables are found by their
// CF standard_name as in a hindcast (StandardNames: Hm0, Te, Tp and the
// "from" or "to" direction); _FillValue, missing_value, valid_range,
// scale_factor/add_offset, units and the CF calendars are honoured with the
// same code as the hindcast's (scan.packing, ConversionFactor, readTime).
// Station names come from the cf_role = "timeseries_id" variable. Every
// NetCDF call is made under ncMu on a locked OS thread.
func ReadObservationNC(path string) ([]*Station, error) {
	format, size, stamp, err := checkMagicStamp(path)
	if err != nil {
		return nil, err
	}
	ncMu.Lock()
	defer ncMu.Unlock()
	defer ncThread()()
	f, err := openNC(path)
	if err != nil {
		return nil, err
	}
	defer f.close()
	s := &scan{f: f, info: FileInfo{Path: path, Size: size, Format: format, stamp: stamp}}
	ft := globalText(f, "featureType")
	if ft == "" {
		return nil, errf(path, "", "no global attribute featureType; a station file is a CF discrete sampling geometry with featureType = \"timeSeries\" (CF 1.8 chapter 9): add the attribute, or give the record as CSV (see the README)")
	}
	if !strings.EqualFold(ft, "timeSeries") {
		return nil, errf(path, "", "featureType is %q; swellgrid validates against fixed stations, featureType = \"timeSeries\" (a moving platform or a profile is not a station record)", ft)
	}
	tv, err := s.findTime()
	if err != nil {
		return nil, errf(path, "", "no time coordinate shared by the stations (a 1-D variable with standard_name \"time\" or units \"<unit> since <date>\"); swellgrid reads the orthogonal multidimensional representation (CF 1.8 appendix H.2.1): write one time axis for the file, or one file per station")
	}
	if err := s.readTime(tv); err != nil {
		return nil, err
	}
	timeDim := tv.dims[0]
	lons, lats := s.coordVar("longitude", "degrees_east"), s.coordVar("latitude", "degrees_north")
	if len(lons) != 1 || len(lats) != 1 {
		return nil, errf(path, "", "%d longitude and %d latitude variables (standard_name longitude/latitude or units degrees_east/degrees_north); a station file needs one of each, over the station dimension or scalar for a single station", len(lons), len(lats))
	}
	lon, lat := lons[0], lats[0]
	inst := ""
	switch {
	case len(lon.dims) == 0 && len(lat.dims) == 0:
	case len(lon.dims) == 1 && len(lat.dims) == 1 && lon.dims[0] == lat.dims[0] && lon.dims[0] != timeDim:
		inst = lon.dims[0]
	default:
		return nil, errf(path, lon.name+"/"+lat.name, "coordinates over %v and %v; a fixed station has its longitude and latitude over the station dimension (or scalar for one station); a moving platform is not a station record", lon.dims, lat.dims)
	}
	lonv, err := lon.readAll(path)
	if err != nil {
		return nil, err
	}
	latv, err := lat.readAll(path)
	if err != nil {
		return nil, err
	}
	ns := len(lonv)
	for i := 0; i < ns; i++ {
		if !(lonv[i] >= -360 && lonv[i] <= 720) || !(latv[i] >= -90 && latv[i] <= 90) {
			return nil, errf(path, lon.name+"/"+lat.name, "station %d is at (%v, %v), not a position; fix the coordinates", i, lonv[i], latv[i])
		}
	}
	names, err := stationNames(f, inst, ns)
	if err != nil {
		return nil, err
	}
	out := make([]*Station, ns)
	nt := len(s.info.times)
	for i := range out {
		out[i] = &Station{Name: names[i], Lon: normLon(lonv[i]), Lat: latv[i], Calendar: s.cal, Times: append([]Stamp(nil), s.info.times...),
			Values: map[Role][]float64{}, Units: map[Role]string{}, Source: path, Format: format, Attrs: map[string]string{}}
		for _, k := range []string{"title", "source", "institution", "comment", "history"} {
			if v := globalText(f, k); v != "" {
				out[i].Attrs[k] = v
			}
		}
	}
	found := 0
	for _, r := range append(append([]Role{}, ObsRoles...), DirPeak) {
		if r == DirPeak && len(out[0].Values[Dir]) > 0 {
			continue // the mean direction is preferred
		}
		var cands []*ncVar
		for i := range f.vars {
			for _, sn := range StandardNames[r] {
				if f.vars[i].str("standard_name") == sn {
					cands = append(cands, &f.vars[i])
				}
			}
		}
		if len(cands) == 0 {
			continue
		}
		if len(cands) > 1 {
			return nil, errf(path, "", "several variables for %s (%s and %s); keep one per quantity in a station file", r, cands[0].name, cands[1].name)
		}
		v := cands[0]
		ti, si := -1, -1
		for k, d := range v.dims {
			switch d {
			case timeDim:
				ti = k
			case inst:
				si = k
			default:
				return nil, errf(path, v.name, "dimension %q is neither the time (%s) nor the station dimension (%s); a station variable is over (station, time)", d, timeDim, inst)
			}
		}
		if ti < 0 || (inst != "" && si < 0) {
			return nil, errf(path, v.name, "dimensions %v; a station variable is over (station, time) or (time, station), or (time) for a single station with scalar coordinates", v.dims)
		}
		vi := &VarInfo{Role: r, Name: v.name, StandardName: v.str("standard_name"), Dims: v.dims, Type: v.typ.String()}
		vi.DirTo = strings.Contains(vi.StandardName, "_to_direction")
		vi.Units = v.str("units")
		if vi.Units == "" {
			return nil, errf(path, v.name, "no units attribute; add one (%s)", roleQuantity[r].target())
		}
		fac, err := ConversionFactor(vi.Units, roleQuantity[r])
		if err != nil {
			return nil, errf(path, v.name, "%v; fix the units attribute of the station file", err)
		}
		vi.Factor = fac
		if err := s.packing(v, vi); err != nil {
			return nil, err
		}
		raw, err := v.readAll(path)
		if err != nil {
			return nil, err
		}
		role := r
		if r == DirPeak {
			role = Dir
		}
		impossible, valid := 0, 0
		for i := range out {
			vals := make([]float64, nt)
			for t := 0; t < nt; t++ {
				k := t
				if inst != "" {
					if ti == 0 {
						k = t*ns + i
					} else {
						k = i*nt + t
					}
				}
				x := vi.unpack(raw[k])
				if role == Dir && !math.IsNaN(x) {
					if vi.DirTo {
						x += 180
					}
					x = math.Mod(math.Mod(x, 360)+360, 360)
				}
				if !math.IsNaN(x) {
					if !physical(role, x) {
						impossible++
						x = math.NaN()
					} else {
						valid++
					}
				}
				vals[t] = x
			}
			out[i].Values[role] = vals
			out[i].Units[role] = vi.Units
		}
		if valid == 0 {
			why := "every value is a fill value or missing"
			if impossible > 0 {
				why = fmt.Sprintf("every value is impossible for %s (none %s)", r, physicalRule(r))
				if vi.Packed {
					why += fmt.Sprintf("; check the packing attributes (scale_factor %v, add_offset %v)", vi.Scale, vi.Offset)
				}
			}
			return nil, errf(path, v.name, "%s; the variable holds no measurement: fix it or leave it out of the file", why)
		}
		found++
	}
	if found == 0 {
		return nil, errf(path, "", "no measured variable: none has the standard_name of Hm0, Te, Tp or the wave direction (e.g. %s); add the standard_name attributes", StandardNames[Hm0][0])
	}
	return out, nil
}

func normLon(x float64) float64 {
	x = math.Mod(x+180, 360)
	if x < 0 {
		x += 360
	}
	return x - 180
}

// globalText reads a text global attribute ("" when absent or not text).
func globalText(f *ncFile, name string) string {
	a := f.ds.Attr(name)
	t, err := a.Type()
	if err != nil {
		return ""
	}
	n, err := a.Len()
	if err != nil || n == 0 || n > maxAttrValues {
		return ""
	}
	switch t {
	case netcdf.CHAR:
		b := make([]byte, n)
		if a.ReadBytes(b) != nil {
			return ""
		}
		return strings.TrimRight(string(b), "\x00")
	case netcdf.STRING:
		g := ncVar{ds: f.ds, id: C.NC_GLOBAL}
		ss, err := g.stringAttr(name, n)
		if err != nil {
			return ""
		}
		return strings.Join(ss, " ")
	}
	return ""
}

// stationNames reads the names of ns stations from the cf_role =
// "timeseries_id" variable (CF 1.8 section 9.5) over the station dimension
// inst (scalar or a single string for one station); "station_<i>" when the
// file has none.
func stationNames(f *ncFile, inst string, ns int) ([]string, error) {
	names := make([]string, ns)
	for i := range names {
		names[i] = fmt.Sprintf("station_%d", i)
	}
	for i := range f.vars {
		v := &f.vars[i]
		if v.str("cf_role") != "timeseries_id" {
			continue
		}
		switch {
		case v.typ == netcdf.STRING && (len(v.dims) == 1 && v.dims[0] == inst || len(v.dims) == 0 && ns == 1):
			ss, err := readStrings(f.path, v.name, ns)
			if err != nil {
				return nil, err
			}
			copy(names, ss)
		case v.typ == netcdf.CHAR && (len(v.dims) == 2 && v.dims[0] == inst || len(v.dims) == 1 && ns == 1 && inst == ""):
			w := int(v.shape[len(v.shape)-1])
			b := make([]byte, ns*w)
			if err := v.v.ReadBytes(b); err != nil {
				return nil, errf(f.path, v.name, "station names: %v", err)
			}
			for k := range names {
				names[k] = strings.TrimSpace(strings.TrimRight(string(b[k*w:(k+1)*w]), "\x00"))
			}
		default:
			// numeric ids
			vals, err := v.readAll(f.path)
			if err == nil && len(vals) == ns {
				for k := range names {
					names[k] = fmt.Sprintf("%g", vals[k])
				}
			}
		}
		break
	}
	return names, nil
}
