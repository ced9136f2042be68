package ingest

import (
	"fmt"
	"io"
	"unsafe"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/grid"
)

// Reading once under a small memory budget. A run whose cells do not fit
// one pass reads the record once per pass; where a file's chunks span
// more cells than a pass (a month of a variable over the whole grid in one
// chunk is common), every pass decompresses every chunk again. With a
// spill, the first pass reads, beside its own cells, the raw slabs of the
// later passes' cells (ReadRange.SpillTo; each such read decompresses
// nothing when the chunk cache holds the chunk the first pass just read)
// and writes them, as stored, in the order the later pass reads them, to
// that pass's scratch stream; the later pass then takes its slabs from
// that stream (ReadRange.SpillFrom) instead of the files. The values are
// the very ones the file gives, so the states and tables are the same
// bytes as a run that reads the files in every pass.

// SpillOut is a later pass's cell range and the stream its slabs are
// written to.
type SpillOut struct {
	C0, C1 int
	W      io.Writer
}

// SpillBytesPerCellStep is the size of one cell's values of one time step
// as a spill stores them (the role variables in their stored type, widened
// to 8 bytes where readRaw widens; from the first file's variables, so an
// estimate when files differ in type): the spill of a pass of n cells
// over the record takes about n x Steps x this many bytes.
func (c *Catalog) SpillBytesPerCellStep() int64 {
	var n int64
	for r, vi := range c.Vars {
		if vi == nil || vi.Static() {
			continue
		}
		per := int64(1)
		if r == Spectrum2D || r == Spectrum1D {
			per = int64(c.MaxBins())
		}
		n += per * int64(storedSize(vi.v))
	}
	return n
}

// storedSize is the size of one value of v as a raw slab holds it.
func storedSize(v *ncVar) int {
	if v != nil {
		switch v.typ {
		case netcdf.FLOAT:
			return 4
		case netcdf.SHORT:
			return 2
		}
	}
	return 8
}

// rawBytes is the slab's values as bytes (the machine's byte order: a
// spill is read back by the process that wrote it).
func (s *rawSlab) rawBytes() []byte {
	switch {
	case s.f32 != nil:
		return unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(s.f32))), 4*len(s.f32))
	case s.i16 != nil:
		return unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(s.i16))), 2*len(s.i16))
	case s.f64 != nil:
		return unsafe.Slice((*byte)(unsafe.Pointer(unsafe.SliceData(s.f64))), 8*len(s.f64))
	}
	return nil
}

// spillSlabs reads, for each later pass of to, its slab of the steps
// t0..t0+nt-1 of a role and writes it to the pass's stream.
func (c *Catalog) spillSlabs(to []SpillOut, path string, vi *VarInfo, g *grid.Grid, invX, invY []int, t0, nt int) error {
	for _, o := range to {
		s, err := c.readRaw(path, vi, g, invX, invY, t0, nt, o.C0, o.C1)
		if err != nil {
			return err
		}
		_, err = o.W.Write(s.rawBytes())
		s.release()
		if err != nil {
			return fmt.Errorf("ingest: writing the scratch spill of cells %d..%d failed: %v (disk full?); rerun with a larger --memory-limit or more free space in the run directory", o.C0, o.C1-1, err)
		}
	}
	return nil
}

// spillRaw is readRaw from a spill: the slab of the steps t0..t0+nt-1 and
// the cells c0..c1-1, read from the stream in the order spillSlabs wrote it.
func spillRaw(from io.Reader, vi *VarInfo, g *grid.Grid, invX, invY []int, t0, nt, c0, c1 int) (*rawSlab, error) {
	s, total := slabGeom(vi, g, invX, invY, t0, nt, c0, c1)
	switch vi.v.typ {
	case netcdf.FLOAT:
		s.f32, _ = f32Pool.get(total)
	case netcdf.SHORT:
		s.i16, _ = i16Pool.get(total)
	default:
		s.f64 = make([]float64, total)
	}
	if total == 0 {
		return s, nil
	}
	if _, err := io.ReadFull(from, s.rawBytes()); err != nil {
		s.release()
		return nil, fmt.Errorf("ingest: reading the scratch spill of cells %d..%d failed: %v; rerun (the spill is rebuilt)", c0, c1-1, err)
	}
	return s, nil
}
