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

// readOnceCache turns off the chunk cache of v, a variable of an open file
// whose chunks each hold one time step (chunks, its chunk extents, and
// axes, its dimensions' roles). The reader reads a file in blocks of
// whole time steps, so each such chunk is wanted by one read only: caching
// it saves no decompression, and a cache that holds the file's chunks until
// the file is closed costs fresh memory for every chunk (the heap is given
// back after each file, trimCHeap), whose page faults doubled the reader's
// CPU time on step-chunked files (BENCHMARKS.md, issue 29). Without a
// cache HDF5 decompresses each chunk into a buffer it frees at once, which
// the next chunk reuses. Call it with ncMu held.
func readOnceCache(v *ncVar, chunks []int, axes []axis) error {
	if len(chunks) != len(axes) {
		return nil
	}
	one := false
	for k, a := range axes {
		if a == axT {
			one = chunks[k] == 1
		}
	}
	if !one {
		return nil
	}
	if rc := C.nc_set_var_chunk_cache(C.int(v.ds), C.int(v.id), 0, 0, 0.75); rc != 0 {
		return fmt.Errorf("turning its chunk cache off failed (code %d); the file may be corrupt", int(rc))
	}
	return nil
}

// varChunkCache is the chunk cache size of v in its open file (bytes).
func varChunkCache(v *ncVar) (int64, error) {
	var size, nelems C.size_t
	var pre C.float
	ncMu.Lock()
	defer ncMu.Unlock()
	if rc := C.nc_get_var_chunk_cache(C.int(v.ds), C.int(v.id), &size, &nelems, &pre); rc != 0 {
		return 0, fmt.Errorf("reading its chunk cache failed (code %d)", int(rc))
	}
	return int64(size), nil
}
