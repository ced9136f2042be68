package ingest

// #cgo pkg-config: netcdf
// #include <stdlib.h>
// #include <netcdf.h>
import "C"

import (
	"fmt"
	"strings"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/grid"
)

// findNames reads the station names of a point set: the variable with
// cf_role = "timeseries_id" (CF 1.8 section 9.5, discrete sampling
// geometries) on the station dimension, else the only character or string
// variable on it. Names are per cell in canonical order; nil when the file
// has none.
func (s *scan) findNames() ([]string, error) {
	if s.grid == nil || s.grid.Kind != grid.Points {
		return nil, nil
	}
	var station string
	for d, a := range s.gridDim {
		if a == axP {
			station = d
		}
	}
	var pick *ncVar
	var text []*ncVar
	for i := range s.f.vars {
		v := &s.f.vars[i]
		isText := v.typ == netcdf.CHAR && len(v.dims) == 2 || v.typ == netcdf.STRING && len(v.dims) == 1
		if !isText || v.dims[0] != station {
			continue
		}
		if v.str("cf_role") == "timeseries_id" {
			pick = v
			break
		}
		text = append(text, v)
	}
	if pick == nil && len(text) == 1 {
		pick = text[0]
	}
	if pick == nil {
		return nil, nil
	}
	n := int(pick.shape[0])
	names := make([]string, n)
	switch pick.typ {
	case netcdf.CHAR:
		w := int(pick.shape[1])
		b := make([]byte, n*w)
		if err := pick.v.ReadBytes(b); err != nil {
			return nil, errf(s.f.path, pick.name, "station names: %v", err)
		}
		for i := range names {
			names[i] = strings.TrimSpace(strings.TrimRight(string(b[i*w:(i+1)*w]), "\x00"))
		}
	case netcdf.STRING:
		var err error
		if names, err = readStrings(s.f.path, pick.name, n); err != nil {
			return nil, err
		}
	}
	out := make([]string, n)
	for i := range names {
		out[s.invX[i]] = names[i]
	}
	return out, nil
}

// readStrings reads a 1-D NC_STRING variable with the NetCDF-C library
// (go-netcdf has no string reader); the caller holds ncMu.
func readStrings(path, name string, n int) ([]string, error) {
	cp := C.CString(path)
	defer C.free(unsafe.Pointer(cp))
	var id C.int
	if rc := C.nc_open(cp, C.NC_NOWRITE, &id); rc != C.NC_NOERR {
		return nil, errf(path, name, "station names: %s", C.GoString(C.nc_strerror(rc)))
	}
	defer C.nc_close(id)
	cn := C.CString(name)
	defer C.free(unsafe.Pointer(cn))
	var vid C.int
	if rc := C.nc_inq_varid(id, cn, &vid); rc != C.NC_NOERR {
		return nil, errf(path, name, "station names: %s", C.GoString(C.nc_strerror(rc)))
	}
	ptrs := make([]*C.char, n)
	if rc := C.nc_get_var_string(id, vid, &ptrs[0]); rc != C.NC_NOERR {
		return nil, errf(path, name, "station names: %s", C.GoString(C.nc_strerror(rc)))
	}
	defer C.nc_free_string(C.size_t(n), &ptrs[0])
	out := make([]string, n)
	for i, p := range ptrs {
		if p != nil {
			out[i] = strings.TrimSpace(C.GoString(p))
		}
	}
	return out, nil
}

var _ = fmt.Sprint
