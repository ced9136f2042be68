package ingest

import (
	"swellgrid/internal/testtool"

	"context"
	"math"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

func readAll(t *testing.T, paths []string, opt Options) (*Catalog, []*Block) {
	t.Helper()
	cat, err := Open(paths, opt)
	if err != nil {
		t.Fatal(err)
	}
	out := make(chan *Block, 8)
	errc := make(chan error, 1)
	go func() { errc <- cat.Read(context.Background(), ReadRange{MaxSteps: 50}, out); close(out) }()
	var bs []*Block
	for b := range out {
		bs = append(bs, b)
	}
	if err := <-errc; err != nil {
		t.Fatal(err)
	}
	return cat, bs
}

// flat concatenates one role's values of all blocks.
func flat(bs []*Block, r Role) []float64 {
	var v []float64
	for _, b := range bs {
		if r == Spectrum2D || r == Spectrum1D {
			v = append(v, b.Spec...)
		} else {
			v = append(v, b.Bulk[r]...)
		}
	}
	return v
}

// The generator writes the same sea states at the same lon/lat whatever the
// layout (testdata/README.md): a descending-latitude (time, lon, lat) file and
// an int16-packed classic file must read back, cell by cell, as the first two
// months of the monthly files. This checks swellgrid's canonical placement and
// CF unpacking (CF 1.8 section 8.1) on files written by the NetCDF library.
func TestLayoutsReadAlike(t *testing.T) {
	files, _ := filepath.Glob("../testdata/bulk_monthly/*.nc")
	_, ref := readAll(t, files[:2], Options{})
	_, desc := readAll(t, []string{"../testdata/regular_desc_lonlat.nc"}, Options{})
	cat, packed := readAll(t, []string{"../testdata/regular_packed.nc"}, Options{})
	if cat.Vars[Hm0].Packed != true {
		t.Fatal("packed fixture not seen as packed")
	}
	for _, r := range []Role{Hm0, Te, Tp, Dir} {
		a, b, c := flat(ref, r), flat(desc, r), flat(packed, r)
		if len(a) != len(b) || len(a) != len(c) || len(a) == 0 {
			t.Fatalf("%s: %d vs %d vs %d values", r, len(a), len(b), len(c))
		}
		// Both files are rounded from the same float64 sea state: the packed
		// one to a packing step (error <= half a step: 0.0005 m or s, 0.005
		// degree), the monthly one to float32 (error <= half an ulp, below
		// 1e-5 for values under 300).
		tol := 0.0005 + 1e-5
		if r == Dir {
			tol = 0.005 + 3e-5
		}
		for i := range a {
			if !(a[i] == b[i] || math.IsNaN(a[i]) && math.IsNaN(b[i])) {
				t.Fatalf("%s value %d: monthly %v vs descending/lon-first %v", r, i, a[i], b[i])
			}
			if math.IsNaN(a[i]) != math.IsNaN(c[i]) || math.Abs(a[i]-c[i]) > tol {
				if r == Dir && math.Abs(math.Abs(a[i]-c[i])-360) <= tol {
					continue
				}
				t.Fatalf("%s value %d: monthly %v vs packed %v", r, i, a[i], c[i])
			}
		}
	}
}

// A spectrum stored per degree reads as the same spectrum per radian
// (S_rad = S_deg * 180/pi, SI definition of the radian): the two fixtures
// hold the same constant-in-time spectra (testdata/README.md); the per-degree
// file has its directions in another order (0, 15, ...) than the per-radian
// one (90, 105, ..., 75).
func TestSpectrumPerDegreeEqualsPerRadian(t *testing.T) {
	ca, a := readAll(t, []string{"../testdata/spectral_points.nc"}, Options{})
	cb, b := readAll(t, []string{"../testdata/spectral_points_deg.nc"}, Options{})
	nf, nd := len(ca.Spectral.FreqHz), len(ca.Spectral.DirDeg)
	if nf != 29 || nd != 24 || len(cb.Spectral.DirDeg) != nd {
		t.Fatalf("layouts %d x %d", nf, nd)
	}
	// map direction of b to index in a
	idx := map[float64]int{}
	for j, d := range ca.Spectral.DirDeg {
		idx[math.Round(d)] = j
	}
	sa, sb := a[0].Spec, b[0].Spec
	for st := 0; st < 3; st++ {
		for f := 0; f < nf; f++ {
			for jb, d := range cb.Spectral.DirDeg {
				ja := idx[math.Round(d)]
				va, vb := sa[(st*nf+f)*nd+ja], sb[(st*nf+f)*nd+jb]
				if math.Abs(va-vb) > 1e-6*math.Max(va, 1e-12) {
					t.Fatalf("station %d f %d dir %v: per radian %v, per degree converted %v", st, f, d, va, vb)
				}
			}
		}
	}
}

// Dates decoded by swellgrid equal the dates Debian's ncdump -t prints (an
// independent CF time decoder in netcdf-bin) for every calendar fixture.
func TestCalendarFixturesAgainstNcdump(t *testing.T) {
	testtool.Need(t, "ncdump", "netcdf-bin")
	for _, cal := range []string{"noleap", "360_day", "all_leap", "julian", "proleptic_gregorian"} {
		p := "../testdata/calendar_" + cal + ".nc"
		out, err := exec.Command("ncdump", "-t", "-v", "time", p).Output()
		if err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		body := string(out)[strings.Index(string(out), "data:"):]
		dates := regexp.MustCompile(`"([0-9-]+)(?: ([0-9:]+))?"`).FindAllStringSubmatch(body, -1)
		cat, err := Open([]string{p}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if len(dates) != cat.Steps || cat.Steps == 0 {
			t.Fatalf("%s: ncdump %d dates, swellgrid %d steps", cal, len(dates), cat.Steps)
		}
		for i, s := range cat.Times() {
			d := cat.Date(s)
			want := dates[i][1]
			got := d.String()[:10]
			if got != want {
				t.Fatalf("%s step %d: %s vs ncdump %s", cal, i, got, want)
			}
			hh := "00"
			if dates[i][2] != "" {
				hh = dates[i][2][:2]
			}
			if d.String()[11:13] != hh {
				t.Fatalf("%s step %d: hour %s vs ncdump %s", cal, i, d.String()[11:13], hh)
			}
		}
		if string(cat.Calendar) != cal {
			t.Errorf("calendar %s read as %s", cal, cat.Calendar)
		}
	}
}
