package ingest

import (
	"context"
	"path/filepath"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

// axesFile writes a tiny spectral file (1 station) with the given times
// (hours since 2031-01-01), frequencies (Hz) and directions (nautical from;
// nil: a 1-D spectrum), every density value equal to value.
func axesFile(t *testing.T, dir, name string, times, freqs, dirs []float64, value float32) string {
	t.Helper()
	p := filepath.Join(dir, name)
	ds, err := netcdf.CreateFile(p, netcdf.CLOBBER)
	if err != nil {
		t.Fatal(err)
	}
	txt := func(v netcdf.Var, k, s string) { v.Attr(k).WriteBytes([]byte(s)) }
	td, _ := ds.AddDim("time", uint64(len(times)))
	sd, _ := ds.AddDim("station", 1)
	fd, _ := ds.AddDim("frequency", uint64(len(freqs)))
	tv, _ := ds.AddVar("time", netcdf.DOUBLE, []netcdf.Dim{td})
	txt(tv, "units", "hours since 2031-01-01 00:00:00")
	lon, _ := ds.AddVar("lon", netcdf.DOUBLE, []netcdf.Dim{sd})
	txt(lon, "standard_name", "longitude")
	txt(lon, "units", "degrees_east")
	lat, _ := ds.AddVar("lat", netcdf.DOUBLE, []netcdf.Dim{sd})
	txt(lat, "standard_name", "latitude")
	txt(lat, "units", "degrees_north")
	fv, _ := ds.AddVar("frequency", netcdf.DOUBLE, []netcdf.Dim{fd})
	txt(fv, "standard_name", "sea_surface_wave_frequency")
	txt(fv, "units", "Hz")
	dims := []netcdf.Dim{td, sd, fd}
	var dv netcdf.Var
	if dirs != nil {
		dd, _ := ds.AddDim("direction", uint64(len(dirs)))
		dv, _ = ds.AddVar("direction", netcdf.DOUBLE, []netcdf.Dim{dd})
		txt(dv, "standard_name", "sea_surface_wave_from_direction")
		txt(dv, "units", "degree")
		dims = append(dims, dd)
	}
	sv, _ := ds.AddVar("efth", netcdf.FLOAT, dims)
	if dirs != nil {
		txt(sv, "standard_name", "sea_surface_wave_directional_variance_spectral_density")
		txt(sv, "units", "m2 s rad-1")
	} else {
		txt(sv, "standard_name", "sea_surface_wave_variance_spectral_density")
		txt(sv, "units", "m2 s")
	}
	if err := ds.EndDef(); err != nil {
		t.Fatal(err)
	}
	tv.WriteFloat64s(times)
	lon.WriteFloat64s([]float64{171})
	lat.WriteFloat64s([]float64{-48})
	fv.WriteFloat64s(freqs)
	n := len(times) * len(freqs)
	if dirs != nil {
		dv.WriteFloat64s(dirs)
		n *= len(dirs)
	}
	vals := make([]float32, n)
	for i := range vals {
		vals[i] = value
	}
	sv.WriteFloat32s(vals)
	if err := ds.Close(); err != nil {
		t.Fatal(err)
	}
	return p
}

// Files on different spectral axes are read each on its own: the catalog
// keeps two sets for three files (the third back on the first's), lists
// three axis segments, warns, and every block carries its file's set and
// its number of bins, its values all from that file.
func TestSpectralAxesPerFile(t *testing.T) {
	dir := t.TempDir()
	fa, da := []float64{0.05, 0.1, 0.2}, []float64{0, 90, 180, 270}
	fb, db := []float64{0.04, 0.06, 0.09, 0.14, 0.2}, []float64{0, 60, 120, 180, 240, 300}
	axesFile(t, dir, "a.nc", []float64{0, 6}, fa, da, 1)
	axesFile(t, dir, "b.nc", []float64{12, 18}, fb, db, 2)
	axesFile(t, dir, "c.nc", []float64{24, 30}, fa, da, 3)
	c, err := Open([]string{dir}, Options{DeepWater: true})
	if err != nil {
		t.Fatalf("files on two sets of spectral axes: %v", err)
	}
	if len(c.SpectralAxes) != 2 || len(c.SpectralAxes[1].FreqHz) != 5 || len(c.SpectralAxes[1].DirDeg) != 6 || c.Spectral != c.SpectralAxes[0] {
		t.Fatalf("SpectralAxes %+v", c.SpectralAxes)
	}
	want := []struct {
		axes, nf, nd int
		first, file  string
	}{{0, 3, 4, "2031-01-01 00:00:00", "a.nc"}, {1, 5, 6, "2031-01-01 12:00:00", "b.nc"}, {0, 3, 4, "2031-01-02 00:00:00", "c.nc"}}
	if len(c.AxisSegments) != 3 {
		t.Fatalf("AxisSegments %+v, want 3", c.AxisSegments)
	}
	for i, w := range want {
		s := c.AxisSegments[i]
		if s.Axes != w.axes || s.Frequencies != w.nf || s.Directions != w.nd || s.First != w.first || filepath.Base(s.FirstFile) != w.file {
			t.Errorf("segment %d: %+v, want %+v", i, s, w)
		}
	}
	if !strings.Contains(strings.Join(c.Warnings, "\n"), "the spectral axes change between files: 2031-01-01 00:00:00 to 2031-01-01 06:00:00: 3 x 4 bins, 0.05 .. 0.2 Hz (1 file, a.nc); 2031-01-01 12:00:00") {
		t.Errorf("warnings do not list the axis segments: %q", c.Warnings)
	}
	out := make(chan *Block, 8)
	go func() {
		if err := c.Read(context.Background(), ReadRange{}, out); err != nil {
			t.Error(err)
		}
		close(out)
	}()
	n := 0
	for b := range out {
		w := want[b.File]
		if b.Axes != w.axes || b.NF != w.nf || b.ND != w.nd || len(b.Spec) != b.NT*w.nf*w.nd {
			t.Errorf("block of file %d: axes %d, %d x %d, %d values; want axes %d, %d x %d", b.File, b.Axes, b.NF, b.ND, len(b.Spec), w.axes, w.nf, w.nd)
		}
		for _, v := range b.Spec {
			if v != float64(b.File+1) {
				t.Fatalf("block of file %d holds %v", b.File, v)
			}
		}
		n++
	}
	if n != 3 {
		t.Errorf("%d blocks, want 3", n)
	}
	// one set of axes: no segments, no warning
	c, err = Open([]string{filepath.Join(dir, "a.nc"), filepath.Join(dir, "c.nc")}, Options{DeepWater: true, AllowLongGaps: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(c.SpectralAxes) != 1 || c.AxisSegments != nil || strings.Contains(strings.Join(c.Warnings, "\n"), "spectral axes") {
		t.Errorf("one set of axes: %d sets, segments %+v, warnings %q", len(c.SpectralAxes), c.AxisSegments, c.Warnings)
	}
}

// A time held by two files on different spectral axes cannot be compared
// bin by bin: refused naming both files, both sets and the key, and read
// from the file the key chooses.
func TestSpectralAxesSharedStep(t *testing.T) {
	dir := t.TempDir()
	a := axesFile(t, dir, "a.nc", []float64{0, 6}, []float64{0.05, 0.1, 0.2}, []float64{0, 90, 180, 270}, 1)
	b := axesFile(t, dir, "b.nc", []float64{6, 12}, []float64{0.04, 0.08, 0.16, 0.3}, []float64{0, 120, 240}, 1)
	_, err := Open([]string{a, b}, Options{DeepWater: true})
	if err == nil {
		t.Fatal("a shared time on two sets of axes was read")
	}
	for _, frag := range []string{"a.nc", "b.nc", "2031-01-01 06:00:00", "different spectral axes", "3 x 4 bins", "4 x 3 bins", `input.duplicate_steps = "first"`} {
		if !strings.Contains(err.Error(), frag) {
			t.Errorf("refusal lacks %q: %v", frag, err)
		}
	}
	c, err := Open([]string{a, b}, Options{DeepWater: true, Duplicates: DuplicatesLast})
	if err != nil {
		t.Fatalf("input.duplicate_steps = \"last\": %v", err)
	}
	if len(c.Duplicates) != 1 || c.Duplicates[0].Identical {
		t.Errorf("duplicates %+v, want one, not identical", c.Duplicates)
	}
}

// A record mixing 2-D and 1-D spectra is refused: the directional
// statistics need the direction axis in every file; the message names both
// files and the [roles] keys.
func TestSpectralAxesDirectionNeeded(t *testing.T) {
	dir := t.TempDir()
	a := axesFile(t, dir, "a.nc", []float64{0, 6}, []float64{0.05, 0.1, 0.2}, []float64{0, 90, 180, 270}, 1)
	b := axesFile(t, dir, "b.nc", []float64{12, 18}, []float64{0.05, 0.1, 0.2}, nil, 1)
	_, err := Open([]string{a, b}, Options{DeepWater: true})
	if err == nil {
		t.Fatal("2-D and 1-D spectra in one record were read")
	}
	for _, frag := range []string{a, b, "direction axis", "directional statistics", "roles.spectrum2d"} {
		if !strings.Contains(err.Error(), frag) {
			t.Errorf("refusal lacks %q: %v", frag, err)
		}
	}
}

// A direction coordinate in Hz without a standard_name is taken for a
// frequency, and its value 0 is refused quoting the coordinate's units and
// long_name and saying that no spec key overrides them.
func TestSpectralAxisRefusalQuotes(t *testing.T) {
	_, err := Open([]string{spectralFile(t, map[string]string{"standard_name": "sea_surface_wave_frequency", "units": "Hz"},
		map[string]string{"long_name": "bin", "units": "Hz"})}, Options{DeepWater: true})
	if err == nil {
		t.Fatal("a direction coordinate in Hz was read")
	}
	for _, frag := range []string{`variable "direction": frequency 0 is 0 (units "Hz", long_name "bin")`, "no spec key"} {
		if !strings.Contains(err.Error(), frag) {
			t.Errorf("refusal lacks %q: %v", frag, err)
		}
	}
}
