package ingest

// #cgo pkg-config: netcdf
// #include <netcdf.h>
// #include <netcdf_filter.h>
import "C"

import (
	"fmt"
	"unsafe"
)

// chunkBytes is the size of one chunk of v once decompressed (the product of
// its chunk sizes times the size of its type), from the storage metadata
// (nc_inq_var_chunking), and whether the variable has filters (deflate,
// shuffle or others, nc_inq_var_filter_ids). A contiguous or classic-format
// variable has no chunks: 0, false.
//
// HDF5 reads a filtered chunk whole: it reads the compressed bytes and runs
// the filters over them, each filter into a new buffer, before it copies out
// the values asked for. A chunk larger than the chunk cache is decompressed
// into such buffers on every read, which the memory budget must count
// (pipelines/engine/budget.go); an unfiltered chunk is read straight into the
// caller's buffer.
func (v *ncVar) chunkBytes() (int64, bool, []int, error) {
	rank := len(v.shape)
	if rank == 0 {
		return 0, false, nil, nil
	}
	ncid, varid := C.int(v.ds), C.int(v.id)
	var storage C.int
	sizes := make([]C.size_t, rank)
	if rc := C.nc_inq_var_chunking(ncid, varid, &storage, (*C.size_t)(unsafe.Pointer(&sizes[0]))); rc != C.NC_NOERR {
		if rc == C.NC_ENOTNC4 {
			return 0, false, nil, nil // classic format: no chunks
		}
		return 0, false, nil, fmt.Errorf("reading its chunk sizes failed (%s)", C.GoString(C.nc_strerror(rc)))
	}
	if storage != C.NC_CHUNKED {
		return 0, false, nil, nil
	}
	var size C.size_t
	if rc := C.nc_inq_type(ncid, C.nc_type(v.typ), nil, &size); rc != C.NC_NOERR {
		return 0, false, nil, fmt.Errorf("the size of its type is unknown (%s)", C.GoString(C.nc_strerror(rc)))
	}
	n := int64(size)
	shape := make([]int, rank)
	for k, s := range sizes {
		n *= int64(s)
		shape[k] = int(s)
	}
	var nfilters C.size_t
	if rc := C.nc_inq_var_filter_ids(ncid, varid, &nfilters, nil); rc != C.NC_NOERR {
		return 0, false, nil, fmt.Errorf("reading its filters failed (%s)", C.GoString(C.nc_strerror(rc)))
	}
	// Shuffle and Fletcher32 are not listed by nc_inq_var_filter_ids in
	// every NetCDF-C version; shuffle alone still decodes chunk-wise.
	var shuffle, deflate, level C.int
	if rc := C.nc_inq_var_deflate(ncid, varid, &shuffle, &deflate, &level); rc != C.NC_NOERR {
		return 0, false, nil, fmt.Errorf("reading its compression failed (%s)", C.GoString(C.nc_strerror(rc)))
	}
	return n, nfilters > 0 || shuffle != 0 || deflate != 0, shape, nil
}
