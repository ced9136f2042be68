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
// It also makes the C allocator give chunk-sized memory back when HDF5
// frees it (boundCHeap), so that the memory of reading stays what the
// budget counts.
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
// cache entries, decompression buffers: megabytes each) do not stay with
// the process once freed. By default glibc serves such a buffer from a
// per-thread arena as soon as its "dynamic mmap threshold" has risen past
// the buffer's size (it rises to the size of each mmapped block freed, up
// to 32 MiB), and keeps it in that arena when freed; the NetCDF goroutine
// runs on whichever thread it is locked to for a file, so each thread's
// arena came to hold its own tens of MB (three arenas of about 60 MB each
// on the 200 x 200 benchmark grid). A fixed threshold of 1 MiB (which also
// turns the dynamic one off) maps every larger block afresh and unmaps it
// on free; one arena serves every thread (all NetCDF calls are serialised
// by ncMu, so they do not contend). mallopt(3), glibc manual "Memory
// Allocation Tunables".
func boundCHeap() {
	C.mallopt(C.M_MMAP_THRESHOLD, 1<<20)
	C.mallopt(C.M_ARENA_MAX, 1)
}
