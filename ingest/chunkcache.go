package ingest

// #cgo pkg-config: netcdf
// #include <malloc.h>
// #include <netcdf.h>
import "C"

import "fmt"

// SetChunkCache sets the HDF5 chunk cache that NetCDF-C gives each variable
// of the NetCDF-4 files opened afterwards. Hindcast files are often chunked
// with the whole month of a variable in one chunk; with the library's default
// cache (a few MB) every block of time steps read from such a file
// decompresses the whole chunk again. A cache that holds a chunk makes each
// file's chunks decompress once. bytes is per variable; call it before Open.
//
// It also keeps the C allocator to one arena (boundCHeap), so that the
// memory of reading stays what the budget counts.
func SetChunkCache(bytes int64) error {
	ncMu.Lock()
	defer ncMu.Unlock()
	boundCHeap()
	if bytes < 1<<20 {
		bytes = 1 << 20
	}
	if rc := C.nc_set_chunk_cache(C.size_t(bytes), 1009, 0.75); rc != 0 {
		return fmt.Errorf("ingest: setting the NetCDF chunk cache to %d bytes failed (code %d)", bytes, int(rc))
	}
	return nil
}

// boundCHeap sets glibc's allocator so that HDF5's chunk buffers (chunk
// cache entries, decompression buffers: megabytes each) are not kept once
// per thread. By default glibc gives each thread that allocates under
// contention an arena of its own, and an arena keeps what is freed in it;
// the NetCDF goroutine runs on whichever thread it is locked to for a file,
// so several arenas came to hold a copy of the reader's high-water mark
// (three of about 60 MB each on the 200 x 200 benchmark grid, outside the
// budget). One arena serves every thread (all NetCDF calls are serialised
// by ncMu, so they do not contend), and trimCHeap gives its free memory
// back after each file. A fixed 1 MiB mmap threshold was tried as well:
// it bounds the memory the same way but maps and faults in every chunk
// buffer afresh, which made reading about 3 x slower in CPU time
// (BENCHMARKS.md, memory). mallopt(3), malloc_trim(3).
func boundCHeap() {
	C.mallopt(C.M_ARENA_MAX, 1)
}

// trimCHeap returns the allocator's free memory to the system (call it
// with ncMu held, once a file is closed).
func trimCHeap() {
	C.malloc_trim(0)
}
