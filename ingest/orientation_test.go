package ingest

import (
	"math"
	"path/filepath"
	"testing"
)

// Every file is read in its own orientation. testdata/orientation holds two
// records of the same values written by python3-xarray
// (make_orientation.py beside them): one canonical, one where January has
// its latitude descending and March its longitude descending with dimensions
// (time, lon, lat). Read, they must give the same value in every cell at
// every step, and the depth read from the (flipped) first file must sit in
// the same cells as the canonical one's.
func TestEachFileInItsOwnOrientation(t *testing.T) {
	canon, _ := filepath.Glob("../testdata/orientation/canonical/*.nc")
	mixed, _ := filepath.Glob("../testdata/orientation/mixed/*.nc")
	if len(canon) != 3 || len(mixed) != 3 {
		t.Fatalf("fixtures: %d canonical and %d mixed files, want 3 and 3 (run make_orientation.py)", len(canon), len(mixed))
	}
	ca, a := readAll(t, canon, Options{})
	cb, b := readAll(t, mixed, Options{})
	for i := range ca.Depth {
		if ca.Depth[i] != cb.Depth[i] {
			t.Fatalf("depth of cell %d: %v canonical, %v from the lat-descending file", i, ca.Depth[i], cb.Depth[i])
		}
	}
	for _, r := range []Role{Hm0, Te, Dir} {
		x, y := flat(a, r), flat(b, r)
		if len(x) != len(y) || len(x) == 0 {
			t.Fatalf("%s: %d vs %d values", r, len(x), len(y))
		}
		nan := 0
		for i := range x {
			if math.IsNaN(x[i]) {
				nan++
			}
			if !(x[i] == y[i] || math.IsNaN(x[i]) && math.IsNaN(y[i])) {
				t.Fatalf("%s value %d (step %d, cell %d): canonical %v, mixed %v", r, i, i/ca.Grid.NCells(), i%ca.Grid.NCells(), x[i], y[i])
			}
		}
		if r == Hm0 && nan != 3 {
			// One missing value (xarray's NaN, stored as _FillValue -9999) per file.
			t.Errorf("hm0: %d missing values, want 3 (one per file)", nan)
		}
	}
}
