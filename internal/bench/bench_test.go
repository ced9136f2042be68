package bench

import (
	"path/filepath"
	"testing"

	"swellgrid/ingest"
)

// The read floor and the ingest reader must read the same values: every role
// variable once, cells x steps values per bulk role (common practice for a
// floor measurement: same data, same order, nothing else).
func TestFloorReadsEveryValueOnce(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bulk_monthly", "*.nc"))
	if err != nil || len(files) == 0 {
		t.Fatalf("fixture files: %v %v", files, err)
	}
	cat, err := ingest.Open(files, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	roles := 0
	for _, r := range ingest.Roles { // time-varying roles: the mask and depth are static
		if cat.Vars[r] != nil && r != ingest.Depth {
			roles++
		}
	}
	want := int64(cat.Grid.NCells()) * int64(cat.Steps) * int64(roles)
	fl, err := ReadFloor(cat, 64)
	if err != nil {
		t.Fatal(err)
	}
	in, err := ReadIngest(cat, 64)
	if err != nil {
		t.Fatal(err)
	}
	if fl.Values != want || in.Values != want {
		t.Fatalf("floor read %d values, ingest %d, want %d (%d cells x %d steps x %d roles)", fl.Values, in.Values, want, cat.Grid.NCells(), cat.Steps, roles)
	}
}

func TestPeakRSS(t *testing.T) {
	big := make([]byte, 64<<20)
	for i := range big {
		big[i] = 1
	}
	rss, err := PeakRSS()
	if err != nil {
		t.Fatal(err)
	}
	if rss < 64<<20 {
		t.Fatalf("VmHWM %d bytes after touching 64 MiB", rss)
	}
}

// The cache directory of a scenario is named by its values: two copies of
// the spectral scenario (their Spectra at different addresses) share it, and
// a changed value does not (the cache would otherwise be regenerated on
// every run, or reused when stale).
func TestCacheKeyByValue(t *testing.T) {
	a, b := SpectralScenario(2), SpectralScenario(2)
	if a.Spectra == b.Spectra {
		t.Fatal("the two scenarios share their Spectra; the test needs two copies")
	}
	if key(a) != key(b) {
		t.Errorf("equal scenarios, keys %s and %s", key(a), key(b))
	}
	b.Spectra.NDir++
	if key(a) == key(b) {
		t.Errorf("NDir changed, key still %s", key(a))
	}
	if c := SpectralScenario(1); key(c) == key(a) {
		t.Errorf("record length changed, key still %s", key(a))
	}
}
