package ingest

import (
	"context"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// readBlocks reads the whole record of cat, cooked by the reader or, with
// ranges, raw and cooked by Block.Cook one cell range at a time (in reverse
// order, as concurrent workers may), tallying into t.
func readBlocks(t *testing.T, cat *Catalog, ranges [][2]int, tally Tally) []*Block {
	t.Helper()
	out := make(chan *Block, 8)
	errc := make(chan error, 1)
	go func() {
		errc <- cat.Read(context.Background(), ReadRange{MaxSteps: 7, Raw: ranges != nil}, out)
		close(out)
	}()
	var bs []*Block
	for b := range out {
		if ranges != nil {
			if !b.Raw() {
				t.Fatal("a block of a raw read is not raw")
			}
			for k := len(ranges) - 1; k >= 0; k-- {
				b.Cook(ranges[k][0], ranges[k][1], tally)
			}
		}
		bs = append(bs, b)
	}
	if err := <-errc; err != nil {
		t.Fatal(err)
	}
	return bs
}

func sameValues(a, b []float64) int {
	if len(a) != len(b) {
		return -2
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) && !(a[i] != a[i] && b[i] != b[i]) {
			return i
		}
	}
	return -1
}

// A raw read cooked by the receivers, one cell range each, gives exactly the
// values the reader cooks itself (whose placement and unpacking the other
// tests of this package check against ncgen, netCDF4 and xarray files), on
// every storage layout of the fixtures: (time, y, x) float and short, the
// odometer's (time, lon, lat), points, 1-D and 2-D spectra, curvilinear.
func TestRawCookSplitEqualsCooked(t *testing.T) {
	monthly, _ := filepath.Glob("../testdata/bulk_monthly/*.nc")
	inputs := [][]string{monthly[:3], {"../testdata/regular_desc_lonlat.nc"}, {"../testdata/regular_packed.nc"},
		{"../testdata/points_bulk.nc"}, {"../testdata/spectral_points.nc"}, {"../testdata/spectral_1d.nc"},
		{"../testdata/curvilinear_bulk.nc"}}
	for _, in := range inputs {
		cat, err := Open(in, Options{})
		if err != nil {
			t.Fatal(err)
		}
		n := cat.Grid.NCells()
		ref := readBlocks(t, cat, nil, nil)
		whole := Tally{}
		readBlocks(t, cat, [][2]int{{0, n}}, whole)
		split := Tally{}
		got := readBlocks(t, cat, [][2]int{{0, n / 3}, {n / 3, n/3 + 1}, {n/3 + 1, n}}, split)
		if len(got) != len(ref) {
			t.Fatalf("%s: %d blocks raw, %d cooked", in[0], len(got), len(ref))
		}
		for k := range ref {
			for r, v := range ref[k].Bulk {
				if i := sameValues(v, got[k].Bulk[r]); i != -1 {
					t.Errorf("%s block %d role %s: value %d differs (raw cooked in ranges vs cooked)", in[0], k, r, i)
				}
			}
			if i := sameValues(ref[k].Spec, got[k].Spec); i != -1 {
				t.Errorf("%s block %d spectra: value %d differs", in[0], k, i)
			}
		}
		if len(whole) == 0 || len(whole) != len(split) {
			t.Fatalf("%s: tallies %d vs %d keys", in[0], len(whole), len(split))
		}
		for key, c := range whole {
			if s := split[key]; s == nil || *s != *c {
				t.Errorf("%s: tally %v: one range %+v, three ranges %+v", in[0], key, *c, s)
			}
		}
	}
}

// A variable without any value, or with only impossible values (here every
// packed height negative: CF 1.8 section 8.1 unpacking of -300 with
// scale_factor 0.5 and add_offset 1 cm), is refused once its counts cover
// every cell: not after a first cell range (a first pass), after both.
func TestTallyRefusesAcrossRanges(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ name, data, want string }{
		{"fill", strings.Repeat("_,", 35) + "_", "every value is a fill value or missing"},
		{"neg", strings.Repeat("-300,", 35) + "-300", "every value is impossible for role hm0"},
	}
	for _, c := range cases {
		p := ncgenFile(t, dir, c.name, cdl("HSDATA", c.data))
		cat, err := Open([]string{p}, Options{})
		if err != nil {
			t.Fatalf("%s: the catalog reads metadata only, yet refused: %v", c.name, err)
		}
		n := cat.Grid.NCells()
		done := Tally{}
		for pass, r := range [][2]int{{0, 5}, {5, n}} {
			pending := Tally{}
			bs := readBlocks(t, cat, [][2]int{r}, pending)
			cat.Settle(pending, done, bs[len(bs)-1].File, 0, r[0], r[1])
			if len(pending) != 0 {
				t.Errorf("%s: counts left pending after the file: %v", c.name, pending)
			}
			err := cat.CheckTally(done)
			if pass == 0 && err != nil {
				t.Errorf("%s: refused after cells %v only: %v", c.name, r, err)
			}
			if pass == 1 {
				if err == nil {
					t.Fatalf("%s: accepted", c.name)
				}
				for _, w := range []string{c.name + ".nc", `"hs"`, c.want} {
					if !strings.Contains(err.Error(), w) {
						t.Errorf("%s: %q lacks %q", c.name, err, w)
					}
				}
			}
		}
		// The same counts, saved and restored (a checkpoint header), refuse alike.
		if err := cat.CheckTally(TallyOf(done.Entries())); err == nil {
			t.Errorf("%s: restored tally accepted", c.name)
		}
	}
	// The good file passes.
	cat, err := Open([]string{ncgenFile(t, dir, "good", cdl())}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	done, pending := Tally{}, Tally{}
	bs := readBlocks(t, cat, [][2]int{{0, cat.Grid.NCells()}}, pending)
	cat.Settle(pending, done, bs[len(bs)-1].File, 0, 0, cat.Grid.NCells())
	if err := cat.CheckTally(done); err != nil {
		t.Error(err)
	}
	// 11 of 12 heights valid at each of 3 steps (one fill), all possible.
	if c := done[TallyKey{0, Hm0}]; c == nil || c.Valid != 33 || c.Possible != 33 || c.Cells != 12 {
		t.Errorf("hm0 tally %+v, want 33 valid, 33 possible, 12 cells", c)
	}
}
