package corpus

/*
#cgo pkg-config: netcdf
#include <stdlib.h>
#include <netcdf.h>

static int put_string_att(int ncid, int varid, const char *name, const char *value) {
	const char *vals[1] = {value};
	return nc_put_att_string(ncid, varid, name, 1, vals);
}
*/
import "C"

import (
	"fmt"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// putStringAttr writes a text attribute as one NC_STRING (the NetCDF-4
// variable-length string type, which python3-netcdf4 writes with
// setncattr_string and many NetCDF-4 writers use for every text attribute)
// rather than as NC_CHAR. varid is the variable's id (its index in definition
// order).
func putStringAttr(ds netcdf.Dataset, varid int, name, value string) error {
	cn, cv := C.CString(name), C.CString(value)
	defer C.free(unsafe.Pointer(cn))
	defer C.free(unsafe.Pointer(cv))
	if rc := C.put_string_att(C.int(ds), C.int(varid), cn, cv); rc != C.NC_NOERR {
		return fmt.Errorf("nc_put_att_string %s: %s", name, C.GoString(C.nc_strerror(rc)))
	}
	return nil
}
