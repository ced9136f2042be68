package pipelines

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"

	"swellgrid/export"
	"swellgrid/ingest"
)

// stateDir is the run directory's folder for checkpoints and the lock.
const stateDir = ".swellgrid"

var ckMagic = []byte("SWGCKPT1")

// inputID identifies one input file for resuming: a checkpoint is only
// resumed over the same files, unchanged.
type inputID struct {
	Path  string `json:"path"`
	Size  int64  `json:"size"`
	MTime int64  `json:"mtime_ns"`
}

type ckHeader struct {
	Fingerprint string    `json:"spec_fingerprint"`
	Inputs      []inputID `json:"inputs"`
	C0          int       `json:"c0"`
	C1          int       `json:"c1"`
	NextFile    int       `json:"next_file"`
}

func inputIDs(cat *ingest.Catalog) ([]inputID, error) {
	out := make([]inputID, len(cat.Files))
	for i, f := range cat.Files {
		st, err := os.Stat(f.Path)
		if err != nil {
			return nil, fmt.Errorf("input %s: %v", f.Path, err)
		}
		out[i] = inputID{Path: f.Path, Size: st.Size(), MTime: st.ModTime().UnixNano()}
	}
	return out, nil
}

func ckPath(out string, c0, c1 int) string {
	return filepath.Join(out, stateDir, fmt.Sprintf("pass-%d-%d.ckpt", c0, c1))
}

// saveCheckpoint writes the states of cells c0..c1-1 atomically.
func saveCheckpoint(path string, h ckHeader, cells []*cell) error {
	return export.WriteFileAtomic(path, func(w io.Writer) error {
		bw := bufio.NewWriterSize(w, 1<<20)
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
		}
		return bw.Flush()
	})
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

func readCkHeader(path string) (*ckHeader, *bufio.Reader, *os.File, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, nil, err
	}
	r := bufio.NewReaderSize(f, 1<<20)
	m := make([]byte, len(ckMagic))
	if _, err := io.ReadFull(r, m); err != nil || !bytes.Equal(m, ckMagic) {
		f.Close()
		return nil, nil, nil, fmt.Errorf("checkpoint %s is not a swellgrid checkpoint", path)
	}
	hb, err := readBytes(r)
	if err != nil {
		f.Close()
		return nil, nil, nil, fmt.Errorf("checkpoint %s: %v", path, err)
	}
	var h ckHeader
	if err := json.Unmarshal(hb, &h); err != nil {
		f.Close()
		return nil, nil, nil, fmt.Errorf("checkpoint %s: %v", path, err)
	}
	return &h, r, f, nil
}

// loadCheckpoint restores the states of a pass; newCell makes an empty state
// for a cell id (it carries the configuration and the depth kernel).
func loadCheckpoint(path string, want ckHeader, newCell func(id int) *cell) ([]*cell, int, error) {
	return loadCheckpointTrusting(path, want, 0, newCell)
}

// loadCheckpointTrusting is loadCheckpoint where the first trusted inputs have
// already been verified by content (size and SHA-256, by an update or a
// merge), so their modification times are not compared.
func loadCheckpointTrusting(path string, want ckHeader, trusted int, newCell func(id int) *cell) ([]*cell, int, error) {
	h, r, f, err := readCkHeader(path)
	if err != nil {
		return nil, 0, err
	}
	defer f.Close()
	if why := h.mismatch(want, trusted); why != "" {
		return nil, 0, &resumeRefused{path: path, why: why}
	}
	cells := make([]*cell, h.C1-h.C0)
	for i := range cells {
		flag, err := r.ReadByte()
		if err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: truncated: %v", path, err)
		}
		if flag == 0 {
			continue
		}
		c := newCell(h.C0 + i)
		a, err := readBytes(r)
		if err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: truncated: %v", path, err)
		}
		b, err := readBytes(r)
		if err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: truncated: %v", path, err)
		}
		if err := c.clim.UnmarshalBinary(a); err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: cell %d: %v", path, h.C0+i, err)
		}
		if err := c.col.UnmarshalBinary(b); err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: cell %d: %v", path, h.C0+i, err)
		}
		sp, err := readBytes(r)
		if err != nil {
			return nil, 0, fmt.Errorf("checkpoint %s: truncated: %v", path, err)
		}
		if c.spec != nil {
			if err := c.spec.UnmarshalBinary(sp); err != nil {
				return nil, 0, fmt.Errorf("checkpoint %s: cell %d: %v", path, h.C0+i, err)
			}
		}
		cells[i] = c
	}
	return cells, h.NextFile, nil
}

// resumeRefused says why a checkpoint cannot be resumed.
type resumeRefused struct{ path, why string }

func (e *resumeRefused) Error() string {
	return fmt.Sprintf("cannot resume from %s: %s; rerun with --restart to start over", e.path, e.why)
}

func (h *ckHeader) mismatch(w ckHeader, trusted int) string {
	if h.Fingerprint != w.Fingerprint {
		return "the spec changed since the checkpoint was written"
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
		if i >= len(h.Inputs) || h.Inputs[i] != w.Inputs[i] {
			return fmt.Sprintf("input %s changed (path, size or modification time) since the checkpoint", w.Inputs[i].Path)
		}
	}
	return ""
}

// lockDir takes the run directory's lock: a file holding the pid of the run.
// A lock whose process is gone is taken over.
func lockDir(out string) (func(), error) {
	dir := filepath.Join(out, stateDir)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, &outputErr{fmt.Errorf("output directory %s: %v", out, err)}
	}
	path := filepath.Join(dir, "lock")
	for attempt := 0; attempt < 2; attempt++ {
		f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
		if err == nil {
			fmt.Fprintf(f, "%d\n", os.Getpid())
			f.Close()
			return func() { os.Remove(path) }, nil
		}
		if !os.IsExist(err) {
			return nil, &outputErr{fmt.Errorf("output directory %s: cannot create lock: %v", out, err)}
		}
		b, _ := os.ReadFile(path)
		pid, perr := strconv.Atoi(strings.TrimSpace(string(b)))
		if perr == nil && pid > 0 && syscall.Kill(pid, 0) == nil {
			return nil, &outputErr{fmt.Errorf("output directory %s is in use by another run (pid %d, lock %s); wait for it or choose another --out", out, pid, path)}
		}
		os.Remove(path) // stale: its process is gone
	}
	return nil, &outputErr{fmt.Errorf("output directory %s: cannot take the lock %s", out, path)}
}

// outputErr marks failures of the output directory (exit code 4).
type outputErr struct{ err error }

func (e *outputErr) Error() string { return e.err.Error() }
func (e *outputErr) Unwrap() error { return e.err }

// removePartials deletes the temporary files (".<name>.partial-*", see
// export.WriteFileAtomic) that a run killed while writing left in the run
// directory, its contours folder and its state folder. It runs under the lock,
// so no live run owns them.
func removePartials(out string) {
	for _, d := range []string{out, filepath.Join(out, "contours"), filepath.Join(out, stateDir)} {
		m, _ := filepath.Glob(filepath.Join(d, ".*.partial-*"))
		for _, p := range m {
			os.Remove(p)
		}
	}
}
