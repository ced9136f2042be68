package ingest

import (
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
)

// Every NetCDF type has a printable name in messages (the NetCDF User's
// Guide's NC_* names); types defined in a file are named by id, never blank.
func TestTypeNames(t *testing.T) {
	for typ, want := range map[netcdf.Type]string{netcdf.STRING: "NC_STRING", netcdf.UINT64: "NC_UINT64", netcdf.CHAR: "NC_CHAR", netcdf.DOUBLE: "NC_DOUBLE"} {
		if got := typeName(typ); got != want {
			t.Errorf("typeName(%d) = %q, want %q", int(typ), got, want)
		}
	}
	if got := typeName(netcdf.Type(40)); !strings.Contains(got, "user-defined type 40") {
		t.Errorf("typeName(40) = %q, want the type id named", got)
	}
}
