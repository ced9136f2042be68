package export

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// WriteFileAtomic writes a file through write under a temporary name in the
// same directory as path, flushes it to disk (fsync) and renames it to path only
// when write and every step after it succeeded. On any error (or a panic in
// write) the temporary file is removed, and no file named path is created or
// replaced. The file gets mode 0644.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	return WriteFileAtomicMode(path, 0o644, write)
}

// WriteFileAtomicMode is WriteFileAtomic giving the file the mode perm (a
// script: 0755).
func WriteFileAtomicMode(path string, perm os.FileMode, write func(w io.Writer) error) (err error) {
	f, err := CreateAtomic(path)
	if err != nil {
		return err
	}
	f.mode = perm
	defer f.Abort()
	if err := write(f); err != nil {
		return fmt.Errorf("export: writing %s: %w", path, err)
	}
	return f.Commit()
}

// AtomicFile is a file written under a temporary name (".<name>.partial-*"
// in the directory of its path) that appears under its path only on Commit:
// WriteFileAtomic for a file written over a longer time (a table written
// as its rows come).
type AtomicFile struct {
	path, tmp string // final and temporary names relative to the door
	mode      os.FileMode
	f         *os.File
	bw        *bufio.Writer
	done      bool
	d         *door
	release   func()
}

// CreateAtomic creates the temporary file of path through the door of its
// run directory (see OpenDoor): a new file of a unique name, opened
// O_EXCL (never through a link).
func CreateAtomic(path string) (*AtomicFile, error) {
	if filepath.Base(path) == "" || strings.HasSuffix(path, string(filepath.Separator)) {
		return nil, fmt.Errorf("export: %q names a directory, not a file", path)
	}
	d, rel, release, err := at(path)
	if err != nil {
		return nil, err
	}
	tmp := tempName(filepath.Base(path))
	if dir := filepath.ToSlash(filepath.Dir(rel)); dir != "." {
		tmp = dir + "/" + tmp
	}
	beforeWrite(d.path(tmp))
	f, err := d.root.OpenFile(tmp, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		release()
		return nil, fmt.Errorf("export: cannot create a temporary file for %s (does the output directory exist and is it writable?): %w", path, d.explain(tmp, err))
	}
	return &AtomicFile{path: rel, tmp: tmp, mode: 0o644, f: f, bw: bufio.NewWriterSize(f, 1<<20), d: d, release: release}, nil
}

// Write writes to the temporary file.
func (a *AtomicFile) Write(p []byte) (int, error) { return a.bw.Write(p) }

// Commit flushes the file to disk (fsync) and renames it to its path, unless
// the path is a symbolic link (a *LinkError, see RenameInto). When it fails, the temporary file is removed: nothing is left behind.
func (a *AtomicFile) Commit() error {
	path := a.d.path(a.path)
	if a.done {
		return fmt.Errorf("export: %s: committed or aborted already", path)
	}
	if err := a.commit(path); err != nil {
		a.Abort()
		return err
	}
	return nil
}

func (a *AtomicFile) commit(path string) error {
	if err := a.bw.Flush(); err != nil {
		return fmt.Errorf("export: writing %s: %w", path, err)
	}
	if err := a.f.Chmod(a.mode); err != nil {
		return fmt.Errorf("export: setting the mode of %s: %w", path, err)
	}
	if err := a.f.Sync(); err != nil {
		return fmt.Errorf("export: flushing %s to disk: %w", path, err)
	}
	if err := a.f.Close(); err != nil {
		return fmt.Errorf("export: closing %s: %w", path, err)
	}
	a.done = true
	defer a.release()
	if err := a.d.renameInto(a.tmp, a.path); err != nil {
		return err
	}
	// Make the rename itself durable; not every file system supports a
	// directory fsync, so a failure here is not an error.
	if d, err := a.d.root.Open(filepath.ToSlash(filepath.Dir(a.path))); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// Abort removes the temporary file unless the file was committed; it may be
// called after Commit (a deferred Abort).
func (a *AtomicFile) Abort() {
	if a.done {
		return
	}
	a.done = true
	a.f.Close()
	a.d.root.Remove(a.tmp)
	a.release()
}

// SHA256File returns the SHA-256 digest of the file at path as lower-case hex.
func SHA256File(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", fmt.Errorf("export: checksum of %s: %w", path, err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("export: checksum of %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}
