package synth

import (
	"swellgrid/internal/testtool"

	"bytes"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

// refValues are the values made by testdata/refgen.py with Debian's
// python3-numpy 1.24.2, python3-scipy 1.10.1 and python3-cftime 1.6.2
// (versions also recorded inside the file).
type refValues struct {
	MadeWith      map[string]string  `json:"made_with"`
	ShapeIntegral map[string]float64 `json:"shape_integral"`
	Jonswap       []struct {
		Hm0, Tp, Gamma float64
		Freq, S        []float64
	} `json:"jonswap"`
	Spreading []struct {
		S, Mean        float64
		Theta, D       []float64
		CircleIntegral float64 `json:"circle_integral"`
	} `json:"spreading"`
	Calendars map[string]struct {
		Units  string
		Values []float64
	} `json:"calendars"`
}

func loadRef(t *testing.T) refValues {
	t.Helper()
	b, err := os.ReadFile("testdata/ref_values.json")
	if err != nil {
		t.Fatalf("reference values: %v (make them with /usr/bin/python3 pipelines/synth/testdata/refgen.py)", err)
	}
	var r refValues
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r
}

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// --- formulas against scipy and handbook values -----------------------------

func TestJonswapShapeIntegralAgainstScipy(t *testing.T) {
	ref := loadRef(t)
	for g, want := range ref.ShapeIntegral {
		var gamma float64
		if err := json.Unmarshal([]byte(g), &gamma); err != nil {
			t.Fatal(err)
		}
		// Reference: scipy.integrate.quad (refgen.py).
		if got := jonswapShapeIntegral(gamma); relErr(got, want) > 1e-10 {
			t.Errorf("I(%g) = %.15g, scipy quad gives %.15g", gamma, got, want)
		}
	}
	// gamma = 1 is exactly 1/5 (closed form, see jonswapShapeIntegral).
	if got := jonswapShapeIntegral(1); math.Abs(got-0.2) > 1e-12 {
		t.Errorf("I(1) = %.15g, want 0.2", got)
	}
}

func TestJonswapNormalisationAgainstHandbook(t *testing.T) {
	// DNV-RP-C205 (2010) 3.5.5: the JONSWAP normalising factor
	// A_gamma = 1 - 0.287 ln(gamma), given there as an approximation (from
	// memory). Our exact factor is I(1)/I(gamma).
	for _, c := range []struct{ gamma, tol float64 }{{2, 0.005}, {3.3, 0.005}, {5, 0.02}} {
		got := jonswapShapeIntegral(1) / jonswapShapeIntegral(c.gamma)
		want := 1 - 0.287*math.Log(c.gamma)
		if relErr(got, want) > c.tol {
			t.Errorf("gamma %g: normalising factor %.4f, DNV-RP-C205 approximation %.4f", c.gamma, got, want)
		}
	}
}

func TestJonswapAgainstScipy(t *testing.T) {
	ref := loadRef(t)
	for _, r := range ref.Jonswap {
		n := jonswapShapeIntegral(r.Gamma)
		for i, f := range r.Freq {
			// Reference: refgen.py (JONSWAP normalised with scipy quad).
			if got := jonswapS(f, r.Hm0, r.Tp, r.Gamma, n); relErr(got, r.S[i]) > 1e-9 && math.Abs(got-r.S[i]) > 1e-300 {
				t.Errorf("Hm0 %g Tp %g gamma %g f %g: S = %.12g, reference %.12g", r.Hm0, r.Tp, r.Gamma, f, got, r.S[i])
			}
		}
	}
	// Pierson-Moskowitz form for gamma = 1: (5/16) Hs^2 fp^4 f^-5 exp(-5/4 (fp/f)^4)
	// (DNV-RP-C205 3.5.5, from memory).
	hs, tp, f := 3.0, 10.0, 0.13
	fp := 1 / tp
	want := 5.0 / 16 * hs * hs * math.Pow(fp, 4) * math.Pow(f, -5) * math.Exp(-1.25*math.Pow(fp/f, 4))
	if got := jonswapS(f, hs, tp, 1, jonswapShapeIntegral(1)); relErr(got, want) > 1e-12 {
		t.Errorf("gamma 1: S = %.12g, Pierson-Moskowitz %.12g", got, want)
	}
}

func TestSpreadingAgainstScipy(t *testing.T) {
	ref := loadRef(t)
	for _, r := range ref.Spreading {
		// refgen.py integrates the reference function over the circle with scipy quad.
		if math.Abs(r.CircleIntegral-1) > 1e-9 {
			t.Fatalf("reference spreading for s=%g integrates to %g", r.S, r.CircleIntegral)
		}
		for i, th := range r.Theta {
			if got := spreadingCos2s(th, r.Mean, r.S); math.Abs(got-r.D[i]) > 1e-12*math.Max(1, r.D[i]) {
				t.Errorf("s %g mean %g theta %g: D = %.15g, reference (scipy.special.gamma) %.15g", r.S, r.Mean, th, got, r.D[i])
			}
		}
	}
}

// --- fixtures: regeneration, outside-tool checks, read-back -----------------

func fixturePaths(t *testing.T, root string) []string {
	t.Helper()
	var out []string
	filepath.Walk(root, func(p string, info os.FileInfo, err error) error {
		if err == nil && !info.IsDir() && strings.HasSuffix(p, ".nc") {
			out = append(out, p)
		}
		return nil
	})
	sort.Strings(out)
	return out
}

func writeFixtures(t *testing.T) (string, []string) {
	t.Helper()
	dir := t.TempDir()
	paths, err := WriteFixtures(dir)
	if err != nil {
		t.Fatal(err)
	}
	return dir, paths
}

func needNcdump(t *testing.T) {
	t.Helper()
	testtool.Need(t, "ncdump", "netcdf-bin")
}

func ncdump(t *testing.T, args ...string) string {
	t.Helper()
	out, err := exec.Command("ncdump", args...).CombinedOutput()
	if err != nil {
		t.Fatalf("ncdump %v: %v\n%s", args, err, out)
	}
	return string(out)
}

// TestCommittedFixturesUpToDate regenerates the fixtures and compares them with
// testdata/ at the module root: same bytes, or failing that the same ncdump text.
func TestCommittedFixturesUpToDate(t *testing.T) {
	needNcdump(t)
	dir, paths := writeFixtures(t)
	// testdata/*.nc and the per-month directories belong to synth; other
	// folders under testdata/ belong to other packages and are not looked at.
	committed, _ := filepath.Glob("../../testdata/*.nc")
	for key := range Fixtures() {
		if !strings.HasSuffix(key, ".nc") {
			committed = append(committed, fixturePaths(t, filepath.Join("../../testdata", key))...)
		}
	}
	sort.Strings(committed)
	var rel []string
	for _, p := range paths {
		r, _ := filepath.Rel(dir, p)
		rel = append(rel, r)
	}
	var crel []string
	for _, p := range committed {
		r, _ := filepath.Rel("../../testdata", p)
		crel = append(crel, r)
	}
	if strings.Join(rel, "\n") != strings.Join(crel, "\n") {
		t.Fatalf("testdata/*.nc differs from synth.Fixtures():\ncommitted %v\ngenerated %v\nrun: go run ./cmd/mkfixtures", crel, rel)
	}
	for i, p := range paths {
		a, _ := os.ReadFile(p)
		b, _ := os.ReadFile(committed[i])
		if bytes.Equal(a, b) {
			continue
		}
		// Different bytes (e.g. another libnetcdf/HDF5 version): the values,
		// as printed by ncdump, must still agree.
		if ncdump(t, p) != strings.Replace(ncdump(t, committed[i]), filepath.Base(committed[i]), filepath.Base(p), 1) {
			t.Errorf("%s: regenerated values differ from the committed fixture; run go run ./cmd/mkfixtures", rel[i])
		}
	}
}

func TestWriteIsDeterministic(t *testing.T) {
	for _, key := range []string{"spectral_points.nc", "regular_desc_lonlat.nc", "regular_packed.nc"} {
		s := Fixtures()[key]
		a, err := s.Write(t.TempDir())
		if err != nil {
			t.Fatal(err)
		}
		b, err := s.Write(t.TempDir())
		if err != nil {
			t.Fatal(err)
		}
		x, _ := os.ReadFile(a[0])
		y, _ := os.ReadFile(b[0])
		if !bytes.Equal(x, y) {
			t.Errorf("%s: two writes of the same scenario gave different bytes", key)
		}
	}
}

// TestNcdumpHeaders opens every fixture with ncdump (Debian netcdf-bin, an
// outside reader) and checks the CF attributes the ingest side relies on.
func TestNcdumpHeaders(t *testing.T) {
	needNcdump(t)
	dir, paths := writeFixtures(t)
	fx := Fixtures()
	for i, p := range paths {
		r, _ := filepath.Rel(dir, p)
		key := r
		if strings.Contains(r, string(filepath.Separator)) {
			key = filepath.Dir(r)
			// of a per-month set, check the first and the last file
			if i > 0 && i+1 < len(paths) && strings.HasPrefix(paths[i-1], filepath.Dir(p)) && strings.HasPrefix(paths[i+1], filepath.Dir(p)) {
				continue
			}
		}
		s := fx[key]
		h := ncdump(t, "-h", p)
		must := []string{`:Conventions = "CF-1.8"`, `:synthetic = "yes"`, `:comment = "Invented, synthetic data`,
			`time:standard_name = "time"`, `time:calendar = "` + string(s.withDefaults().Calendar) + `"`,
			`standard_name = "longitude"`, `standard_name = "latitude"`, `units = "degrees_east"`, `units = "degrees_north"`}
		if s.Bulk {
			for _, bv := range append(bulkVars, depthVar) {
				must = append(must, `:standard_name = "`+bv.std+`"`)
			}
		}
		if s.Spectra != nil {
			if s.Spectra.OneD {
				must = append(must, "freqspec(time, station, frequency)", `"sea_surface_wave_variance_spectral_density"`, `freqspec:units = "m2 s"`)
			} else {
				must = append(must, "dirspec(time, station, frequency, direction)", `"sea_surface_wave_directional_variance_spectral_density"`)
			}
		}
		switch {
		case s.Grid.Kind == Curvilinear:
			must = append(must, "lon(y, x)", "lat(y, x)", `coordinates = "lon lat"`)
		case s.Grid.Kind == Points:
			must = append(must, "lon(station)", "lat(station)", `coordinates = "lon lat"`)
		case s.Grid.LonFirst:
			must = append(must, "hm0(time, lon, lat)")
		default:
			must = append(must, "hm0(time, lat, lon)")
		}
		if s.Packing == Int16 {
			must = append(must, "short hm0(", "hm0:scale_factor = 0.001f", "hm0:_FillValue = -32767s")
		}
		for _, m := range must {
			if !strings.Contains(h, m) {
				t.Errorf("%s: ncdump -h lacks %q", r, m)
			}
		}
		kind := strings.TrimSpace(ncdump(t, "-k", p))
		want := "netCDF-4"
		if s.Format == Classic {
			want = "classic"
		}
		if kind != want {
			t.Errorf("%s: ncdump -k says %q, want %q", r, kind, want)
		}
		if s.Deflate > 0 && !strings.Contains(ncdump(t, "-hs", p), "_DeflateLevel = ") {
			t.Errorf("%s: no deflate recorded although Deflate = %d", r, s.Deflate)
		}
	}
}

// TestCalendarsAgainstCftime compares the time axes of the calendar fixtures
// with python3-cftime 1.6.2's date2num (testdata/ref_values.json), and the
// first/last dates with ncdump -t's own calendar decoding.
func TestCalendarsAgainstCftime(t *testing.T) {
	ref := loadRef(t)
	fx := Fixtures()
	dir := t.TempDir()
	for _, cal := range []string{"noleap", "360_day", "all_leap", "julian", "proleptic_gregorian"} {
		s := fx["calendar_"+cal+".nc"]
		paths, err := s.Write(dir)
		if err != nil {
			t.Fatal(err)
		}
		got := readF64(t, paths[0], "time")
		want := ref.Calendars[cal]
		if len(got) != len(want.Values) {
			t.Fatalf("%s: %d time steps, cftime gives %d", cal, len(got), len(want.Values))
		}
		for i := range got {
			if math.Abs(got[i]-want.Values[i]) > 1e-9 {
				t.Errorf("%s step %d: time %v, cftime.date2num %v (%s)", cal, i, got[i], want.Values[i], want.Units)
				break
			}
		}
		if testtool.Have("ncdump") {
			last := map[string]string{"noleap": "2004-03-31 12", "360_day": "2004-03-30 12", "all_leap": "2004-03-31 12",
				"julian": "2004-03-31 12", "proleptic_gregorian": "2004-03-31 12"}[cal]
			out := ncdump(t, "-t", "-v", "time", paths[0])
			if !strings.Contains(out, `"2004-02-01", "2004-02-01 12"`) || !strings.Contains(out, `"`+last+`" ;`) {
				t.Errorf("%s: ncdump -t decodes the axis differently:\n%s", cal, out[strings.Index(out, "data:"):])
			}
			feb := strings.Count(out, `"2004-02-29`)
			if wantFeb := map[string]int{"noleap": 0, "360_day": 2, "all_leap": 2, "julian": 2, "proleptic_gregorian": 2}[cal]; feb != wantFeb {
				t.Errorf("%s: %d steps on 29 February per ncdump -t, want %d", cal, feb, wantFeb)
			}
		}
	}
	// month starts of the two-year monthly fixture in the standard calendar
	s := fx["bulk_monthly"]
	c := s.withDefaults()
	tu, _ := parseTimeUnits(c.TimeUnits)
	for i, m := range c.monthSpans() {
		if got, want := tu.value(c.Calendar, m.start), ref.Calendars["standard_month_starts"].Values[i]; got != want {
			t.Errorf("month %d start: %v hours, cftime %v", i, got, want)
		}
	}
}

func readF64(t *testing.T, path, name string) []float64 {
	t.Helper()
	ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	v, err := ds.Var(name)
	if err != nil {
		t.Fatalf("%s: variable %s: %v", path, name, err)
	}
	out, err := netcdf.GetFloat64s(v)
	if err != nil {
		t.Fatalf("%s: read %s: %v", path, name, err)
	}
	return out
}

func readF32(t *testing.T, path, name string) ([]float32, []uint64) {
	t.Helper()
	ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	v, err := ds.Var(name)
	if err != nil {
		t.Fatalf("%s: variable %s: %v", path, name, err)
	}
	dims, _ := v.LenDims()
	out, err := netcdf.GetFloat32s(v)
	if err != nil {
		t.Fatalf("%s: read %s: %v", path, name, err)
	}
	return out, dims
}

func readI16(t *testing.T, path, name string) []int16 {
	t.Helper()
	ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	v, err := ds.Var(name)
	if err != nil {
		t.Fatalf("%s: variable %s: %v", path, name, err)
	}
	out, err := netcdf.GetInt16s(v)
	if err != nil {
		t.Fatalf("%s: read %s: %v", path, name, err)
	}
	return out
}

// expectedBulk runs the generator alone (no NetCDF) and returns the bulk
// values of the whole record in file order, time-major.
func expectedBulk(s Scenario) [4][]float64 {
	c := s.withDefaults()
	tu, _ := parseTimeUnits(c.TimeUnits)
	months := c.monthSpans()
	sites := c.sites()
	gen := newSeaStates(&c, sites, months)
	perm := c.filePerm(len(sites))
	var out [4][]float64
	for _, m := range months {
		blk := c.genMonth(m, tu, gen, nil, perm, len(perm), 0)
		for k := range out {
			out[k] = append(out[k], blk.bulk[k]...)
		}
	}
	return out
}

// TestReadBack reads the files through go-netcdf and checks they hold what
// the generator produced: exactly for float32, within half a packing step for int16.
func TestReadBack(t *testing.T) {
	fx := Fixtures()
	for _, key := range []string{"bulk_monthly", "regular_packed.nc", "regular_desc_lonlat.nc", "curvilinear_bulk.nc", "points_bulk.nc"} {
		s := fx[key]
		paths, err := s.Write(t.TempDir())
		if err != nil {
			t.Fatal(err)
		}
		want := expectedBulk(s)
		if key == "bulk_monthly" {
			// each month file starts where cftime puts the month (refgen.py)
			starts := loadRef(t).Calendars["standard_month_starts"].Values
			if len(paths) != len(starts) {
				t.Fatalf("%d monthly files, want %d", len(paths), len(starts))
			}
			for i, p := range paths {
				tm := readF64(t, p, "time")
				if tm[0] != starts[i] || tm[1]-tm[0] != 3 {
					t.Errorf("%s: time starts %v step %v, cftime month start %v, step 3 h", filepath.Base(p), tm[0], tm[1]-tm[0], starts[i])
				}
			}
		}
		for k, bv := range bulkVars {
			var got []float64
			for _, p := range paths {
				if s.Packing == Int16 {
					for _, x := range readI16(t, p, bv.name) {
						if x == FillShort {
							got = append(got, math.NaN())
						} else {
							got = append(got, float64(x)*float64(bv.scale)+float64(bv.offset))
						}
					}
				} else {
					v, _ := readF32(t, p, bv.name)
					for _, x := range v {
						if x == FillFloat {
							got = append(got, math.NaN())
						} else {
							got = append(got, float64(x))
						}
					}
				}
			}
			if len(got) != len(want[k]) {
				t.Fatalf("%s %s: read %d values, generated %d", key, bv.name, len(got), len(want[k]))
			}
			tol := 0.0
			if s.Packing == Int16 {
				tol = float64(bv.scale)/2 + 1e-6
			}
			bad := 0
			for i := range got {
				w := want[k][i]
				if math.IsNaN(w) != math.IsNaN(got[i]) || (!math.IsNaN(w) && s.Packing == Float32 && got[i] != float64(float32(w))) ||
					(!math.IsNaN(w) && math.Abs(got[i]-w) > tol && s.Packing == Int16) {
					bad++
					if bad < 3 {
						t.Errorf("%s %s[%d]: read %v, wrote %v", key, bv.name, i, got[i], w)
					}
				}
			}
		}
	}
}

// TestLayoutsAgree checks that the (time, lon, lat) descending-latitude
// variant and the first months of the per-month set hold the same values at
// the same lon/lat, reading both files back.
func TestLayoutsAgree(t *testing.T) {
	fx := Fixtures()
	dsc := fx["regular_desc_lonlat.nc"]
	d1, err := dsc.Write(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	m := fx["bulk_monthly"]
	m.Months = 1
	d2, err := m.Write(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	lat1, lon1 := readF64(t, d1[0], "lat"), readF64(t, d1[0], "lon")
	lat2, lon2 := readF64(t, d2[0], "lat"), readF64(t, d2[0], "lon")
	if lat1[0] < lat1[len(lat1)-1] || lat2[0] > lat2[len(lat2)-1] {
		t.Fatalf("latitude order: descending file %v, ascending file %v", lat1, lat2)
	}
	h1, dims1 := readF32(t, d1[0], "hm0") // (time, lon, lat)
	h2, dims2 := readF32(t, d2[0], "hm0") // (time, lat, lon)
	nlat, nlon := len(lat2), len(lon2)
	if dims1[1] != uint64(nlon) || dims2[1] != uint64(nlat) {
		t.Fatalf("dims %v and %v", dims1, dims2)
	}
	for tt := 0; tt < int(dims2[0]); tt++ {
		for a := 0; a < nlat; a++ {
			for b := 0; b < nlon; b++ {
				// same position in the other file
				a1 := -1
				for i, y := range lat1 {
					if y == lat2[a] {
						a1 = i
					}
				}
				if a1 < 0 || lon1[b] != lon2[b] {
					t.Fatalf("coordinates do not match: %v %v / %v %v", lat1, lon1, lat2, lon2)
				}
				x1 := h1[(tt*nlon+b)*nlat+a1]
				x2 := h2[(tt*nlat+a)*nlon+b]
				if x1 != x2 {
					t.Fatalf("t %d lat %g lon %g: %v in (time, lon, lat) file, %v in (time, lat, lon) file", tt, lat2[a], lon2[b], x1, x2)
				}
			}
		}
	}
}

// TestSpectralFixturesAgainstScipy reads the spectral fixtures back and
// compares every value with the scipy-made JONSWAP x cos-2s reference
// (float32 storage: relative 2^-23 plus the reference's own 1e-9).
func TestSpectralFixturesAgainstScipy(t *testing.T) {
	ref := loadRef(t)
	fx := Fixtures()
	dir := t.TempDir()
	for _, key := range []string{"spectral_points.nc", "spectral_points_deg.nc", "spectral_1d.nc"} {
		s := fx[key]
		paths, err := s.Write(dir)
		if err != nil {
			t.Fatal(err)
		}
		name := "dirspec"
		if s.Spectra.OneD {
			name = "freqspec"
		}
		vals, dims := readF32(t, paths[0], name)
		freq := readF64(t, paths[0], "frequency")
		nf, nd := len(freq), 1
		var dirs []float64
		if !s.Spectra.OneD {
			dirs = readF64(t, paths[0], "direction")
			nd = len(dirs)
		}
		unit := 1.0
		if s.Spectra.PerDegree {
			unit = math.Pi / 180
		}
		ns := int(dims[1])
		for st := 0; st < ns; st++ {
			js := ref.Jonswap[st]
			p := ReferenceStations()[st]
			for tt := 0; tt < int(dims[0]); tt += int(dims[0]) - 1 { // first and last step
				for i := 0; i < nf; i++ {
					if relErr(freq[i], js.Freq[i]) > 1e-12 {
						t.Fatalf("%s: frequency %d = %v, reference %v", key, i, freq[i], js.Freq[i])
					}
					for k := 0; k < nd; k++ {
						want := js.S[i]
						if !s.Spectra.OneD {
							want *= spreadingRef(t, ref, p.SpreadS, p.DirFrom, dirs[k]) * unit
						}
						got := float64(vals[((tt*ns+st)*nf+i)*nd+k])
						if relErr(got, want) > 2e-7 && math.Abs(got-want) > 1e-37 {
							t.Errorf("%s station %d t %d f %g dir %d: %g, reference %g", key, st, tt, freq[i], k, got, want)
						}
					}
				}
			}
			// The discrete m0 on the log-spaced axis approximates Hm0^2/16
			// (quadrature error, a few per cent on 29 bins; common practice).
			if !s.Spectra.OneD && !s.Spectra.PerDegree {
				m0 := 0.0
				for i := 0; i < nf; i++ {
					df := freq[i] * (math.Sqrt(1.1) - 1/math.Sqrt(1.1))
					for k := 0; k < nd; k++ {
						m0 += float64(vals[(st*nf+i)*nd+k]) * df * 2 * math.Pi / float64(nd)
					}
				}
				if hm0 := 4 * math.Sqrt(m0); relErr(hm0, p.Hm0) > 0.03 {
					t.Errorf("%s station %d: discrete Hm0 %.4f, generating Hm0 %.4f", key, st, hm0, p.Hm0)
				}
			}
		}
	}
}

func spreadingRef(t *testing.T, ref refValues, s, mean, theta float64) float64 {
	for _, r := range ref.Spreading {
		if r.S == s && r.Mean == mean {
			for i, th := range r.Theta {
				if th == theta {
					return r.D[i]
				}
			}
		}
	}
	t.Fatalf("no reference spreading for s %g mean %g theta %g", s, mean, theta)
	return 0
}

// --- properties the scenario promises (not reference checks) ---------------

func TestScenarioProperties(t *testing.T) {
	s := Fixtures()["bulk_monthly"]
	c := s.withDefaults()
	b := expectedBulk(s)
	sites := c.sites()
	n := len(sites)
	months := c.monthSpans()
	maxHs, winter, summer, nw, nsum := 0.0, 0.0, 0.0, 0, 0
	for mi, m := range months {
		for k := 0; k < m.steps; k++ {
			for j := 0; j < n; j++ {
				o := (m.firstIndex+k)*n + j
				hs, te, tp := b[0][o], b[1][o], b[2][o]
				if !sites[j].sea {
					if !math.IsNaN(hs) {
						t.Fatalf("land cell %d has a value", j)
					}
					continue
				}
				if hs <= 0 || te < 3.5 || te > 15 || math.Abs(tp*0.9-te) > 1e-9 || hs > 0.55*sites[j].depth+1e-9 {
					t.Fatalf("month %d cell %d: Hm0 %v Te %v Tp %v depth %v out of the promised ranges", mi, j, hs, te, tp, sites[j].depth)
				}
				maxHs = math.Max(maxHs, hs)
				switch m.start.Month {
				case 12, 1, 2:
					winter += hs
					nw++
				case 6, 7, 8:
					summer += hs
					nsum++
				}
			}
		}
	}
	if maxHs < 6 || maxHs > 12 {
		t.Errorf("largest Hm0 %.2f m; the scenario promises storms of about 8-10 m offshore", maxHs)
	}
	if winter/float64(nw) < 1.4*summer/float64(nsum) {
		t.Errorf("winter mean Hm0 %.2f not clearly above summer %.2f", winter/float64(nw), summer/float64(nsum))
	}
	land, minD, maxD := 0, math.Inf(1), 0.0
	for _, st := range sites {
		if !st.sea {
			land++
			continue
		}
		minD, maxD = math.Min(minD, st.depth), math.Max(maxD, st.depth)
	}
	if land == 0 || land == n || minD < 15 || maxD > 200 {
		t.Errorf("%d land cells of %d, depths %.1f..%.1f m", land, n, minD, maxD)
	}
}

func TestDemoScenario(t *testing.T) {
	demo := Demo()
	d := demo.withDefaults()
	if err := d.validate(); err != nil {
		t.Fatal(err)
	}
	sites := d.sites()
	land, minD, maxD := 0, math.Inf(1), 0.0
	for _, st := range sites {
		if !st.sea {
			land++
			continue
		}
		minD, maxD = math.Min(minD, st.depth), math.Max(maxD, st.depth)
	}
	if d.Grid.NX*d.Grid.NY != 192 || land == 0 || minD > 20 || maxD != 200 {
		t.Errorf("demo grid %dx%d with %d land cells, depths %.1f..%.1f", d.Grid.NX, d.Grid.NY, land, minD, maxD)
	}
	// 30 years: the extremes and design sea states of the demo rest on a record
	// of the usual length for such analyses.
	if d.Months != 360 || d.StepHours != 3 || !d.PerMonth || d.Spectra != nil {
		t.Errorf("demo: %d months, %d-hourly, per month %v, spectra %v", d.Months, d.StepHours, d.PerMonth, d.Spectra != nil)
	}
	sp := DemoSpectra()
	ds := sp.withDefaults()
	if err := ds.validate(); err != nil {
		t.Fatal(err)
	}
	ssites := ds.sites()
	for _, c := range ds.stations() {
		if !ssites[c].sea || ssites[c].depth < 100 {
			t.Errorf("demo spectral cell %d is not offshore (depth %v)", c, ssites[c].depth)
		}
	}
	if len(ds.stations()) != 12 || ds.Months != 36 || ds.Bulk {
		t.Errorf("demo spectra: %d points, %d months, bulk %v", len(ds.stations()), ds.Months, ds.Bulk)
	}
}

func TestValidationMessages(t *testing.T) {
	base := Fixtures()["points_bulk.nc"]
	cases := []struct {
		edit func(*Scenario)
		want string
	}{
		{func(s *Scenario) { s.Calendar = "gregorian_ish" }, "calendar"},
		{func(s *Scenario) { s.Format, s.Deflate = Classic, 4 }, "Deflate needs Format NetCDF4"},
		{func(s *Scenario) { s.StepHours = 5 }, "StepHours 5 must divide 24"},
		{func(s *Scenario) { s.TimeUnits = "fortnights since 2001-01-01" }, "unit \"fortnights\""},
		{func(s *Scenario) { s.Name = "" }, "Name"},
		{func(s *Scenario) { s.Start.Year = 1500 }, "use proleptic_gregorian"},
	}
	for _, c := range cases {
		s := base
		c.edit(&s)
		_, err := s.Write(t.TempDir())
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("error %v, want one mentioning %q", err, c.want)
		}
	}
}

func TestRoundMantissa(t *testing.T) {
	// 1 + 2^-10 + 2^-12 rounded to 10 mantissa bits is 1 + 2^-10 (IEEE 754 binary32 layout).
	x := float32(1 + math.Ldexp(1, -10) + math.Ldexp(1, -12))
	if got := roundMantissa(x, 10); got != float32(1+math.Ldexp(1, -10)) {
		t.Errorf("roundMantissa(%v, 10) = %v", x, got)
	}
	for _, v := range []float32{3.14159, 1e-20, 7.5e8} {
		if r := roundMantissa(v, 12); relErr(float64(r), float64(v)) > math.Ldexp(1, -13) {
			t.Errorf("roundMantissa(%v, 12) = %v, error above 2^-13", v, r)
		}
	}
}

// TestFixtureTable checks testdata/README.md lists every fixture.
func TestFixtureTable(t *testing.T) {
	b, err := os.ReadFile("../../testdata/README.md")
	if err != nil {
		t.Fatal(err)
	}
	for key := range Fixtures() {
		if !strings.Contains(string(b), "`"+key+"`") {
			t.Errorf("testdata/README.md does not list %s", key)
		}
	}
}

// TestFloorLoss backs the FloorRel doc: with 1e-4 the discrete m0 loses
// under 0.1 % on the default axes (JONSWAP gamma 3.3, s = 8, Tp 6-15 s).
func TestFloorLoss(t *testing.T) {
	for _, tp := range []float64{6, 10, 15} {
		m0 := func(floor float64) float64 {
			sp := &Spectra{F0: 0.035, FRatio: 1.1, NFreq: 29, NDir: 24, FloorRel: floor,
				Fixed: []JonswapParams{{Hm0: 3, Tp: tp, Gamma: 3.3, SpreadS: 8, DirFrom: 270}}}
			c := &Scenario{Spectra: sp}
			b := newSpecBuilder(c, nil)
			b.stations = []int{0}
			out := make([]float32, b.perStation())
			b.fill(out, 0, nil)
			sum := 0.0
			for i, f := range b.freq {
				for k := range b.dir {
					sum += float64(out[i*len(b.dir)+k]) * f
				}
			}
			return sum
		}
		if loss := 1 - m0(1e-4)/m0(0); loss < 0 || loss > 1e-3 {
			t.Errorf("Tp %g: FloorRel 1e-4 changes m0 by %.2e", tp, loss)
		}
	}
}

func TestCheckSpectraNeedCells(t *testing.T) {
	s := Fixtures()["regular_packed.nc"]
	s.Spectra = &Spectra{}
	if err := s.Check(); err == nil || !strings.Contains(err.Error(), "Spectra.Cells") {
		t.Errorf("Check = %v, want an error naming Spectra.Cells", err)
	}
	s.Spectra.Cells = []int{0, 1}
	if err := s.Check(); err != nil {
		t.Errorf("Check with cells: %v", err)
	}
}
