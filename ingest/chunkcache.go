package ingest

// #cgo pkg-config: netcdf
// #include <netcdf.h>
import "C"

import "fmt"

// SetChunkCache sets the HDF5 chunk cache that NetCDF-C gives each variable
// of the NetCDF-4 files opened afterwards. Hindcast files are often chunked
// with the whole month of a variable in one chunk; with the library's default
// cache (a few MB) every block of time steps read from such a file
// decompresses the whole chunk again. A cache that holds a chunk makes each
// file's chunks decompress once. bytes is per variable; call it before Open.
func SetChunkCache(bytes int64) error {
	ncMu.Lock()
	defer ncMu.Unlock()
	if bytes < 1<<20 {
		bytes = 1 << 20
	}
	if rc := C.nc_set_chunk_cache(C.size_t(bytes), 1009, 0.75); rc != 0 {
		return fmt.Errorf("ingest: setting the NetCDF chunk cache to %d bytes failed (code %d)", bytes, int(rc))
	}
	return nil
}
