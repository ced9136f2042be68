package export

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFileAtomic writes a file through write under a temporary name in the
// same directory as path, flushes it to disk (fsync) and renames it to path only
// when write and every step after it succeeded. On any error (or a panic in
// write) the temporary file is removed, and no file named path is created or
// replaced. The file gets mode 0644.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	if base == "" {
		return fmt.Errorf("export: %q names a directory, not a file", path)
	}
	f, err := os.CreateTemp(dir, "."+base+".partial-*")
	if err != nil {
		return fmt.Errorf("export: cannot create a temporary file for %s (does the output directory exist and is it writable?): %w", path, err)
	}
	tmp := f.Name()
	done := false
	defer func() {
		if !done {
			f.Close()
			os.Remove(tmp)
		}
	}()
	bw := bufio.NewWriterSize(f, 1<<20)
	if err := write(bw); err != nil {
		return fmt.Errorf("export: writing %s: %w", path, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("export: writing %s: %w", path, err)
	}
	if err := f.Chmod(0o644); err != nil {
		return fmt.Errorf("export: setting the mode of %s: %w", path, err)
	}
	if err := f.Sync(); err != nil {
		return fmt.Errorf("export: flushing %s to disk: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("export: closing %s: %w", path, err)
	}
	if err := os.Rename(tmp, path); err != nil {
		return fmt.Errorf("export: renaming the finished %s into place: %w", path, err)
	}
	done = true
	// Make the rename itself durable; not every file system supports a
	// directory fsync, so a failure here is not an error.
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
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
