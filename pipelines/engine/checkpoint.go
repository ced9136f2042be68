package engine

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"swellgrid/export"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
)

// ckMagic starts every state file; its version (3: the bias-corrected
// state after the spectral one) changes with the layout of a cell.
var ckMagic = []byte("SWGCKPT3")

// inputID identifies one input file for resuming: a checkpoint is only
// resumed over the same files, unchanged.
type inputID struct {
	Path  string `json:"path"` // absolute, ingest.PathText
	Size  int64  `json:"size"`
	MTime int64  `json:"mtime_ns"`
	// SHA256 is the content of a file the checkpoint has read (set for the
	// first NextFile inputs); resume compares it, not the mtime.
	SHA256 string `json:"sha256,omitempty"`
}

type ckHeader struct {
	Fingerprint string    `json:"spec_fingerprint"`
	Inputs      []inputID `json:"inputs"`
	C0          int       `json:"c0"`
	C1          int       `json:"c1"`
	NextFile    int       `json:"next_file"`
	// runspec.Spec is what the fingerprint hashes (the settings and the named
	// files' checksums), so that a refusal can name what changed.
	Spec json.RawMessage `json:"fingerprinted,omitempty"`
	// Seen is what the pass's cells have read of each role variable of each
	// input (ingest.Tally), so that a variable without data is still
	// refused after a resume or a merge of shards.
	Seen []ingest.TallyEntry `json:"seen,omitempty"`

	spec *runspec.Resolved // the spec now (wanted headers only)
}

func inputIDs(cat *ingest.Catalog) ([]inputID, error) {
	out := make([]inputID, len(cat.Files))
	for i, f := range cat.Files {
		st, err := os.Stat(f.Path)
		if err != nil {
			return nil, fmt.Errorf("input %s: %w", f.Path, err)
		}
		out[i] = inputID{Path: ingest.PathText(absPath(f.Path)), Size: st.Size(), MTime: st.ModTime().UnixNano()}
	}
	return out, nil
}

func ckPath(out string, c0, c1 int) string {
	return filepath.Join(out, lock.StateDir, fmt.Sprintf("pass-%d-%d.ckpt", c0, c1))
}

// A checkpoint (and a shard's state file, which is the same) is
//
//	magic "SWGCKPT3" | header (JSON, length-prefixed) | per cell: flag byte,
//	then the climate, extremes, spectral and bias-corrected climate states
//	(length-prefixed; an empty spectral or corrected state has length 0)
//	| SHA-256 of every byte before it (32 bytes)
//
// so that any damage (a flipped byte, a truncation) is found before a state
// is used: a damaged file is refused, never loaded.

// sealSize is the length of the checksum that ends a state file.
const sealSize = sha256.Size

// saveCheckpoint writes the states of cells c0..c1-1 atomically, sealed by
// the SHA-256 of its content.
func saveCheckpoint(path string, h ckHeader, cells []*cell) error {
	return export.WriteFileAtomic(path, func(w io.Writer) error {
		sum := sha256.New()
		bw := bufio.NewWriterSize(io.MultiWriter(w, sum), 1<<20)
		hb, _ := json.Marshal(h)
		bw.Write(ckMagic)
		writeBytes(bw, hb)
		for _, c := range cells {
			if c == nil {
				bw.WriteByte(0)
				continue
			}
			bw.WriteByte(1)
			a, err := c.clim.MarshalBinary()
			if err != nil {
				return err
			}
			b, err := c.col.MarshalBinary()
			if err != nil {
				return err
			}
			writeBytes(bw, a)
			writeBytes(bw, b)
			var sp []byte
			if c.spec != nil {
				sp, _ = c.spec.MarshalBinary()
			}
			writeBytes(bw, sp)
			var cs []byte
			if c.corr != nil {
				if cs, err = c.corr.st.MarshalBinary(); err != nil {
					return err
				}
			}
			writeBytes(bw, cs)
		}
		if err := bw.Flush(); err != nil {
			return err
		}
		_, err := w.Write(sum.Sum(nil))
		return err
	})
}

// damagedState is a state file whose content does not match its seal, or
// that cannot be parsed although it does.
type damagedState struct{ path, why string }

func (e *damagedState) Error() string {
	return fmt.Sprintf("the saved state %s is damaged (%s), so it is not used; rerun with --restart to start over (a shard: rerun it with --restart)", e.path, e.why)
}

// openSealed opens a state file and checks its seal; it returns a reader
// of the content before the seal.
func openSealed(path string) (*bufio.Reader, *os.File, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, nil, err
	}
	n := st.Size() - sealSize
	if n < int64(len(ckMagic)) {
		f.Close()
		return nil, nil, fault.Input(&damagedState{path, fmt.Sprintf("truncated: %d bytes", st.Size())})
	}
	m := make([]byte, len(ckMagic))
	if _, err := io.ReadFull(f, m); err != nil || !bytes.Equal(m, ckMagic) {
		f.Close()
		if bytes.HasPrefix(m, []byte("SWGCKPT")) {
			return nil, nil, fault.Input(&damagedState{path, "not written by this version of swellgrid, or its first bytes are altered"})
		}
		return nil, nil, fault.Input(&damagedState{path, "not a swellgrid state file"})
	}
	sum := sha256.New()
	sum.Write(m)
	if _, err := io.CopyN(sum, f, n-int64(len(m))); err != nil {
		f.Close()
		return nil, nil, fault.Input(&damagedState{path, fmt.Sprintf("cannot be read: %v", err)})
	}
	seal := make([]byte, sealSize)
	if _, err := io.ReadFull(f, seal); err != nil || !bytes.Equal(seal, sum.Sum(nil)) {
		f.Close()
		return nil, nil, fault.Input(&damagedState{path, "its SHA-256 does not match its content: truncated or altered"})
	}
	if _, err := f.Seek(int64(len(m)), io.SeekStart); err != nil {
		f.Close()
		return nil, nil, err
	}
	return bufio.NewReaderSize(io.LimitReader(f, n-int64(len(m))), 1<<20), f, nil
}

func writeBytes(w *bufio.Writer, b []byte) {
	var n [8]byte
	binary.LittleEndian.PutUint64(n[:], uint64(len(b)))
	w.Write(n[:])
	w.Write(b)
}

func readBytes(r *bufio.Reader) ([]byte, error) {
	var n [8]byte
	if _, err := io.ReadFull(r, n[:]); err != nil {
		return nil, err
	}
	l := binary.LittleEndian.Uint64(n[:])
	if l > 1<<32 {
		return nil, errors.New("corrupt length")
	}
	b := make([]byte, l)
	_, err := io.ReadFull(r, b)
	return b, err
}

// readCkHeader opens a state file, checks its seal and reads its header;
// the reader is left at the first cell.
func readCkHeader(path string) (*ckHeader, *bufio.Reader, *os.File, error) {
	r, f, err := openSealed(path)
	if err != nil {
		return nil, nil, nil, err
	}
	hb, err := readBytes(r)
	if err != nil {
		f.Close()
		return nil, nil, nil, fault.Input(&damagedState{path, fmt.Sprintf("header: %v", err)})
	}
	var h ckHeader
	if err := json.Unmarshal(hb, &h); err != nil {
		f.Close()
		return nil, nil, nil, fault.Input(&damagedState{path, fmt.Sprintf("header: %v", err)})
	}
	return &h, r, f, nil
}

// loadCheckpointTrusting restores the states of a pass; newCell makes an
// empty state for a cell id (it carries the configuration and the depth
// kernel). The first trusted inputs have already been verified by content
// (size and SHA-256, by an update or a merge), so their modification times
// are not compared.
func loadCheckpointTrusting(path string, want ckHeader, trusted int, newCell func(id int) *cell) ([]*cell, int, error) {
	cells, h, err := loadState(path, want, trusted, newCell)
	if err != nil {
		return nil, 0, err
	}
	return cells, h.NextFile, nil
}

// loadState is loadCheckpointTrusting giving the checkpoint's header.
func loadState(path string, want ckHeader, trusted int, newCell func(id int) *cell) ([]*cell, *ckHeader, error) {
	r, err := openStates(path, want, trusted, newCell)
	if err != nil {
		return nil, nil, err
	}
	defer r.close()
	cells, err := r.next(r.h.C1 - r.h.C0)
	if err != nil {
		return nil, nil, err
	}
	if err := r.end(); err != nil {
		return nil, nil, err
	}
	return cells, r.h, nil
}

// stateReader reads the cells of a sealed state file a few at a time (a
// merge holds one chunk of a shard's states, not the whole file).
type stateReader struct {
	path    string
	h       *ckHeader
	r       *bufio.Reader
	f       *os.File
	at      int // cells read
	newCell func(id int) *cell
}

// openStates checks a state file's seal and header against want (see
// loadCheckpointTrusting) and returns a reader at its first cell.
func openStates(path string, want ckHeader, trusted int, newCell func(id int) *cell) (*stateReader, error) {
	h, r, f, err := readCkHeader(path)
	if err != nil {
		return nil, err
	}
	if why := h.mismatch(want, trusted); why != "" {
		f.Close()
		return nil, fault.Input(&resumeRefused{path: path, why: why})
	}
	return &stateReader{path: path, h: h, r: r, f: f, newCell: newCell}, nil
}

func (s *stateReader) close() { s.f.Close() }

// next reads the next n cells (nil for a cell without a state).
func (s *stateReader) next(n int) ([]*cell, error) {
	path, h, r := s.path, s.h, s.r
	if s.at+n > h.C1-h.C0 {
		return nil, fmt.Errorf("internal error: %s holds %d cells, asked for %d..%d", path, h.C1-h.C0, s.at, s.at+n-1)
	}
	cells := make([]*cell, n)
	for i := range cells {
		id := h.C0 + s.at + i
		flag, err := r.ReadByte()
		if err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		if flag == 0 {
			continue
		}
		if flag != 1 {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: flag byte %d", id, flag)})
		}
		c := s.newCell(id)
		a, err := readBytes(r)
		if err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		b, err := readBytes(r)
		if err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		if err := c.clim.UnmarshalBinary(a); err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		if err := c.col.UnmarshalBinary(b); err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		sp, err := readBytes(r)
		if err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		if c.spec != nil {
			if err := c.spec.UnmarshalBinary(sp); err != nil {
				return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
			}
		}
		cs, err := readBytes(r)
		if err != nil {
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: %v", id, err)})
		}
		switch {
		case c.corr == nil && len(cs) > 0:
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: a bias-corrected state where this run keeps none", id)})
		case c.corr != nil && len(cs) == 0:
			return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: no bias-corrected state where this run keeps one", id)})
		case c.corr != nil:
			if err := c.corr.st.UnmarshalBinary(cs); err != nil {
				return nil, fault.Input(&damagedState{path, fmt.Sprintf("cell %d: bias-corrected state: %v", id, err)})
			}
		}
		cells[i] = c
	}
	s.at += n
	return cells, nil
}

// end checks that the file holds nothing after its last cell.
func (s *stateReader) end() error {
	if s.at != s.h.C1-s.h.C0 {
		return fmt.Errorf("internal error: %s: %d of %d cells read", s.path, s.at, s.h.C1-s.h.C0)
	}
	if _, err := s.r.ReadByte(); err != io.EOF {
		return fault.Input(&damagedState{s.path, "data beyond the last cell"})
	}
	return nil
}

// resumeRefused says why a checkpoint cannot be resumed.
type resumeRefused struct{ path, why string }

func (e *resumeRefused) Error() string {
	return fmt.Sprintf("cannot resume from %s: %s; rerun with --restart to start over", e.path, e.why)
}

func (h *ckHeader) mismatch(w ckHeader, trusted int) string {
	if h.Fingerprint != w.Fingerprint {
		return "the spec changed since the checkpoint was written (" + fingerprintChanges(h.Spec, w.spec) + ")"
	}
	if h.C0 != w.C0 || h.C1 != w.C1 {
		return "the cell range changed"
	}
	if h.NextFile > len(w.Inputs) {
		return "the checkpoint has read more files than are given now"
	}
	for i := 0; i < h.NextFile; i++ {
		if i < trusted && i < len(h.Inputs) {
			continue
		}
		if i >= len(h.Inputs) {
			return fmt.Sprintf("the checkpoint does not record input %s", w.Inputs[i].Path)
		}
		a, b := h.Inputs[i], w.Inputs[i]
		switch {
		case a.Path != b.Path:
			return fmt.Sprintf("input %d is %s now, %s when the checkpoint was written", i+1, b.Path, a.Path)
		case a.Size != b.Size:
			return fmt.Sprintf("input %s changed size (%d bytes then, %d now) since the checkpoint", b.Path, a.Size, b.Size)
		case a.SHA256 != b.SHA256:
			return fmt.Sprintf("input %s changed content since the checkpoint (SHA-256 %s then, %s now)", b.Path, short(a.SHA256), short(b.SHA256))
		}
	}
	return ""
}

// removePartials deletes the temporary files and folders
// (export.PartialGlob: ".<name>.partial-*", see export.WriteFileAtomic and
// export.Partial) that a run killed while writing left in the run
// directory, its contours folder and its state folder (with its shards'
// folder). It runs under the lock, so no live run owns them, through the
// run directory's door: a link is removed, never followed.
func removePartials(out string) {
	for _, d := range []string{".", export.ContourDir, lock.StateDir, lock.StateDir + "/shards"} {
		export.RemovePartials(out, d)
	}
}
