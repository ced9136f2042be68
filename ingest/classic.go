package ingest

import (
	"bufio"
	"encoding/binary"
	"fmt"
	"io"
	"os"
)

// checkClassicHeader walks the header of a classic-format file (CDF-1, CDF-2
// or CDF-5) in Go before NetCDF-C opens it, and refuses one that does not
// follow the format: counts larger than the file, unknown tags or types,
// dimension ids out of range, more than one unlimited dimension. NetCDF-C
// trusts these fields, and a damaged header can crash it.
//
// Layout (NetCDF User's Guide, "File Format Specifications", classic and
// 64-bit offset formats, and the CDF-5 extension):
//
//	header   = magic numrecs dim_list gatt_list var_list
//	dim_list = ABSENT | NC_DIMENSION nelems {name dim_length}
//	att_list = ABSENT | NC_ATTRIBUTE nelems {name nc_type nelems values (padded to 4)}
//	var_list = ABSENT | NC_VARIABLE nelems {name nelems {dimid} vatt_list nc_type vsize begin}
//	name     = nelems namestring (padded to 4)
//
// Big-endian; NON_NEG counts are 4 bytes (8 in CDF-5), begin is 4 bytes in
// CDF-1 and 8 in CDF-2 and CDF-5.
func checkClassicHeader(path string, version byte, size int64) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("ingest: %s: %v", path, err)
	}
	defer f.Close()
	h := &hdr{r: bufio.NewReader(f), size: size, cdf5: version == 5, off64: version != 1}
	if err := h.walk(); err != nil {
		return fmt.Errorf("ingest: %s: damaged NetCDF classic header (%v at byte %d); the file is truncated or corrupt: copy or download it again", path, err, h.pos)
	}
	return nil
}

type hdr struct {
	r           *bufio.Reader
	pos, size   int64
	cdf5, off64 bool
}

func (h *hdr) u32() (uint64, error) {
	var b [4]byte
	if _, err := io.ReadFull(h.r, b[:]); err != nil {
		return 0, fmt.Errorf("header ends early")
	}
	h.pos += 4
	return uint64(binary.BigEndian.Uint32(b[:])), nil
}

func (h *hdr) u64() (uint64, error) {
	var b [8]byte
	if _, err := io.ReadFull(h.r, b[:]); err != nil {
		return 0, fmt.Errorf("header ends early")
	}
	h.pos += 8
	return binary.BigEndian.Uint64(b[:]), nil
}

// count reads a NON_NEG count and checks that items of at least minBytes
// each can fit in the rest of the file.
func (h *hdr) count(minBytes int64) (uint64, error) {
	var n uint64
	var err error
	if h.cdf5 {
		n, err = h.u64()
	} else {
		n, err = h.u32()
	}
	if err != nil {
		return 0, err
	}
	if minBytes > 0 && n > uint64(h.size-h.pos)/uint64(minBytes) {
		return 0, fmt.Errorf("count %d larger than the file can hold", n)
	}
	return n, nil
}

func (h *hdr) skip(n uint64) error {
	if n > uint64(h.size-h.pos) {
		return fmt.Errorf("item of %d bytes runs past the end of the file", n)
	}
	if _, err := h.r.Discard(int(n)); err != nil {
		return fmt.Errorf("header ends early")
	}
	h.pos += int64(n)
	return nil
}

func pad4(n uint64) uint64 { return (n + 3) &^ 3 }

func (h *hdr) name() error {
	n, err := h.count(1)
	if err != nil {
		return err
	}
	if n == 0 || n > 1024 {
		return fmt.Errorf("name of length %d", n)
	}
	return h.skip(pad4(n))
}

// list reads a list tag and its element count; ABSENT is tag 0 and count 0.
func (h *hdr) list(tag uint64, minBytes int64) (uint64, error) {
	t, err := h.u32()
	if err != nil {
		return 0, err
	}
	n, err := h.count(minBytes)
	if err != nil {
		return 0, err
	}
	if t == 0 && n == 0 {
		return 0, nil
	}
	if t != tag {
		return 0, fmt.Errorf("list tag %#x where %#x or ABSENT belongs", t, tag)
	}
	return n, nil
}

func (h *hdr) typeSize(t uint64) (uint64, error) {
	sizes := map[uint64]uint64{1: 1, 2: 1, 3: 2, 4: 4, 5: 4, 6: 8}
	if h.cdf5 {
		for k, v := range map[uint64]uint64{7: 1, 8: 2, 9: 4, 10: 8, 11: 8} {
			sizes[k] = v
		}
	}
	s, ok := sizes[t]
	if !ok {
		return 0, fmt.Errorf("unknown value type %d", t)
	}
	return s, nil
}

func (h *hdr) attrs() error {
	n, err := h.list(0x0C, 12)
	if err != nil {
		return err
	}
	for i := uint64(0); i < n; i++ {
		if err := h.name(); err != nil {
			return err
		}
		t, err := h.u32()
		if err != nil {
			return err
		}
		ts, err := h.typeSize(t)
		if err != nil {
			return err
		}
		m, err := h.count(int64(ts))
		if err != nil {
			return err
		}
		if err := h.skip(pad4(m * ts)); err != nil {
			return err
		}
	}
	return nil
}

func (h *hdr) walk() error {
	var magic [4]byte
	if _, err := io.ReadFull(h.r, magic[:]); err != nil {
		return fmt.Errorf("header ends early")
	}
	h.pos = 4
	if h.cdf5 {
		if _, err := h.u64(); err != nil { // numrecs
			return err
		}
	} else if _, err := h.u32(); err != nil {
		return err
	}
	ndims, err := h.list(0x0A, 8)
	if err != nil {
		return err
	}
	unlimited := 0
	for i := uint64(0); i < ndims; i++ {
		if err := h.name(); err != nil {
			return err
		}
		l, err := h.count(0)
		if err != nil {
			return err
		}
		if l == 0 {
			unlimited++
		}
	}
	if unlimited > 1 {
		return fmt.Errorf("%d unlimited dimensions (the classic format allows one)", unlimited)
	}
	if err := h.attrs(); err != nil {
		return err
	}
	nvars, err := h.list(0x0B, 24)
	if err != nil {
		return err
	}
	for i := uint64(0); i < nvars; i++ {
		if err := h.name(); err != nil {
			return err
		}
		nd, err := h.count(4)
		if err != nil {
			return err
		}
		for j := uint64(0); j < nd; j++ {
			var id uint64
			if h.cdf5 {
				id, err = h.u64()
			} else {
				id, err = h.u32()
			}
			if err != nil {
				return err
			}
			if id >= ndims {
				return fmt.Errorf("dimension id %d of a variable, but only %d dimensions", id, ndims)
			}
		}
		if err := h.attrs(); err != nil {
			return err
		}
		t, err := h.u32()
		if err != nil {
			return err
		}
		if _, err := h.typeSize(t); err != nil {
			return err
		}
		if _, err := h.count(0); err != nil { // vsize
			return err
		}
		// begin: where the data start. Not checked against the file size here:
		// record variables of a file with no records may begin at its end, and
		// checkDeclaredSize refuses truncated data with a clearer message.
		if h.off64 {
			_, err = h.u64()
		} else {
			_, err = h.u32()
		}
		if err != nil {
			return err
		}
	}
	return nil
}
