package export

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// The one door of the run directory: every folder the tool makes inside a
// run directory is made by MakeDir, which refuses a symbolic link planted
// where the folder goes, and every file is put in place by a rename
// (AtomicFile.Commit, RenameInto) that refuses a link at the final name.
// The run directory itself (--out) may be a link: that is the user's choice.
// Temporary files and folders carry PartialMark in their names
// (".<name>.partial-<random>"), so that a killed run's leftovers are found by
// PartialGlob.

// PartialMark is in the name of every temporary file or folder the tool
// creates in a run directory: ".<final name>" + PartialMark + random.
const PartialMark = ".partial-"

// PartialGlob matches the temporary files and folders of a folder's
// entries (filepath.Glob pattern, relative to the folder).
const PartialGlob = ".*" + PartialMark + "*"

// LinkError is a symbolic link (or another non-folder, non-regular entry)
// found where the tool makes a folder or puts a file in a run directory: it
// is refused, never written through.
type LinkError struct {
	Path string // the entry found
	What string // "a symbolic link", "a file", ...
}

func (e *LinkError) Error() string {
	return fmt.Sprintf("%s is %s where swellgrid writes its own output; swellgrid never writes through it: remove it (or choose another --out) and run again", e.Path, e.What)
}

// IsBadInput marks a LinkError as bad input (exit code 2 in
// pipelines/fault): the run directory's content must change, not the machine.
func (e *LinkError) IsBadInput() bool { return true }

// IsLink reports whether err is (or wraps) a LinkError.
func IsLink(err error) bool {
	var le *LinkError
	return errors.As(err, &le)
}

// MakeDir makes the folder rel (one or more slash-separated components)
// inside the run directory root and returns its path. Every component below
// root is created if missing (mode 0755) and checked with Lstat: a component
// that is a symbolic link or not a folder is refused with a *LinkError, so a
// planted link never leads a write outside the run directory. root itself
// is not checked (it may be a link) and must exist.
func MakeDir(root, rel string) (string, error) {
	path := root
	for _, c := range strings.Split(filepath.ToSlash(rel), "/") {
		if c == "" || c == "." {
			continue
		}
		if c == ".." {
			return "", fmt.Errorf("export: %q leaves the run directory %s", rel, root)
		}
		path = filepath.Join(path, c)
		if err := os.Mkdir(path, 0o755); err != nil && !errors.Is(err, os.ErrExist) {
			return "", fmt.Errorf("export: creating %s: %w", path, err)
		}
		st, err := os.Lstat(path)
		if err != nil {
			return "", fmt.Errorf("export: creating %s: %w", path, err)
		}
		if !st.IsDir() {
			return "", &LinkError{Path: path, What: kindOf(st.Mode())}
		}
	}
	return path, nil
}

// CheckDirs refuses, before anything is computed, a symbolic link (or a
// non-folder) already standing where the tool will make one of the folders
// rels inside the run directory root; a missing folder is fine (MakeDir
// makes and checks it again when it is needed).
func CheckDirs(root string, rels ...string) error {
	for _, rel := range rels {
		path := filepath.Join(root, filepath.FromSlash(rel))
		st, err := os.Lstat(path)
		if errors.Is(err, os.ErrNotExist) {
			continue
		}
		if err != nil {
			return fmt.Errorf("export: %s: %w", path, err)
		}
		if !st.IsDir() {
			return &LinkError{Path: path, What: kindOf(st.Mode())}
		}
	}
	return nil
}

// CheckTarget refuses a final name that is a symbolic link (or anything but
// a regular file or, when dirOK, a folder); a missing name is fine.
func CheckTarget(path string, dirOK bool) error {
	st, err := os.Lstat(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("export: %s: %w", path, err)
	}
	if st.Mode().IsRegular() || (dirOK && st.IsDir()) {
		return nil
	}
	return &LinkError{Path: path, What: kindOf(st.Mode())}
}

// RenameInto renames the finished temporary file (or folder) tmp over
// final after checking that final is not a link (CheckTarget); tmp is
// removed when it is not renamed.
func RenameInto(tmp, final string) error {
	st, err := os.Lstat(tmp)
	dir := err == nil && st.IsDir()
	if err := CheckTarget(final, dir); err != nil {
		os.RemoveAll(tmp)
		return err
	}
	if err := os.Rename(tmp, final); err != nil {
		os.RemoveAll(tmp)
		return fmt.Errorf("export: renaming the finished %s into place: %w", final, err)
	}
	return nil
}

// PartialDir makes a new, uniquely named, private temporary folder
// (".<name>.partial-<random>", mode 0700) in dir for a file that a library
// writes by path (NetCDF-C, SQLite): the file is written at the returned
// path inside it, moved into place by RenameInto(path, final), and the
// folder removed by the returned cleanup (always call it).
func PartialDir(dir, name string) (path string, cleanup func(), err error) {
	tmp, err := os.MkdirTemp(dir, "."+name+PartialMark)
	if err != nil {
		return "", func() {}, fmt.Errorf("export: cannot create a temporary folder for %s in %s (is it writable?): %w", name, dir, err)
	}
	return filepath.Join(tmp, name), func() { os.RemoveAll(tmp) }, nil
}

func kindOf(m os.FileMode) string {
	switch {
	case m&os.ModeSymlink != 0:
		return "a symbolic link"
	case m.IsDir():
		return "a folder"
	case m.IsRegular():
		return "a file"
	case m&os.ModeNamedPipe != 0:
		return "a named pipe"
	case m&os.ModeSocket != 0:
		return "a socket"
	case m&os.ModeDevice != 0:
		return "a device"
	}
	return "a special file"
}
