package corpus

import (
	"math"
	"math/rand/v2"

	"github.com/fhs/go-netcdf/netcdf"
)

// The well-formed starting points that the cases break. Values are invented:
// smooth seasonal-looking curves plus seeded noise, with no link to any real
// place or model.

const (
	baseNX, baseNY = 4, 3
	stepHours      = 3
	baseRefUnits   = "hours since 2001-01-01 00:00:00"
)

var syntheticGlobals = []ncAttr{
	{name: "Conventions", s: "CF-1.8", text: true},
	{name: "title", s: "swellgrid bad-input corpus (synthetic)", text: true},
	{name: "synthetic", s: "yes", text: true},
	{name: "comment", s: "Invented values for software reliability tests; not model or measured data.", text: true},
}

func text(name, s string) ncAttr { return ncAttr{name: name, s: s, text: true} }

// monthSteps returns the 3-hourly steps of month m (1 or 2) of 2001 as hours
// since 2001-01-01.
func monthSteps(m int) []float64 {
	days := []int{31, 28, 31}
	start := 0
	for i := 1; i < m; i++ {
		start += days[i-1] * 24
	}
	n := days[m-1] * 24 / stepHours
	out := make([]float64, n)
	for i := range out {
		out[i] = float64(start + i*stepHours)
	}
	return out
}

func lonLat() ([]float64, []float64) {
	lon := make([]float64, baseNX)
	lat := make([]float64, baseNY)
	for i := range lon {
		lon[i] = -30 + 0.5*float64(i)
	}
	for j := range lat {
		lat[j] = 40 + 0.5*float64(j)
	}
	return lon, lat
}

// seaState returns an invented Hm0 (m), Te (s) and direction (degree from) for
// hour h at site k.
func seaState(h float64, k int, r *rand.Rand) (float64, float64, float64) {
	w := 2 * math.Pi * h / (24 * 9)
	hm0 := 1.6 + 0.7*math.Sin(w) + 0.08*float64(k%5) + 0.15*r.Float64()
	te := 6.5 + 1.2*math.Sin(w+0.4) + 0.3*r.Float64()
	dir := math.Mod(250+40*math.Sin(w/3)+10*r.Float64(), 360)
	return hm0, te, dir
}

// bulkFile describes a well-formed bulk file: time, lat, lon, hm0, te, dir
// (time, lat, lon) and depth (lat, lon), for month m of 2001.
func bulkFile(m int, seed uint64) *ncDesc {
	times := monthSteps(m)
	lon, lat := lonLat()
	nt, ncell := len(times), baseNX*baseNY
	r := rand.New(rand.NewPCG(seed, uint64(m)))
	hm0 := make([]float64, nt*ncell)
	te := make([]float64, nt*ncell)
	dir := make([]float64, nt*ncell)
	for t, h := range times {
		for k := 0; k < ncell; k++ {
			hm0[t*ncell+k], te[t*ncell+k], dir[t*ncell+k] = seaState(h, k, r)
		}
	}
	depth := make([]float64, ncell)
	for k := range depth {
		depth[k] = 35 + 5*float64(k)
	}
	field := func(name, std, units string, data []float64) *ncVarDesc {
		return &ncVarDesc{name: name, typ: netcdf.FLOAT, dims: []string{"time", "lat", "lon"}, data: data,
			attrs: []ncAttr{text("standard_name", std), text("units", units), {name: "_FillValue", num: []float64{-999}}}}
	}
	return &ncDesc{
		dims:   []ncDim{{"time", nt}, {"lat", baseNY}, {"lon", baseNX}},
		global: syntheticGlobals,
		vars: []*ncVarDesc{
			{name: "time", typ: netcdf.DOUBLE, dims: []string{"time"}, data: times,
				attrs: []ncAttr{text("standard_name", "time"), text("units", baseRefUnits), text("calendar", "standard"), text("axis", "T")}},
			{name: "lat", typ: netcdf.DOUBLE, dims: []string{"lat"}, data: lat,
				attrs: []ncAttr{text("standard_name", "latitude"), text("units", "degrees_north")}},
			{name: "lon", typ: netcdf.DOUBLE, dims: []string{"lon"}, data: lon,
				attrs: []ncAttr{text("standard_name", "longitude"), text("units", "degrees_east")}},
			field("hm0", "sea_surface_wave_significant_height", "m", hm0),
			field("te", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment", "s", te),
			field("wdir", "sea_surface_wave_from_direction", "degree", dir),
			{name: "depth", typ: netcdf.DOUBLE, dims: []string{"lat", "lon"}, data: depth,
				attrs: []ncAttr{text("standard_name", "sea_floor_depth_below_sea_surface"), text("units", "m")}},
		},
	}
}

const (
	specNF, specND, specNP = 12, 12, 2
)

// spectralFile describes a well-formed point file of directional spectra:
// time, station, frequency, direction, lon/lat (station), efth (time, station,
// frequency, direction) in m2 s rad-1, and depth (station), for month m.
func spectralFile(m int, seed uint64) *ncDesc {
	times := monthSteps(m)
	nt := len(times)
	freq := make([]float64, specNF)
	for i := range freq {
		freq[i] = 0.05 * math.Pow(1.2, float64(i))
	}
	dirs := make([]float64, specND)
	for j := range dirs {
		dirs[j] = float64(j) * 360 / specND
	}
	r := rand.New(rand.NewPCG(seed, uint64(100+m)))
	spec := make([]float64, nt*specNP*specNF*specND)
	for t, h := range times {
		for p := 0; p < specNP; p++ {
			hm0, te, dir0 := seaState(h, p, r)
			// An invented smooth spectrum shape scaled to m0 = (hm0/4)^2.
			fp := 1 / (1.2 * te)
			e := make([]float64, specNF*specND)
			var m0 float64
			for i, f := range freq {
				x := fp / f
				ef := math.Pow(x, 5) * math.Exp(-1.25*x*x*x*x)
				for j, d := range dirs {
					c := math.Cos((d - dir0) * math.Pi / 360)
					e[i*specND+j] = ef * c * c
				}
			}
			for i := range freq {
				df := freq[i] * 0.2
				for j := range dirs {
					m0 += e[i*specND+j] * df * (2 * math.Pi / specND)
				}
			}
			scale := (hm0 / 4) * (hm0 / 4) / m0
			for k, v := range e {
				spec[((t*specNP+p)*specNF*specND)+k] = v * scale
			}
		}
	}
	return &ncDesc{
		dims:   []ncDim{{"time", nt}, {"station", specNP}, {"frequency", specNF}, {"direction", specND}},
		global: syntheticGlobals,
		vars: []*ncVarDesc{
			{name: "time", typ: netcdf.DOUBLE, dims: []string{"time"}, data: times,
				attrs: []ncAttr{text("standard_name", "time"), text("units", baseRefUnits), text("calendar", "standard")}},
			{name: "frequency", typ: netcdf.DOUBLE, dims: []string{"frequency"}, data: freq,
				attrs: []ncAttr{text("standard_name", "sea_surface_wave_frequency"), text("units", "Hz")}},
			{name: "direction", typ: netcdf.DOUBLE, dims: []string{"direction"}, data: dirs,
				attrs: []ncAttr{text("standard_name", "sea_surface_wave_from_direction"), text("units", "degree")}},
			{name: "longitude", typ: netcdf.DOUBLE, dims: []string{"station"}, data: []float64{-20.25, -20.0},
				attrs: []ncAttr{text("standard_name", "longitude"), text("units", "degrees_east")}},
			{name: "latitude", typ: netcdf.DOUBLE, dims: []string{"station"}, data: []float64{45.0, 45.5},
				attrs: []ncAttr{text("standard_name", "latitude"), text("units", "degrees_north")}},
			{name: "efth", typ: netcdf.FLOAT, dims: []string{"time", "station", "frequency", "direction"}, data: spec,
				attrs: []ncAttr{text("standard_name", "sea_surface_wave_directional_variance_spectral_density"), text("units", "m2 s rad-1"), {name: "_FillValue", num: []float64{-999}}}},
			{name: "dpt", typ: netcdf.DOUBLE, dims: []string{"station"}, data: []float64{60, 80},
				attrs: []ncAttr{text("standard_name", "sea_floor_depth_below_sea_surface"), text("units", "m")}},
		},
	}
}
