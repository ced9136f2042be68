package corpus

import (
	"fmt"
	"math"
	"os"

	"github.com/fhs/go-netcdf/netcdf"
)

// ncDim is one dimension of a file description.
type ncDim struct {
	name string
	n    int
}

// ncAttr is one attribute: text when s is set, else numbers of the variable's
// type (or double for global attributes).
type ncAttr struct {
	name string
	s    string
	num  []float64
	text bool
	// ncString writes the text as one NC_STRING (NetCDF-4 files only)
	// instead of NC_CHAR.
	ncString bool
}

// ncVarDesc is one variable: its type, dimensions, attributes and values in
// storage order (nil: left unwritten, i.e. fill values).
type ncVarDesc struct {
	name  string
	typ   netcdf.Type
	dims  []string
	attrs []ncAttr
	data  []float64
}

func (v *ncVarDesc) setText(name, s string) {
	for i := range v.attrs {
		if v.attrs[i].name == name {
			v.attrs[i] = ncAttr{name: name, s: s, text: true}
			return
		}
	}
	v.attrs = append(v.attrs, ncAttr{name: name, s: s, text: true})
}

// setString sets a text attribute stored as NC_STRING.
func (v *ncVarDesc) setString(name, s string) {
	v.setText(name, s)
	for i := range v.attrs {
		if v.attrs[i].name == name {
			v.attrs[i].ncString = true
		}
	}
}

func (v *ncVarDesc) setNum(name string, x ...float64) {
	for i := range v.attrs {
		if v.attrs[i].name == name {
			v.attrs[i] = ncAttr{name: name, num: x}
			return
		}
	}
	v.attrs = append(v.attrs, ncAttr{name: name, num: x})
}

// ncDesc describes a whole NetCDF file before it is written.
type ncDesc struct {
	netcdf4 bool
	dims    []ncDim
	vars    []*ncVarDesc
	global  []ncAttr
}

func (d *ncDesc) v(name string) *ncVarDesc {
	for _, v := range d.vars {
		if v.name == name {
			return v
		}
	}
	panic("corpus: no variable " + name) // a mistake in a case definition
}

func (d *ncDesc) drop(name string) {
	out := d.vars[:0]
	for _, v := range d.vars {
		if v.name != name {
			out = append(out, v)
		}
	}
	d.vars = out
}

func (d *ncDesc) dim(name string) int {
	for _, x := range d.dims {
		if x.name == name {
			return x.n
		}
	}
	panic("corpus: no dimension " + name)
}

func (d *ncDesc) setDim(name string, n int) {
	for i := range d.dims {
		if d.dims[i].name == name {
			d.dims[i].n = n
			return
		}
	}
	d.dims = append(d.dims, ncDim{name, n})
}

// reverseDim stores dimension name the other way round: its coordinate
// variable and every variable over it are reversed along it, so the file
// holds the same values at the same positions in the opposite order.
func (d *ncDesc) reverseDim(name string) {
	for _, v := range d.vars {
		for k, dn := range v.dims {
			if dn == name && v.data != nil {
				v.data = d.permute(v, v.dims, k)
			}
		}
	}
}

// transpose swaps dimensions a and b in every variable that has both
// (e.g. (time, lat, lon) to (time, lon, lat)), moving the values with them.
func (d *ncDesc) transpose(a, b string) {
	for _, v := range d.vars {
		ia, ib := -1, -1
		for k, dn := range v.dims {
			if dn == a {
				ia = k
			}
			if dn == b {
				ib = k
			}
		}
		if ia < 0 || ib < 0 {
			continue
		}
		nd := append([]string(nil), v.dims...)
		nd[ia], nd[ib] = nd[ib], nd[ia]
		if v.data != nil {
			v.data = d.permute(v, nd, -1)
		}
		v.dims = nd
	}
}

// permute returns v's values stored with dimensions newDims (a permutation
// of v.dims), reversed along old dimension rev (-1: none).
func (d *ncDesc) permute(v *ncVarDesc, newDims []string, rev int) []float64 {
	shape := make([]int, len(v.dims))
	for k, dn := range v.dims {
		shape[k] = d.dim(dn)
	}
	pos := make([]int, len(newDims)) // new axis k is old axis pos[k]
	for k, dn := range newDims {
		for j, on := range v.dims {
			if on == dn {
				pos[k] = j
			}
		}
	}
	out := make([]float64, len(v.data))
	idx := make([]int, len(shape))
	for i := range v.data {
		src := idx
		o := 0
		for k := range newDims {
			j := pos[k]
			x := src[j]
			if j == rev {
				x = shape[j] - 1 - x
			}
			o = o*shape[j] + x
		}
		out[o] = v.data[i]
		for k := len(shape) - 1; k >= 0; k-- {
			idx[k]++
			if idx[k] < shape[k] {
				break
			}
			idx[k] = 0
		}
	}
	return out
}

// write creates the file at path (replacing it).
func (d *ncDesc) write(path string) (err error) {
	mode := netcdf.CLOBBER
	if d.netcdf4 {
		mode |= netcdf.NETCDF4
	}
	ds, err := netcdf.CreateFile(path, mode)
	if err != nil {
		return fmt.Errorf("corpus: create %s: %w", path, err)
	}
	closed := false
	defer func() {
		if !closed {
			ds.Close()
		}
		if err != nil {
			os.Remove(path)
		}
	}()
	dims := map[string]netcdf.Dim{}
	for _, dm := range d.dims {
		x, err := ds.AddDim(dm.name, uint64(dm.n))
		if err != nil {
			return fmt.Errorf("corpus: %s: dimension %s: %w", path, dm.name, err)
		}
		dims[dm.name] = x
	}
	for _, a := range d.global {
		if err := writeAttr(ds.Attr(a.name), netcdf.DOUBLE, a); err != nil {
			return fmt.Errorf("corpus: %s: global attribute %s: %w", path, a.name, err)
		}
	}
	nv := make([]netcdf.Var, len(d.vars))
	for i, v := range d.vars {
		var vd []netcdf.Dim
		for _, n := range v.dims {
			x, ok := dims[n]
			if !ok {
				return fmt.Errorf("corpus: %s: variable %s: no dimension %s", path, v.name, n)
			}
			vd = append(vd, x)
		}
		x, err := ds.AddVar(v.name, v.typ, vd)
		if err != nil {
			return fmt.Errorf("corpus: %s: variable %s: %w", path, v.name, err)
		}
		for _, a := range v.attrs {
			if a.ncString {
				if err := putStringAttr(ds, i, a.name, a.s); err != nil {
					return fmt.Errorf("corpus: %s: %s:%s: %w", path, v.name, a.name, err)
				}
				continue
			}
			if err := writeAttr(x.Attr(a.name), v.typ, a); err != nil {
				return fmt.Errorf("corpus: %s: %s:%s: %w", path, v.name, a.name, err)
			}
		}
		nv[i] = x
	}
	if err := ds.EndDef(); err != nil {
		return fmt.Errorf("corpus: %s: %w", path, err)
	}
	for i, v := range d.vars {
		if v.data == nil {
			continue
		}
		if err := writeData(nv[i], v.typ, v.data); err != nil {
			return fmt.Errorf("corpus: %s: variable %s: %w", path, v.name, err)
		}
	}
	closed = true
	if err := ds.Close(); err != nil {
		return fmt.Errorf("corpus: close %s: %w", path, err)
	}
	return nil
}

func writeAttr(a netcdf.Attr, typ netcdf.Type, at ncAttr) error {
	if at.text {
		return a.WriteBytes([]byte(at.s))
	}
	if at.name == "scale_factor" || at.name == "add_offset" {
		typ = netcdf.DOUBLE // packing attributes as doubles (CF 1.8 section 8.1 allows a wider type)
	}
	switch typ {
	case netcdf.FLOAT:
		b := make([]float32, len(at.num))
		for i, x := range at.num {
			b[i] = float32(x)
		}
		return a.WriteFloat32s(b)
	case netcdf.SHORT:
		b := make([]int16, len(at.num))
		for i, x := range at.num {
			b[i] = int16(x)
		}
		return a.WriteInt16s(b)
	}
	return a.WriteFloat64s(at.num)
}

func writeData(v netcdf.Var, typ netcdf.Type, data []float64) error {
	switch typ {
	case netcdf.DOUBLE:
		return v.WriteFloat64s(data)
	case netcdf.FLOAT:
		b := make([]float32, len(data))
		for i, x := range data {
			b[i] = float32(x)
		}
		return v.WriteFloat32s(b)
	case netcdf.SHORT:
		b := make([]int16, len(data))
		for i, x := range data {
			if math.IsNaN(x) {
				b[i] = -32767
			} else {
				b[i] = int16(math.Round(x))
			}
		}
		return v.WriteInt16s(b)
	}
	return fmt.Errorf("type %v not supported by the corpus writer", typ)
}
