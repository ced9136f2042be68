package ingest

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/fhs/go-netcdf/netcdf"
)

// Fuzz targets for the parsers that see untrusted text and bytes. The property
// checked is the one the reliability rules ask for: any input gives a value or
// an error, never a panic, a hang or an allocation the input does not justify.
// Run them with `make fuzz`; crashers found become regression tests below.

// FuzzParseTimeUnits fuzzes the CF time-units parser and the stamp/date
// arithmetic behind it. Beyond "no panic" it checks a property of the CF
// definition (CF 1.8 section 4.4: time = reference + value x unit): a value of
// 0 gives the reference itself, and converting that reference to a date and
// back gives the same stamp.
func FuzzParseTimeUnits(f *testing.F) {
	for _, s := range []string{
		"hours since 2001-01-01 00:00:00", "days since 1950-01-01", "seconds since 1970-01-01T00:00:00Z",
		"minutes since 2000-02-29 12:30:00 +05:30", "hours since -0001-12-31", "days since 1582-10-15",
		"hours", "hours since", "months since 2000-01-01", "hours since 2001-13-45", "days since 0000-01-01 24:00:00",
	} {
		for _, c := range []string{"standard", "noleap", "360_day", "julian", "all_leap", "lunar"} {
			f.Add(s, c, 12.5)
		}
	}
	f.Fuzz(func(t *testing.T, units, calendar string, v float64) {
		done := make(chan struct{})
		defer close(done)
		go func() {
			select {
			case <-done:
			case <-time.After(2 * time.Second):
				panic(fmt.Sprintf("hang: %q %q %v", units, calendar, v))
			}
		}()
		cal, err := ParseCalendar(calendar)
		if err != nil {
			return
		}
		tu, err := ParseTimeUnits(units, cal)
		if err != nil {
			return
		}
		st, err := tu.Stamp(0)
		if err != nil {
			t.Fatalf("%q: value 0 gives %v", units, err)
		}
		if st != tu.Ref {
			t.Fatalf("%q: value 0 gives stamp %d, reference is %d", units, st, tu.Ref)
		}
		d := DateOf(cal, tu.Ref)
		if back := StampOf(cal, d); back != tu.Ref {
			t.Fatalf("%q (%s): reference %d -> %v -> %d", units, cal, tu.Ref, d, back)
		}
		if s, err := tu.Stamp(v); err == nil {
			_ = DateOf(cal, s).String()
		} else if lo, hi := timeRange(cal); !math.IsNaN(v) && !math.IsInf(v, 0) && float64(tu.Ref)+math.Round(v*tu.Seconds) >= float64(lo) && float64(tu.Ref)+math.Round(v*tu.Seconds) < float64(hi) {
			t.Fatalf("%q: finite value %v within the years %d-%d refused: %v", units, v, MinYear, MaxYear, err)
		}
	})
}

// smallClassic writes a tiny well-formed classic bulk file (invented values)
// and returns its bytes: the seed for the catalog fuzzer.
func smallClassic(t testing.TB, dir string) []byte {
	p := filepath.Join(dir, "seed.nc")
	ds, err := netcdf.CreateFile(p, netcdf.CLOBBER)
	if err != nil {
		t.Fatal(err)
	}
	td, _ := ds.AddDim("time", 4)
	yd, _ := ds.AddDim("lat", 2)
	xd, _ := ds.AddDim("lon", 3)
	txt := func(v netcdf.Var, k, s string) { v.Attr(k).WriteBytes([]byte(s)) }
	tv, _ := ds.AddVar("time", netcdf.DOUBLE, []netcdf.Dim{td})
	txt(tv, "units", "hours since 2001-01-01 00:00:00")
	txt(tv, "calendar", "standard")
	lat, _ := ds.AddVar("lat", netcdf.DOUBLE, []netcdf.Dim{yd})
	txt(lat, "standard_name", "latitude")
	txt(lat, "units", "degrees_north")
	lon, _ := ds.AddVar("lon", netcdf.DOUBLE, []netcdf.Dim{xd})
	txt(lon, "standard_name", "longitude")
	txt(lon, "units", "degrees_east")
	hm, _ := ds.AddVar("hm0", netcdf.FLOAT, []netcdf.Dim{td, yd, xd})
	txt(hm, "standard_name", "sea_surface_wave_significant_height")
	txt(hm, "units", "m")
	hm.Attr("_FillValue").WriteFloat32s([]float32{-999})
	te, _ := ds.AddVar("te", netcdf.SHORT, []netcdf.Dim{td, yd, xd})
	txt(te, "standard_name", "sea_surface_wave_mean_period_from_variance_spectral_density_inverse_frequency_moment")
	txt(te, "units", "s")
	te.Attr("scale_factor").WriteFloat64s([]float64{0.01})
	if err := ds.EndDef(); err != nil {
		t.Fatal(err)
	}
	tv.WriteFloat64s([]float64{0, 3, 6, 9})
	lat.WriteFloat64s([]float64{40, 40.5})
	lon.WriteFloat64s([]float64{-20, -19.5, -19})
	h := make([]float32, 24)
	s := make([]int16, 24)
	for i := range h {
		h[i], s[i] = 1+0.1*float32(i), int16(600+i)
	}
	hm.WriteFloat32s(h)
	te.WriteInt16s(s)
	if err := ds.Close(); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// FuzzCatalogMetadata fuzzes the catalog's handling of file metadata: the
// bytes of a classic NetCDF file (seeded with a small valid one and variants
// with a cut tail or a bad magic) are written to disk and opened with Open.
// Open must return a catalog or an error naming the file; a catalog it
// returns must be self-consistent (steps = sum of the files' steps, one depth
// and one mask entry per cell).
func FuzzCatalogMetadata(f *testing.F) {
	seed := smallClassic(f, f.TempDir())
	f.Add(seed)
	f.Add(seed[:len(seed)/2])
	f.Add(append([]byte("CDF\x02"), seed[4:]...))
	f.Add([]byte("CDF\x01\x00\x00\x00\x00"))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		if len(data) > 1<<16 {
			return
		}
		// Only classic bytes: the HDF5 library under NetCDF-4 is not hardened
		// against hostile files (a known limit of the C library, not fuzzed here).
		if len(data) >= 4 && string(data[:4]) == "\x89HDF" {
			return
		}
		p := filepath.Join(dir, "fuzz.nc")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		c, err := Open([]string{p}, Options{DeepWater: true})
		if err != nil {
			if !strings.Contains(err.Error(), p) && !strings.Contains(err.Error(), "every cell") {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		n := 0
		for _, fi := range c.Files {
			n += fi.Steps
		}
		if n != c.Steps || len(c.Times()) != c.Steps {
			t.Fatalf("steps %d, files hold %d, times %d", c.Steps, n, len(c.Times()))
		}
		if len(c.Depth) != c.Grid.NCells() || len(c.Masked) != c.Grid.NCells() {
			t.Fatalf("depth %d, mask %d, cells %d", len(c.Depth), len(c.Masked), c.Grid.NCells())
		}
	})
}
