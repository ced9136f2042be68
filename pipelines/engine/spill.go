package engine

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sync/atomic"
	"syscall"

	"swellgrid/export"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/lock"
)

// The scratch spill of a run of several passes (ingest/spill.go): the
// first pass reads every input file once and writes, for each later pass
// that starts afresh, the raw values of its cells in the order it reads
// them to a scratch file in the run directory's state folder; the later
// pass reads its file instead of the inputs. Chosen by measurement
// (BENCHMARKS.md, issue 29): where a file's chunks span the grid, every
// pass decompressed every chunk, and a bigger chunk cache cannot help as
// each pass opens the files again; reading only the chunks a pass needs
// helps only inputs chunked in tiles of rows.
//
// A scratch file is created exclusively through the run directory's door
// (never through a link) and unlinked at once: only this process holds it,
// a killed run leaves nothing behind, and a resumed run never reads one
// (it spills afresh when it restarts the first pass from its first file,
// and otherwise reads the files in every pass). Before it spills, the run
// checks the free space of the state folder's file system and reads the
// files in every pass instead, saying so, when it is short.

// spillHelps reports whether a later pass reading the files would
// decompress chunks the first pass decompressed as well: not when the
// inputs are not chunked (a pass reads its own cells' bytes), nor when
// every pass boundary falls on a boundary of the chunks' tiles along the
// rows (each chunk is then decompressed by one pass only: the hyperslab of
// a pass already reads only its chunks), on a structured grid whose rows
// the tiles divide (so that a file stored the other way up is tiled alike)
// or a point set.
func (j *job) spillHelps() bool {
	rows, _, _, _, _ := j.cat.RowChunks()
	if rows == 0 {
		return false
	}
	g := j.cat.Grid
	if g.Kind == grid.MeshKind {
		return true // a pass's nodes come from a file range of its own
	}
	nx, ny := 1, g.NCells()
	if g.Structured() {
		nx, ny = g.NX, g.NY
	}
	if ny%rows != 0 {
		return true
	}
	for _, p := range j.passes[1:] {
		if p[0]%nx != 0 || (p[0]/nx)%rows != 0 {
			return true
		}
	}
	return false
}

// spillSet is the scratch streams of the later passes (by pass index).
type spillSet struct {
	files map[int]*os.File
	size  map[int]int64
}

// spillPasses counts the passes read from a spill since the process
// started: a test hook.
var spillPasses atomic.Int64

// spillMargin is the free space kept beyond the spill's size.
const spillMargin = 256 << 20

// openSpill makes the scratch streams of the passes in later (indices of
// j.passes), or returns nil (reading the files in every pass) when the
// free space is short or a scratch file cannot be made; it says why.
func (j *job) openSpill(later []int) *spillSet {
	if len(later) == 0 {
		return nil
	}
	per := j.cat.SpillBytesPerCellStep()
	var need int64
	for _, pi := range later {
		p := j.passes[pi]
		need += int64(p[1]-p[0]) * int64(j.cat.Steps) * per
	}
	dir := filepath.Join(j.out, lock.StateDir)
	var st syscall.Statfs_t
	if err := syscall.Statfs(dir, &st); err != nil {
		j.log.Warn("no scratch spill: every pass reads the input files again", "why", fmt.Sprintf("free space of %s unknown: %v", dir, err))
		return nil
	}
	free := int64(st.Bavail) * int64(st.Bsize)
	if free < need+need/10+spillMargin {
		j.log.Warn("no scratch spill: every pass reads the input files again (slower); free disk space or raise --memory-limit to read them once",
			"need", mib(need+need/10+spillMargin), "free", mib(free), "dir", dir)
		return nil
	}
	s := &spillSet{files: map[int]*os.File{}, size: map[int]int64{}}
	for _, pi := range later {
		p := j.passes[pi]
		path := filepath.Join(dir, fmt.Sprintf("spill-%d-%d.tmp", p[0], p[1]))
		f, err := export.CreateScratch(path)
		if err == nil {
			err = export.RemoveFile(path) // unlinked: this process alone holds it
			if err != nil {
				f.Close()
			}
		}
		if err != nil {
			s.close()
			j.log.Warn("no scratch spill: every pass reads the input files again", "why", err.Error())
			return nil
		}
		s.files[pi] = f
	}
	j.log.Info("scratch spill", "passes", len(later), "bytes", need)
	return s
}

// to is the first pass's ReadRange.SpillTo.
func (s *spillSet) to(passes [][2]int) []ingest.SpillOut {
	var out []ingest.SpillOut
	for pi, p := range passes {
		if f := s.files[pi]; f != nil {
			out = append(out, ingest.SpillOut{C0: p[0], C1: p[1], W: &countingWriter{f, s, pi}})
		}
	}
	return out
}

// from is pass pi's ReadRange.SpillFrom (nil: the pass reads the files).
func (s *spillSet) from(pi int) io.Reader {
	if s == nil || s.files[pi] == nil {
		return nil
	}
	return io.NewSectionReader(s.files[pi], 0, s.size[pi])
}

// done closes pass pi's stream once the pass is read.
func (s *spillSet) done(pi int) {
	if s == nil || s.files[pi] == nil {
		return
	}
	s.files[pi].Close()
	delete(s.files, pi)
}

// close closes every stream left (their space is freed: they are unlinked).
func (s *spillSet) close() {
	if s == nil {
		return
	}
	for pi := range s.files {
		s.done(pi)
	}
}

// countingWriter writes a pass's stream and counts its bytes.
type countingWriter struct {
	f  *os.File
	s  *spillSet
	pi int
}

func (w *countingWriter) Write(b []byte) (int, error) {
	n, err := w.f.Write(b)
	w.s.size[w.pi] += int64(n)
	return n, err
}
