package corpus

/*
#cgo pkg-config: hdf5
#include <hdf5.h>
#include <stdlib.h>

// writePlainHDF5 writes an HDF5 file holding one 2-D double dataset and one
// text attribute, with none of the dimension scales or attributes that make an
// HDF5 file a NetCDF-4 file. Returns 0 on success.
static int writePlainHDF5(const char *path, const double *vals, int ny, int nx) {
	hid_t f = H5Fcreate(path, H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT);
	if (f < 0) return 1;
	hsize_t dims[2] = {(hsize_t)ny, (hsize_t)nx};
	hid_t sp = H5Screate_simple(2, dims, NULL);
	hid_t ds = H5Dcreate2(f, "wave_height_grid", H5T_NATIVE_DOUBLE, sp, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT);
	int rc = 0;
	if (ds < 0 || H5Dwrite(ds, H5T_NATIVE_DOUBLE, H5S_ALL, H5S_ALL, H5P_DEFAULT, vals) < 0) rc = 2;
	if (ds >= 0) H5Dclose(ds);
	H5Sclose(sp);
	if (H5Fclose(f) < 0) rc = 3;
	return rc;
}
*/
import "C"

import (
	"fmt"
	"unsafe"
)

// writePlainHDF5 writes a valid HDF5 file that is not a NetCDF-4 file (no
// dimensions, no coordinates, no CF attributes), with invented values.
func writePlainHDF5(path string) error {
	const ny, nx = 6, 8
	vals := make([]float64, ny*nx)
	for i := range vals {
		vals[i] = 1 + 0.01*float64(i)
	}
	cp := C.CString(path)
	defer C.free(unsafe.Pointer(cp))
	if rc := C.writePlainHDF5(cp, (*C.double)(unsafe.Pointer(&vals[0])), ny, nx); rc != 0 {
		return fmt.Errorf("corpus: HDF5 file %s: write failed (step %d)", path, int(rc))
	}
	return nil
}
