package raster

import (
	"path/filepath"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

// An empty attribute value (a manifest field left empty) is left out of
// atlas.nc instead of panicking in the C binding; a non-empty one is
// written and reads back as given (through NetCDF-C).
func TestTextAttrEmptyLeftOut(t *testing.T) {
	f := filepath.Join(t.TempDir(), "a.nc")
	ds, err := netcdf.CreateFile(f, netcdf.CLOBBER|netcdf.NETCDF4)
	if err != nil {
		t.Fatal(err)
	}
	if err := text(ds.Attr("empty"), ""); err != nil {
		t.Fatal(err)
	}
	if err := text(ds.Attr("title"), "synthetic"); err != nil {
		t.Fatal(err)
	}
	if err := ds.Close(); err != nil {
		t.Fatal(err)
	}
	ds, err = netcdf.OpenFile(f, netcdf.NOWRITE)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	if _, err := ds.Attr("empty").Len(); err == nil {
		t.Error("the empty attribute was written")
	}
	n, err := ds.Attr("title").Len()
	if err != nil || n != 9 {
		t.Fatalf("title: length %d, %v; want 9", n, err)
	}
	b := make([]byte, n)
	if err := ds.Attr("title").ReadBytes(b); err != nil || string(b) != "synthetic" {
		t.Errorf("title %q (%v), want \"synthetic\"", b, err)
	}
}
