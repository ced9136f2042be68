package ingest

// #cgo pkg-config: hdf5
// #include <hdf5.h>
// static void swellgrid_quiet_hdf5(void) { H5Eset_auto2(H5E_DEFAULT, NULL, NULL); }
import "C"

import "runtime"

// ncThread pins the calling goroutine to its OS thread for a run of NetCDF
// calls and switches off HDF5's error-stack printing on that thread. HDF5
// prints its stack to stderr by default, per thread, even for look-ups that
// NetCDF-C makes on purpose and handles (an absent attribute of a NetCDF-4
// variable); swellgrid reports every real failure through NetCDF-C's return
// codes instead. Call the returned function when done.
func ncThread() func() {
	runtime.LockOSThread()
	C.swellgrid_quiet_hdf5()
	return runtime.UnlockOSThread
}
