package corpus

import (
	"bytes"
	"encoding/binary"
	"os"
)

// writeHugeHeader writes a classic 64-bit-offset NetCDF file ("CDF\x02")
// whose header declares a longitude dimension of lonLen values and
// variables time(time), lat(lat), lon(lon) with CF attributes, but which holds
// only the time and latitude values: the file is a few hundred bytes while the
// header claims lonLen*8 bytes of longitudes. The layout follows the NetCDF
// classic format specification (NetCDF User's Guide, "File Format
// Specifications"): magic, numrecs, dim_list, gatt_list, var_list, data.
func writeHugeHeader(path string, lonLen uint32) error {
	var b bytes.Buffer
	u32 := func(x uint32) { binary.Write(&b, binary.BigEndian, x) }
	u64 := func(x uint64) { binary.Write(&b, binary.BigEndian, x) }
	name := func(s string) {
		u32(uint32(len(s)))
		b.WriteString(s)
		for b.Len()%4 != 0 {
			b.WriteByte(0)
		}
	}
	const (
		ncDimension = 0x0A
		ncVariable  = 0x0B
		ncAttribute = 0x0C
		ncChar      = 2
		ncDouble    = 6
	)
	textAttrs := func(kv ...string) {
		u32(ncAttribute)
		u32(uint32(len(kv) / 2))
		for i := 0; i < len(kv); i += 2 {
			name(kv[i])
			u32(ncChar)
			name(kv[i+1]) // nelems + chars + padding: same layout as a name
		}
	}
	b.WriteString("CDF\x02")
	u32(0) // numrecs
	u32(ncDimension)
	u32(3)
	name("time")
	u32(2)
	name("lat")
	u32(2)
	name("lon")
	u32(lonLen)
	textAttrs("title", "swellgrid corpus: header claims a huge dimension (synthetic)", "synthetic", "yes")
	type vdef struct {
		n, units, std string
		dim           uint32
		size          uint64
	}
	vars := []vdef{
		{"time", "hours since 2001-01-01 00:00:00", "time", 0, 16},
		{"lat", "degrees_north", "latitude", 1, 16},
		{"lon", "degrees_east", "longitude", 2, uint64(lonLen) * 8},
	}
	// Header size is known once written; offsets are patched after.
	var beginAt []int
	u32(ncVariable)
	u32(uint32(len(vars)))
	for _, v := range vars {
		name(v.n)
		u32(1)
		u32(v.dim)
		textAttrs("standard_name", v.std, "units", v.units)
		u32(ncDouble)
		vs := v.size
		if vs > 0xFFFFFFFF {
			vs = 0xFFFFFFFF
		}
		u32(uint32(vs))
		beginAt = append(beginAt, b.Len())
		u64(0)
	}
	off := uint64(b.Len())
	hdr := b.Bytes()
	for i, v := range vars {
		binary.BigEndian.PutUint64(hdr[beginAt[i]:], off)
		off += v.size
	}
	// Data: the two times and the two latitudes only.
	for _, x := range []float64{0, 3, 40, 40.5} {
		binary.Write(&b, binary.BigEndian, x)
	}
	return os.WriteFile(path, b.Bytes(), 0o644)
}
