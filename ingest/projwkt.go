package ingest

// #cgo pkg-config: proj
// #include <stdlib.h>
// #include <proj.h>
import "C"

import (
	"fmt"
	"unsafe"
)

// projWKT is the OGC WKT2:2019 (ISO 19162:2019) text of a CRS that PROJ reads
// from def (a PROJ string or any WKT), by PROJ's own proj_as_wkt: atlas.nc
// writes it as the grid mapping's crs_wkt, which GDAL reads where it does not
// read the CF attributes of a mapping (a rotated pole, in GDAL 3.6).
// github.com/twpayne/go-proj has no call for it; this is the one direct PROJ
// call of the program, in a context of its own (PROJ contexts are not
// shared between threads).
func projWKT(def string) (string, error) {
	ctx := C.proj_context_create()
	defer C.proj_context_destroy(ctx)
	cdef := C.CString(def)
	defer C.free(unsafe.Pointer(cdef))
	pj := C.proj_create(ctx, cdef)
	if pj == nil {
		return "", fmt.Errorf("PROJ cannot read %q: %s", ShortText(def), C.GoString(C.proj_context_errno_string(ctx, C.proj_context_errno(ctx))))
	}
	defer C.proj_destroy(pj)
	w := C.proj_as_wkt(ctx, pj, C.PJ_WKT2_2019, nil)
	if w == nil {
		return "", fmt.Errorf("PROJ gives no WKT of %q", ShortText(def))
	}
	return C.GoString(w), nil
}
