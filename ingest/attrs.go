package ingest

// #cgo pkg-config: netcdf
// #include <stdlib.h>
// #include <netcdf.h>
import "C"

import (
	"fmt"
	"math"
	"strings"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"
)

// attrVal is one attribute as stored: its NetCDF type, its number of values,
// and its values as text (NC_CHAR, NC_STRING) or as numbers (every numeric
// type, widened to float64).
type attrVal struct {
	present bool
	typ     netcdf.Type
	n       uint64
	isText  bool
	text    string
	nums    []float64
	err     error // the attribute exists but could not be read
}

// typeName is the name of a NetCDF type as the NetCDF User's Guide spells it
// (NC_DOUBLE, NC_STRING, ...); types defined in the file (compound, enum,
// opaque, variable-length) are named by their id.
func typeName(t netcdf.Type) string {
	if s := t.String(); s != "" {
		return "NC_" + s
	}
	return fmt.Sprintf("user-defined type %d (compound, enum, opaque or variable-length)", int(t))
}

// maxAttrValues bounds what is read of one attribute: CF attributes that
// swellgrid reads have one or two values (missing_value a few); a header
// claiming more is refused by the callers rather than allocated.
const maxAttrValues = 1 << 16

// attr reads the attribute name of v. Absent attributes have present false.
func (v *ncVar) attr(name string) attrVal {
	a := v.v.Attr(name)
	t, err := a.Type()
	if err != nil {
		return attrVal{} // NC_ENOTATT: absent
	}
	out := attrVal{present: true, typ: t}
	n, err := a.Len()
	if err != nil {
		out.err = err
		return out
	}
	out.n = n
	if n > maxAttrValues {
		out.err = fmt.Errorf("%d values", n)
		return out
	}
	switch t {
	case netcdf.CHAR:
		out.isText = true
		if n > 0 {
			b := make([]byte, n)
			if err := a.ReadBytes(b); err != nil {
				out.err = err
				return out
			}
			out.text = strings.TrimRight(string(b), "\x00")
		}
		return out
	case netcdf.STRING:
		out.isText = true
		ss, err := v.stringAttr(name, n)
		if err != nil {
			out.err = err
			return out
		}
		out.text = strings.Join(ss, " ")
		return out
	}
	out.nums, out.err = readNums(a, t, n)
	return out
}

// stringAttr reads an NC_STRING attribute of n strings (NetCDF-4 only;
// nc_get_att_string allocates them and nc_free_string frees them).
func (v *ncVar) stringAttr(name string, n uint64) ([]string, error) {
	if n == 0 {
		return nil, nil
	}
	cname := C.CString(name)
	defer C.free(unsafe.Pointer(cname))
	ptrs := make([]*C.char, n)
	if rc := C.nc_get_att_string(C.int(v.ds), C.int(v.id), cname, &ptrs[0]); rc != C.NC_NOERR {
		return nil, fmt.Errorf("%s", C.GoString(C.nc_strerror(rc)))
	}
	defer C.nc_free_string(C.size_t(n), &ptrs[0])
	out := make([]string, n)
	for i, p := range ptrs {
		if p != nil {
			out[i] = C.GoString(p)
		}
	}
	return out, nil
}

// readNums reads a numeric attribute of type t and n values as float64.
func readNums(a netcdf.Attr, t netcdf.Type, n uint64) ([]float64, error) {
	out := make([]float64, n)
	if n == 0 {
		return out, nil
	}
	widen := func(err error, m int, at func(i int) float64) ([]float64, error) {
		if err != nil {
			return nil, err
		}
		for i := 0; i < m; i++ {
			out[i] = at(i)
		}
		return out, nil
	}
	switch t {
	case netcdf.DOUBLE:
		return out, a.ReadFloat64s(out)
	case netcdf.FLOAT:
		b := make([]float32, n)
		return widen(a.ReadFloat32s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.SHORT:
		b := make([]int16, n)
		return widen(a.ReadInt16s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.INT:
		b := make([]int32, n)
		return widen(a.ReadInt32s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.BYTE:
		b := make([]int8, n)
		return widen(a.ReadInt8s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.UBYTE:
		b := make([]uint8, n)
		return widen(a.ReadUint8s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.USHORT:
		b := make([]uint16, n)
		return widen(a.ReadUint16s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.UINT:
		b := make([]uint32, n)
		return widen(a.ReadUint32s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.INT64:
		b := make([]int64, n)
		return widen(a.ReadInt64s(b), len(b), func(i int) float64 { return float64(b[i]) })
	case netcdf.UINT64:
		b := make([]uint64, n)
		return widen(a.ReadUint64s(b), len(b), func(i int) float64 { return float64(b[i]) })
	}
	return nil, fmt.Errorf("type %s is not a number type", typeName(t))
}

// numAttr reads a numeric attribute that CF requires to be numbers (packing,
// missing values, valid range): it returns nil when absent, and an error
// naming the file, variable and attribute when the attribute is text, of a
// type that is not a number, has a count other than one of counts, or (when
// finite) holds a NaN or infinite value.
func (s *scan) numAttr(v *ncVar, name string, finite bool, counts ...int) ([]float64, error) {
	a := v.attr(name)
	if !a.present {
		return nil, nil
	}
	fix := "fix or remove the attribute (CF 1.8 sections 2.5.1 and 8.1)"
	if a.err != nil {
		return nil, errf(s.f.path, v.name, "attribute %s (%s) cannot be read: %v; %s", name, typeName(a.typ), a.err, fix)
	}
	if a.isText {
		return nil, errf(s.f.path, v.name, "attribute %s is stored as text (%s %q), not as a number; store it as a number of the variable's type (or float/double for packing), or %s", name, typeName(a.typ), a.text, fix)
	}
	if a.nums == nil {
		return nil, errf(s.f.path, v.name, "attribute %s has type %s, not a number type; %s", name, typeName(a.typ), fix)
	}
	ok := len(counts) == 0 && len(a.nums) > 0
	for _, c := range counts {
		ok = ok || len(a.nums) == c
	}
	if !ok {
		want := fmt.Sprint(counts)
		if len(counts) == 1 {
			want = fmt.Sprint(counts[0])
		}
		if len(counts) == 0 {
			want = "at least 1"
		}
		return nil, errf(s.f.path, v.name, "attribute %s has %d values %v, CF wants %s; %s", name, len(a.nums), a.nums, want, fix)
	}
	if finite {
		for _, x := range a.nums {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, errf(s.f.path, v.name, "attribute %s is %v, which cannot unpack or bound values; %s", name, x, fix)
			}
		}
	}
	return a.nums, nil
}

// boundAttr reads valid_min or valid_max: one number, which may be infinite
// (an open bound) but not NaN.
func (s *scan) boundAttr(v *ncVar, name string) ([]float64, error) {
	x, err := s.numAttr(v, name, false, 1)
	if err != nil || x == nil {
		return x, err
	}
	if math.IsNaN(x[0]) {
		return nil, errf(s.f.path, v.name, "attribute %s is NaN, which bounds nothing; remove it or store the limit (CF 1.8 section 2.5.1)", name)
	}
	return x, nil
}
