package ingest

import (
	"math"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

// The conversion to nautical "from" (common practice): a Cartesian angle
// (counterclockwise from east, going to) of 0 goes east, so it comes from
// 270; 90 goes north (from 180); 180 goes west (from 90); 270 goes south
// (from 0). A nautical "to" is the opposite bearing.
func TestToNauticalFrom(t *testing.T) {
	for _, c := range []struct {
		conv    DirConvention
		in, out float64
	}{
		{Cartesian, 0, 270}, {Cartesian, 90, 180}, {Cartesian, 180, 90}, {Cartesian, 270, 0}, {Cartesian, 45, 225},
		{Cartesian, 315, 315}, {Cartesian, -90, 0}, {Cartesian, 360, 270},
		{NauticalTo, 0, 180}, {NauticalTo, 270, 90}, {NauticalTo, 359, 179},
		{NauticalFrom, 30, 30}, {NauticalFrom, 360, 0}, {NauticalFrom, -30, 330},
	} {
		if got := c.conv.ToNauticalFrom(c.in); math.Abs(got-c.out) > 1e-12 {
			t.Errorf("%s %v: nautical from %v, want %v", c.conv, c.in, got, c.out)
		}
	}
}

func TestDirOfText(t *testing.T) {
	for _, c := range []struct {
		text            string
		conv            DirConvention
		speaks, unclear bool
	}{
		{"Cartesian direction, going to, counterclockwise from east", Cartesian, true, false},
		{"wave direction (counter-clockwise from east, mathematical convention)", Cartesian, true, false},
		{"direction waves come from? no: direction the waves are going to", "", true, true},
		{"direction the spectral component comes from, clockwise from north (bin centre)", NauticalFrom, true, false},
		{"mean wave direction, nautical convention, coming from", NauticalFrom, true, false},
		{"sea surface wave to direction", NauticalTo, true, false},
		{"direction of propagation, clockwise from north", NauticalTo, true, false},
		{"spectral direction bin", "", false, false},
		{"clockwise from north", "", false, false},
		{"degrees from east", "", false, false},
		{"Cartesian, coming from", "", true, true},
	} {
		conv, speaks, unclear := dirOfText(c.text)
		if conv != c.conv || speaks != c.speaks || unclear != c.unclear {
			t.Errorf("%q: %q speaks %v unclear %v, want %q %v %v", c.text, conv, speaks, unclear, c.conv, c.speaks, c.unclear)
		}
	}
}

// Every combination of the attributes and the spec: read (the convention)
// or refused (each fragment in the message).
func TestResolveDirection(t *testing.T) {
	sn := func(v string) attr { return attr{"standard_name", v} }
	ln := func(v string) attr { return attr{"long_name", v} }
	cm := func(v string) attr { return attr{"comment", v} }
	const cart = "Cartesian, going to, counterclockwise from east"
	for i, c := range []struct {
		attrs   []attr
		sp      dirSpec
		want    DirConvention
		refused []string
	}{
		{[]attr{sn("sea_surface_wave_from_direction")}, dirSpec{}, NauticalFrom, nil},
		{[]attr{sn("sea_surface_wave_to_direction")}, dirSpec{}, NauticalTo, nil},
		{[]attr{ln(cart)}, dirSpec{}, Cartesian, nil},
		{[]attr{ln("bin"), cm(cart)}, dirSpec{}, Cartesian, nil},
		{[]attr{sn("sea_surface_wave_to_direction"), ln(cart)}, dirSpec{},
			"", []string{`standard_name "sea_surface_wave_to_direction" (nautical_to)`, `long_name "` + cart + `" (cartesian)`, "disagree", "input.direction_convention"}},
		{[]attr{sn("sea_surface_wave_to_direction"), ln(cart)}, dirSpec{conv: Cartesian}, Cartesian, nil},
		{[]attr{sn("sea_surface_wave_to_direction"), ln(cart)}, dirSpec{conv: NauticalTo}, NauticalTo, nil},
		{[]attr{sn("sea_surface_wave_to_direction"), ln(cart)}, dirSpec{conv: NauticalFrom},
			"", []string{"agrees with neither", "input.direction_convention_force"}},
		{[]attr{sn("sea_surface_wave_to_direction"), ln(cart)}, dirSpec{conv: NauticalFrom, force: true}, NauticalFrom, nil},
		{[]attr{ln(cart), cm("coming from, clockwise from north")}, dirSpec{},
			"", []string{`long_name "` + cart + `" (cartesian)`, `comment "coming from, clockwise from north" (nautical_from)`}},
		{[]attr{sn("sea_surface_wave_to_direction")}, dirSpec{conv: NauticalFrom},
			"", []string{`input.direction_convention = "nautical_from" contradicts`, `standard_name "sea_surface_wave_to_direction" (nautical_to)`, "input.direction_convention_force"}},
		{[]attr{sn("sea_surface_wave_to_direction")}, dirSpec{conv: NauticalTo}, NauticalTo, nil},
		{[]attr{sn("sea_surface_wave_to_direction")}, dirSpec{conv: Cartesian, force: true}, Cartesian, nil},
		{[]attr{ln("bin")}, dirSpec{}, "", []string{`long_name "bin"`, "say nothing", "input.direction_convention"}},
		{[]attr{ln("Cartesian, coming from")}, dirSpec{}, "", []string{`long_name "Cartesian, coming from"`, "unclear", "input.direction_convention"}},
		{[]attr{sn("sea_surface_wave_from_direction"), ln("Cartesian, coming from")}, dirSpec{}, NauticalFrom, nil}, // the standard_name decides what an unclear text does not
		{nil, dirSpec{}, "", []string{"no standard_name, long_name or comment", "input.direction_convention"}},
		{nil, dirSpec{conv: Cartesian}, Cartesian, nil},
	} {
		got, from, err := resolveDirection("f.nc", "direction", c.attrs, c.sp)
		if c.refused != nil {
			if err == nil {
				t.Errorf("case %d %v %+v: read as %s (%s), want a refusal", i, c.attrs, c.sp, got, from)
				continue
			}
			for _, frag := range append(c.refused, "f.nc", `"direction"`) {
				if !strings.Contains(err.Error(), frag) {
					t.Errorf("case %d: refusal lacks %q: %v", i, frag, err)
				}
			}
			continue
		}
		if err != nil || got != c.want || from == "" {
			t.Errorf("case %d %v %+v: %q (%s) %v, want %q", i, c.attrs, c.sp, got, from, err, c.want)
		}
	}
}

func TestResolveEncoding(t *testing.T) {
	sp := func(enc Encoding, units, file string) encSpec {
		return encSpec{enc: enc, units: units, encKey: "units.spectrum2d_encoding", unitsKey: "units.spectrum2d", fileUnits: file}
	}
	for i, c := range []struct {
		sp        encSpec
		ln, cm    string
		want      Encoding
		inner     string
		refused   []string
		fromHolds string
	}{
		{sp("", "", "m2 s rad-1"), "", "", Linear, "m2 s rad-1", nil, "no attribute saying"},
		{sp("", "", "log10(m2 s rad-1)"), "", "", Log10, "m2 s rad-1", nil, `units "log10(m2 s rad-1)"`},
		{sp("", "", "lg(re 1 m2 s rad-1)"), "", "", Log10, "m2 s rad-1", nil, ""},
		{sp("", "", "ln(m2 s)"), "", "", Ln, "m2 s", nil, ""},
		{sp("", "", "m2 s rad-1"), "log10 of the spectral density", "", Log10, "m2 s rad-1", nil, "long_name"},
		{sp("", "", "m2 s rad-1"), "", "natural logarithm of E", Ln, "m2 s rad-1", nil, "comment"},
		{sp("", "", "m2 s rad-1"), "spectral density on log-spaced frequencies", "frequencies logarithmically spaced", Linear, "m2 s rad-1", nil, ""},
		{sp("", "", "log(m2 s rad-1)"), "", "", "", "", []string{`units "log(m2 s rad-1)"`, "unstated base", "units.spectrum2d_encoding"}, ""},
		{sp("", "", "log10(m2 s rad-1)"), "", "natural logarithm", "", "", []string{"disagree", `units "log10(m2 s rad-1)" (log10)`, `comment "natural logarithm" (ln)`, "units.spectrum2d_encoding"}, ""},
		{sp(Log10, "", "m2 s rad-1"), "", "", Log10, "m2 s rad-1", nil, `spec units.spectrum2d_encoding = "log10"`},
		{sp(Linear, "", "m2 s rad-1"), "log10 of E", "", Linear, "m2 s rad-1", nil, "over the file's long_name"},
		{sp(Linear, "log10(m2 s rad-1)", "m2 s rad-1"), "", "", "", "", []string{"contradicts itself", "units.spectrum2d", "units.spectrum2d_encoding"}, ""},
		{sp("", "ln(m2 s rad-1)", "m2 s rad-1"), "log10 of E", "", Ln, "m2 s rad-1", nil, `spec units.spectrum2d = "ln(m2 s rad-1)"`},
	} {
		got, from, inner, err := resolveEncoding("f.nc", "efth", c.sp, c.ln, c.cm)
		if c.refused != nil {
			if err == nil {
				t.Errorf("case %d: read as %s (%s), want a refusal", i, got, from)
				continue
			}
			for _, frag := range c.refused {
				if !strings.Contains(err.Error(), frag) {
					t.Errorf("case %d: refusal lacks %q: %v", i, frag, err)
				}
			}
			continue
		}
		if err != nil || got != c.want || inner != c.inner || !strings.Contains(from, c.fromHolds) {
			t.Errorf("case %d: %q inner %q from %q err %v; want %q inner %q from holding %q", i, got, inner, from, err, c.want, c.inner, c.fromHolds)
		}
	}
	// decode: 10^x and e^x (definitions)
	if got := Log10.decode(-2); math.Abs(got-0.01) > 1e-18 {
		t.Errorf("log10 decode of -2: %v", got)
	}
	if got := Ln.decode(1); math.Abs(got-math.E) > 1e-15 {
		t.Errorf("ln decode of 1: %v", got)
	}
}

// Density units against the axes' units: factors (S(f) = 2 pi S(omega),
// per degree x 180/pi; common practice) and which pairs are ambiguous.
func TestReadDensityUnits(t *testing.T) {
	tp := 2 * math.Pi
	for _, c := range []struct {
		u         string
		q         Quantity
		radS      bool
		stated    DensityBasis
		factor    float64
		ambiguous bool
		refused   bool
	}{
		{"m2 s rad-1", Density2D, false, "", 1, false, false},
		{"m2 s degree-1", Density2D, false, "", 180 / math.Pi, false, false},
		{"m2 s rad-1", Density2D, true, "", 1, true, false},
		{"m2 s rad-1", Density2D, true, PerHz, 1, true, false},
		{"m2 s rad-1", Density2D, true, PerRadS, tp, true, false},
		{"m2 s deg-1", Density2D, true, PerRadS, tp * 180 / math.Pi, true, false},
		{"m2 s rad-1", Density2D, false, PerRadS, tp, false, false},
		{"m2 Hz-1 rad-1", Density2D, true, "", 1, false, false},
		{"m2 Hz-1 rad-1", Density2D, true, PerRadS, 0, false, true},
		{"m2 s rad-2", Density2D, false, "", tp, false, false},
		{"m2 s rad-2", Density2D, true, "", tp, false, false},
		{"m2 s rad-2", Density2D, true, PerHz, 0, false, true},
		{"m2 s", Density2D, false, "", 0, false, true},
		{"m2 s", Density1D, false, "", 1, false, false},
		{"m2 s", Density1D, true, "", 1, true, false},
		{"m2 s", Density1D, true, PerRadS, tp, true, false},
		{"m2/Hz", Density1D, true, "", 1, false, false},
		{"m2 s rad-1", Density1D, true, "", tp, false, false},
		{"m2 s rad-1", Density1D, false, "", tp, true, false},
		{"m2 s rad-1", Density1D, false, PerHz, 1, true, false},
		{"m2 Hz-1 rad-1", Density1D, false, "", 0, false, true},
		{"cm2 s", Density1D, false, "", 1e-4, false, false},
	} {
		r, err := readDensityUnits(c.u, c.q, c.radS, false, c.stated, "units.x_basis")
		if c.refused {
			if err == nil {
				t.Errorf("%q %v rad/s %v stated %q: read (%v), want a refusal", c.u, c.q, c.radS, c.stated, r.factor)
			}
			continue
		}
		if err != nil || math.Abs(r.factor-c.factor) > 1e-12*c.factor || r.ambiguous != c.ambiguous || r.stated != (c.stated != "") {
			t.Errorf("%q %v rad/s %v stated %q: factor %v ambiguous %v stated %v err %v; want %v %v", c.u, c.q, c.radS, c.stated, r.factor, r.ambiguous, r.stated, err, c.factor, c.ambiguous)
		}
	}
}

// spectralFile writes a tiny spectral point file (invented values): 2
// steps, 1 station, 3 frequencies, 4 directions, with the given attributes
// on the frequency and direction coordinates.
func spectralFile(t *testing.T, freqAttrs, dirAttrs map[string]string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "tiny.nc")
	ds, err := netcdf.CreateFile(p, netcdf.CLOBBER)
	if err != nil {
		t.Fatal(err)
	}
	td, _ := ds.AddDim("time", 2)
	sd, _ := ds.AddDim("station", 1)
	fd, _ := ds.AddDim("frequency", 3)
	dd, _ := ds.AddDim("direction", 4)
	txt := func(v netcdf.Var, k, s string) { v.Attr(k).WriteBytes([]byte(s)) }
	tv, _ := ds.AddVar("time", netcdf.DOUBLE, []netcdf.Dim{td})
	txt(tv, "units", "hours since 2031-01-01 00:00:00")
	lon, _ := ds.AddVar("lon", netcdf.DOUBLE, []netcdf.Dim{sd})
	txt(lon, "standard_name", "longitude")
	txt(lon, "units", "degrees_east")
	lat, _ := ds.AddVar("lat", netcdf.DOUBLE, []netcdf.Dim{sd})
	txt(lat, "standard_name", "latitude")
	txt(lat, "units", "degrees_north")
	fv, _ := ds.AddVar("frequency", netcdf.DOUBLE, []netcdf.Dim{fd})
	for k, v := range freqAttrs {
		txt(fv, k, v)
	}
	dv, _ := ds.AddVar("direction", netcdf.DOUBLE, []netcdf.Dim{dd})
	for k, v := range dirAttrs {
		txt(dv, k, v)
	}
	sv, _ := ds.AddVar("efth", netcdf.FLOAT, []netcdf.Dim{td, sd, fd, dd})
	txt(sv, "standard_name", "sea_surface_wave_directional_variance_spectral_density")
	txt(sv, "units", "m2 s rad-1")
	if err := ds.EndDef(); err != nil {
		t.Fatal(err)
	}
	tv.WriteFloat64s([]float64{0, 6})
	lon.WriteFloat64s([]float64{171})
	lat.WriteFloat64s([]float64{-48})
	fv.WriteFloat64s([]float64{0.05, 0.1, 0.2})
	dv.WriteFloat64s([]float64{0, 90, 180, 270})
	sv.WriteFloat32s(make([]float32, 24))
	if err := ds.Close(); err != nil {
		t.Fatal(err)
	}
	return p
}

// A frequency coordinate with standard_name wave_frequency (a CF standard
// name; quoted from memory) is read; one in Hz under another standard_name
// is refused saying that its units are a frequency but its standard_name is
// not (not "neither a frequency"); a coordinate in neither frequency nor
// angle units is refused quoting what it has.
func TestSpectralAxisStandardNames(t *testing.T) {
	dir := map[string]string{"standard_name": "sea_surface_wave_from_direction", "units": "degree"}
	c, err := Open([]string{spectralFile(t, map[string]string{"standard_name": "wave_frequency", "units": "Hz"}, dir)}, Options{DeepWater: true})
	if err != nil {
		t.Fatalf("standard_name wave_frequency: %v", err)
	}
	if len(c.Spectral.FreqHz) != 3 || c.Spectral.FreqHz[2] != 0.2 {
		t.Errorf("frequencies %v", c.Spectral.FreqHz)
	}
	_, err = Open([]string{spectralFile(t, map[string]string{"standard_name": "sea_surface_wave_period", "long_name": "bin", "units": "Hz"}, dir)}, Options{DeepWater: true})
	if err == nil {
		t.Fatal("a Hz coordinate named sea_surface_wave_period was read")
	}
	for _, frag := range []string{`units "Hz", a frequency`, `standard_name "sea_surface_wave_period"`, `long_name "bin"`, "wave_frequency", "no spec key"} {
		if !strings.Contains(err.Error(), frag) {
			t.Errorf("refusal lacks %q: %v", frag, err)
		}
	}
	if strings.Contains(err.Error(), "neither a frequency") {
		t.Errorf("refusal says the Hz coordinate is neither a frequency: %v", err)
	}
	_, err = Open([]string{spectralFile(t, map[string]string{"standard_name": "sea_surface_wave_frequency", "units": "Hz"},
		map[string]string{"long_name": "bin", "units": "m"})}, Options{DeepWater: true})
	if err == nil || !strings.Contains(err.Error(), `units "m" (long_name "bin")`) || !strings.Contains(err.Error(), "neither a frequency") {
		t.Errorf("a direction coordinate in m: %v", err)
	}
}

// The fixtures of testdata/conventions (make_fixtures.py, python3-netcdf4)
// read as written: the directions of every direction variant, converted to
// nautical from, are those of the nautical-from file (exactly: whole
// degrees); a log10 density decodes to 10^x; a rad/s density stated per
// rad/s has the factor 2 pi; the readings name what decided them.
func TestConventionFixturesRead(t *testing.T) {
	dirs := func(name string, opt Options) ([]float64, *Catalog) {
		t.Helper()
		opt.DeepWater = true
		c, err := Open([]string{"../testdata/conventions/" + name + ".nc"}, opt)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		d := append([]float64(nil), c.Spectral.DirDeg...)
		sort.Float64s(d)
		return d, c
	}
	want, _ := dirs("dir_from", Options{})
	for _, c := range []struct {
		name string
		opt  Options
		conv DirConvention
	}{
		{"dir_to", Options{}, NauticalTo},
		{"dir_cartesian_longname", Options{}, Cartesian},
		{"dir_cartesian_comment", Options{}, Cartesian},
		{"dir_to_sn_cartesian_ln", Options{DirConvention: Cartesian}, Cartesian},
		{"dir_unlabelled", Options{DirConvention: Cartesian}, Cartesian},
		{"per_degree_rad_axis", Options{}, NauticalFrom},
	} {
		got, cat := dirs(c.name, c.opt)
		if cat.Spectral.DirConvention != c.conv {
			t.Errorf("%s: convention %q, want %q", c.name, cat.Spectral.DirConvention, c.conv)
		}
		for i := range want {
			if math.Abs(got[i]-want[i]) > 1e-9 {
				t.Errorf("%s: directions %v, want %v", c.name, got, want)
				break
			}
		}
	}
	_, c := dirs("log10_longname", Options{})
	vi := c.Vars[Spectrum2D]
	if vi.Encoding != Log10 || vi.unpack(-1) != 0.1 {
		t.Errorf("log10_longname: encoding %q, -1 unpacks to %v", vi.Encoding, vi.unpack(-1))
	}
	_, c = dirs("rads_2d_per_rads", Options{Basis: map[Role]DensityBasis{Spectrum2D: PerRadS}})
	if f := c.Vars[Spectrum2D].Factor; math.Abs(f-2*math.Pi) > 1e-15 {
		t.Errorf("rads_2d_per_rads stated per rad/s: factor %v, want 2 pi", f)
	}
	if math.Abs(c.Spectral.FreqHz[0]-0.04) > 1e-15 {
		t.Errorf("rads_2d_per_rads: first frequency %v Hz, want 0.04", c.Spectral.FreqHz[0])
	}
	var units *Reading
	for i := range c.Readings {
		if c.Readings[i].What == "density units" {
			units = &c.Readings[i]
		}
	}
	if units == nil || !units.Ambiguous || !units.Stated || units.Unsettled() || units.Key != "units.spectrum2d_basis" {
		t.Errorf("rads_2d_per_rads: density units reading %+v", units)
	}
	_, c = dirs("rads_2d_per_rads", Options{})
	if !c.Readings[len(c.Readings)-1].Unsettled() {
		t.Errorf("rads_2d_per_rads without a statement: reading %+v not unsettled", c.Readings[len(c.Readings)-1])
	}
}
