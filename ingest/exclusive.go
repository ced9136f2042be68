package ingest

// WithNetCDF runs fn while holding the lock that serialises every call into
// the NetCDF-C library, on a pinned OS thread with HDF5's error printing off
// (see ncMu and ncThread). A writer of NetCDF files outside this package
// (export/raster) makes all its NetCDF calls inside fn, so it can never run
// beside a reader.
func WithNetCDF(fn func() error) error {
	ncMu.Lock()
	defer ncMu.Unlock()
	defer ncThread()()
	return fn()
}
