package ingest

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"sync"

	"github.com/fhs/go-netcdf/netcdf"
)

// ncMu serialises every call into the NetCDF-C library, which (with HDF5
// underneath) is not thread-safe. In a run one reader goroutine makes all the
// calls; the mutex guards the rest (catalog building, inspect, tests).
var ncMu sync.Mutex

// checkMagic refuses files that are not NetCDF before the C library sees them:
// classic files start with "CDF\x01", "CDF\x02" or "CDF\x05", NetCDF-4 files
// are HDF5 and start with "\x89HDF\r\n\x1a\n" (NetCDF User's Guide, file
// format specifications).
func checkMagic(path string) (format string, size int64, err error) {
	format, size, _, err = checkMagicStamp(path)
	return format, size, err
}

// checkMagicStamp is checkMagic that also returns the file's stamp. Only
// regular files are read: the file is opened without blocking (a named pipe
// would block open and read forever) and refused by name when it is not a
// regular file.
func checkMagicStamp(path string) (format string, size int64, stamp fileStamp, err error) {
	f, st, err := OpenRegular(path)
	if err != nil {
		return "", 0, stamp, fmt.Errorf("ingest: %w", err)
	}
	defer f.Close()
	stamp = stampOf(st)
	head := make([]byte, 8)
	n, _ := f.Read(head)
	head = head[:n]
	switch {
	case len(head) >= 4 && bytes.Equal(head[:3], []byte("CDF")) && (head[3] == 1 || head[3] == 2 || head[3] == 5):
		if err := checkClassicHeader(path, head[3], st.Size()); err != nil {
			return "", st.Size(), stamp, err
		}
		return map[byte]string{1: "classic", 2: "64-bit offset", 5: "64-bit data"}[head[3]], st.Size(), stamp, nil
	case len(head) == 8 && bytes.Equal(head, []byte("\x89HDF\r\n\x1a\n")):
		return "netcdf4", st.Size(), stamp, nil
	}
	return "", st.Size(), stamp, fmt.Errorf("ingest: %s: not a NetCDF file (%d bytes, unrecognised header); check that the path points at the hindcast's .nc files and that the transfer completed", path, st.Size())
}

// modeName names the kind of a file that is not a regular file.
func modeName(m os.FileMode) string {
	switch {
	case m&os.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&os.ModeSocket != 0:
		return "a socket"
	case m&os.ModeDevice != 0:
		return "a device"
	case m.IsDir():
		return "a directory"
	}
	return "mode " + m.String()
}

// ncVar is what ingest needs of one variable of an open file.
type ncVar struct {
	v     netcdf.Var
	ds    netcdf.Dataset
	id    int
	name  string
	typ   netcdf.Type
	dims  []string
	shape []uint64
}

type ncFile struct {
	path string
	ds   netcdf.Dataset
	vars []ncVar
}

func openNC(path string) (*ncFile, error) {
	ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
	if err != nil {
		return nil, fmt.Errorf("ingest: %s: cannot open as NetCDF: %v; the file may be truncated or corrupt", path, err)
	}
	f := &ncFile{path: path, ds: ds}
	n, err := ds.NVars()
	if err != nil {
		ds.Close()
		return nil, fmt.Errorf("ingest: %s: %v", path, err)
	}
	for i := 0; i < n; i++ {
		v := ds.VarN(i)
		name, err := v.Name()
		if err != nil {
			ds.Close()
			return nil, fmt.Errorf("ingest: %s: variable %d: %v", path, i, err)
		}
		typ, err := v.Type()
		if err != nil {
			ds.Close()
			return nil, fmt.Errorf("ingest: %s: variable %q: %v", path, name, err)
		}
		dims, err := v.Dims()
		if err != nil {
			ds.Close()
			return nil, fmt.Errorf("ingest: %s: variable %q: %v", path, name, err)
		}
		nv := ncVar{v: v, ds: ds, id: i, name: name, typ: typ}
		for _, d := range dims {
			dn, err := d.Name()
			if err != nil {
				ds.Close()
				return nil, fmt.Errorf("ingest: %s: variable %q: %v", path, name, err)
			}
			dl, err := d.Len()
			if err != nil {
				ds.Close()
				return nil, fmt.Errorf("ingest: %s: variable %q: %v", path, name, err)
			}
			nv.dims = append(nv.dims, dn)
			nv.shape = append(nv.shape, dl)
		}
		f.vars = append(f.vars, nv)
	}
	return f, nil
}

func (f *ncFile) close() { f.ds.Close() }

func (f *ncFile) find(name string) *ncVar {
	for i := range f.vars {
		if f.vars[i].name == name {
			return &f.vars[i]
		}
	}
	return nil
}

// str reads a text attribute, NC_CHAR or NC_STRING ("" when absent or not
// text).
func (v *ncVar) str(name string) string {
	a := v.attr(name)
	if !a.isText || a.err != nil {
		return ""
	}
	return a.text
}

// nums reads a numeric attribute as float64 values (nil when absent, not
// numeric or unreadable); the strict reading of packing and missing-value
// attributes is scan.numAttr.
func (v *ncVar) nums(name string) []float64 {
	a := v.attr(name)
	if a.err != nil || len(a.nums) == 0 {
		return nil
	}
	return a.nums
}

// defaultFill is the NetCDF default fill value of a type (netcdf.h NC_FILL_*),
// which CF says applies when a variable has no _FillValue.
func defaultFill(t netcdf.Type) float64 {
	switch t {
	case netcdf.BYTE:
		return -127
	case netcdf.SHORT:
		return -32767
	case netcdf.INT:
		return -2147483647
	case netcdf.FLOAT:
		return float64(float32(9.9692099683868690e+36))
	case netcdf.DOUBLE:
		return 9.9692099683868690e+36
	case netcdf.UBYTE:
		return 255
	case netcdf.USHORT:
		return 65535
	case netcdf.UINT:
		return 4294967295
	}
	return math.NaN()
}

func (v *ncVar) size() uint64 {
	n := uint64(1)
	for _, s := range v.shape {
		n *= s
	}
	return n
}

// maxReadAll bounds the values read at once by readAll (coordinates, time,
// static fields): 2^26 values, 512 MiB as float64, beyond any grid axis or
// static field of a hindcast swellgrid can process in memory.
const maxReadAll = 1 << 26

// readAll reads a (small) variable as float64 without unpacking.
func (v *ncVar) readAll(path string) ([]float64, error) {
	n := v.size()
	if n > maxReadAll {
		return nil, fmt.Errorf("ingest: %s: variable %q has %d values (shape %v), more than the %d swellgrid reads for a coordinate, time axis or static field; check the file's dimensions", path, v.name, n, v.shape, maxReadAll)
	}
	out := make([]float64, n)
	if n == 0 {
		return out, nil
	}
	start := make([]uint64, len(v.shape))
	if err := v.readSlab(path, start, v.shape, out); err != nil {
		return nil, err
	}
	return out, nil
}

// readSlab reads a hyperslab as float64 without unpacking. go-netcdf reads
// only in a variable's own type, so the values are read as stored and widened
// (exactly: every stored type but 64-bit integers fits a float64).
func (v *ncVar) readSlab(path string, start, count []uint64, buf []float64) error {
	var err error
	n := len(buf)
	switch v.typ {
	case netcdf.DOUBLE:
		if len(start) == 0 {
			err = v.v.ReadFloat64s(buf)
		} else {
			err = v.v.ReadFloat64Slice(buf, start, count)
		}
	case netcdf.FLOAT:
		b := make([]float32, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.SHORT:
		b := make([]int16, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.INT:
		b := make([]int32, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.BYTE:
		b := make([]int8, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.UBYTE:
		b := make([]uint8, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.USHORT:
		b := make([]uint16, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.UINT:
		b := make([]uint32, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.UINT64:
		b := make([]uint64, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	case netcdf.INT64:
		b := make([]int64, n)
		if err = v.readTyped(b, start, count); err == nil {
			for i, x := range b {
				buf[i] = float64(x)
			}
		}
	default:
		return fmt.Errorf("ingest: %s: variable %q has type %s, which swellgrid does not read; store it as a number type", path, v.name, typeName(v.typ))
	}
	if err != nil {
		return fmt.Errorf("ingest: %s: variable %q: read of %v+%v failed: %v; the file may be truncated or corrupt", path, v.name, start, count, err)
	}
	return nil
}

func (v *ncVar) readTyped(b any, start, count []uint64) error {
	full := len(start) == 0
	switch x := b.(type) {
	case []float32:
		if full {
			return v.v.ReadFloat32s(x)
		}
		return v.v.ReadFloat32Slice(x, start, count)
	case []int16:
		if full {
			return v.v.ReadInt16s(x)
		}
		return v.v.ReadInt16Slice(x, start, count)
	case []int32:
		if full {
			return v.v.ReadInt32s(x)
		}
		return v.v.ReadInt32Slice(x, start, count)
	case []int8:
		if full {
			return v.v.ReadInt8s(x)
		}
		return v.v.ReadInt8Slice(x, start, count)
	case []uint8:
		if full {
			return v.v.ReadUint8s(x)
		}
		return v.v.ReadUint8Slice(x, start, count)
	case []uint16:
		if full {
			return v.v.ReadUint16s(x)
		}
		return v.v.ReadUint16Slice(x, start, count)
	case []int64:
		if full {
			return v.v.ReadInt64s(x)
		}
		return v.v.ReadInt64Slice(x, start, count)
	case []uint32:
		if full {
			return v.v.ReadUint32s(x)
		}
		return v.v.ReadUint32Slice(x, start, count)
	case []uint64:
		if full {
			return v.v.ReadUint64s(x)
		}
		return v.v.ReadUint64Slice(x, start, count)
	}
	return fmt.Errorf("unsupported buffer")
}
