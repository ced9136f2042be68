package export

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
)

// The one door of the run directory: every file and folder the tool makes
// inside a run directory is created, checked and renamed through an
// os.Root opened on the run directory (OpenDoor), so that no path
// component the tool makes can lead outside it, even when a link is planted
// between a check and the write: os.Root resolves every component relative
// to the directory's handle (openat) and refuses one that leaves it.
// On top of that, MakeDir refuses a symbolic link standing where a folder
// goes, and a rename (AtomicFile.Commit, RenameInto) refuses a link at the
// final name, each with a *LinkError (exit code 2) naming it.
// The run directory itself (--out) may be a link: that is the user's
// choice, and the door is opened through it once.
// Temporary files and folders have unique names carrying PartialMark
// (".<name>.partial-<random>"), so that a killed run's leftovers are found
// by PartialGlob.
//
// A path written while no door of a run directory holding it is open (a
// Slurm script in --script-dir, a test) goes through a root opened on its
// own folder: its last component is still created and renamed without
// following links.

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

// door is an open run directory: its root and how many users hold it.
type door struct {
	dir  string // absolute, cleaned (lexically: a link at --out is kept)
	root *os.Root
	refs int
}

var doors = struct {
	sync.Mutex
	m map[string]*door
}{m: map[string]*door{}}

// BeforeWrite, when set (by tests only), is called with the final path
// just before a file or folder is created or renamed into place there,
// after its checks: a test plants a link at that moment to prove that the
// write cannot follow it.
var BeforeWrite func(path string)

func beforeWrite(path string) {
	if BeforeWrite != nil {
		BeforeWrite(path)
	}
}

func absClean(p string) (string, error) {
	if strings.IndexByte(p, 0) >= 0 {
		return "", fmt.Errorf("export: the path %q holds a NUL byte", p)
	}
	a, err := filepath.Abs(p)
	if err != nil {
		return "", fmt.Errorf("export: %s: %w", p, err)
	}
	return a, nil
}

// OpenDoor opens the run directory dir (which must exist; it may be a
// link) as the door of every write below it until the returned close is
// called. Doors nest: a second OpenDoor of the same directory shares the
// first's handle.
func OpenDoor(dir string) (func(), error) {
	abs, err := absClean(dir)
	if err != nil {
		return nil, err
	}
	doors.Lock()
	defer doors.Unlock()
	d := doors.m[abs]
	if d == nil {
		r, err := os.OpenRoot(abs)
		if err != nil {
			return nil, fmt.Errorf("export: opening the output directory %s: %w", dir, err)
		}
		d = &door{dir: abs, root: r}
		doors.m[abs] = d
	}
	d.refs++
	var once sync.Once
	return func() { once.Do(func() { d.release(true) }) }, nil
}

// release drops one hold of d; the last closes its root (and unregisters it
// when registered).
func (d *door) release(registered bool) {
	if !registered {
		d.root.Close()
		return
	}
	doors.Lock()
	defer doors.Unlock()
	d.refs--
	if d.refs == 0 {
		if doors.m[d.dir] == d {
			delete(doors.m, d.dir)
		}
		d.root.Close()
	}
}

// at finds the door through which path is written: the innermost open run
// directory holding it, or else a root on path's own folder (or, when
// path is such a root's name itself, on path). It returns the door, path
// relative to it ("." for the directory itself, slash-separated) and
// the release of the hold.
func at(path string) (*door, string, func(), error) {
	abs, err := absClean(path)
	if err != nil {
		return nil, "", nil, err
	}
	doors.Lock()
	var best *door
	for dir, d := range doors.m {
		if (abs == dir || strings.HasPrefix(abs, dir+string(filepath.Separator)) || dir == "/") && (best == nil || len(dir) > len(best.dir)) {
			best = d
		}
	}
	if best != nil {
		best.refs++
		doors.Unlock()
		rel, err := filepath.Rel(best.dir, abs)
		if err != nil {
			best.release(true)
			return nil, "", nil, err
		}
		return best, filepath.ToSlash(rel), func() { best.release(true) }, nil
	}
	doors.Unlock()
	parent := filepath.Dir(abs)
	r, err := os.OpenRoot(parent)
	if err != nil {
		return nil, "", nil, fmt.Errorf("export: cannot open the folder %s (does it exist?): %w", parent, err)
	}
	d := &door{dir: parent, root: r, refs: 1}
	return d, filepath.Base(abs), func() { d.release(false) }, nil
}

// path is rel's path as the user sees it (under the run directory as given).
func (d *door) path(rel string) string { return filepath.Join(d.dir, filepath.FromSlash(rel)) }

// explain turns an error of a root operation on rel into a *LinkError naming
// the first component of rel that is a link (or not a folder) when there
// is one: os.Root refuses a component that leads outside the run directory,
// and that component is what the user must remove.
func (d *door) explain(rel string, err error) error {
	cs := strings.Split(rel, "/")
	for i := range cs {
		p := strings.Join(cs[:i+1], "/")
		st, lerr := d.root.Lstat(p)
		if lerr != nil {
			break
		}
		if st.Mode()&os.ModeSymlink != 0 || (i < len(cs)-1 && !st.IsDir()) {
			return &LinkError{Path: d.path(p), What: kindOf(st.Mode())}
		}
	}
	return err
}

// MakeDir makes the folder rel (one or more slash-separated components)
// inside the run directory root and returns its path. Every component below
// root is created through the door if missing (mode 0755) and checked with
// Lstat: a component that is a symbolic link or not a folder is refused
// with a *LinkError, so a planted link never leads a write outside the run
// directory. root itself is not checked (it may be a link) and must exist.
func MakeDir(root, rel string) (string, error) {
	d, base, release, err := at(filepath.Join(root, "x"))
	if err != nil {
		return "", err
	}
	defer release()
	prefix := strings.TrimSuffix(strings.TrimSuffix(base, "x"), "/")
	path := root
	for _, c := range strings.Split(filepath.ToSlash(rel), "/") {
		if c == "" || c == "." {
			continue
		}
		if c == ".." {
			return "", fmt.Errorf("export: %q leaves the run directory %s", rel, root)
		}
		path = filepath.Join(path, c)
		if prefix == "" {
			prefix = c
		} else {
			prefix += "/" + c
		}
		beforeWrite(path)
		if err := d.root.Mkdir(prefix, 0o755); err != nil && !errors.Is(err, os.ErrExist) {
			return "", fmt.Errorf("export: creating %s: %w", path, d.explain(prefix, err))
		}
		st, err := d.root.Lstat(prefix)
		if err != nil {
			return "", fmt.Errorf("export: creating %s: %w", path, d.explain(prefix, err))
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
	d, rel, release, err := at(path)
	if err != nil {
		return err
	}
	defer release()
	return d.checkTarget(rel, dirOK)
}

func (d *door) checkTarget(rel string, dirOK bool) error {
	st, err := d.root.Lstat(rel)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("export: %s: %w", d.path(rel), d.explain(rel, err))
	}
	if st.Mode().IsRegular() || (dirOK && st.IsDir()) {
		return nil
	}
	return &LinkError{Path: d.path(rel), What: kindOf(st.Mode())}
}

// RenameInto renames the finished temporary file (or folder) tmp over
// final, both in the same run directory, through its door after checking
// that final is not a link (CheckTarget); tmp is removed when it is not
// renamed.
func RenameInto(tmp, final string) error {
	d, rel, release, err := at(final)
	if err != nil {
		os.RemoveAll(tmp)
		return err
	}
	defer release()
	atmp, err := absClean(tmp)
	if err != nil {
		return err
	}
	relTmp, err := filepath.Rel(d.dir, atmp)
	if err != nil || relTmp == ".." || strings.HasPrefix(relTmp, "../") {
		os.RemoveAll(tmp)
		return fmt.Errorf("export: %s is not in the folder of %s", tmp, final)
	}
	return d.renameInto(filepath.ToSlash(relTmp), rel)
}

func (d *door) renameInto(relTmp, rel string) error {
	st, err := d.root.Lstat(relTmp)
	dir := err == nil && st.IsDir()
	if err := d.checkTarget(rel, dir); err != nil {
		d.root.RemoveAll(relTmp)
		return err
	}
	beforeWrite(d.path(rel))
	if err := d.root.Rename(relTmp, rel); err != nil {
		d.root.RemoveAll(relTmp)
		return fmt.Errorf("export: renaming the finished %s into place: %w", d.path(rel), d.explain(rel, err))
	}
	return nil
}

// tempName is ".<name>.partial-<random>".
func tempName(name string) string {
	var b [8]byte
	rand.Read(b[:])
	return "." + name + PartialMark + hex.EncodeToString(b[:])
}

// Partial is a new, uniquely named, private temporary folder
// (".<name>.partial-<random>", mode 0700) made through the door, for what
// a library writes by path (NetCDF-C and SQLite write File(); the report
// writes its pages under Dir): CommitFile or CommitFolder moves the result
// into place, Close removes what is left (always call it).
//
// Why a write by path there is safe: the folder is new (Mkdir fails on
// anything standing at its random name, a planted link included) and
// private (0700: no other user can plant anything in it), and Dir reaches
// it through its open handle (/proc/self/fd/N), not through the run
// directory's names: renaming the folder away and planting a link at its
// name does not redirect the write, and CommitFile renames from that
// handle (renameat). Where /proc is not mounted, Dir is the folder's name
// in the run directory (then only someone who may write in the run
// directory itself could redirect it).
type Partial struct {
	Dir     string // where to write (through the handle when /proc is there)
	name    string
	d       *door
	rel     string // the folder, relative to the door ("" once committed)
	f       *os.File
	release func()
}

// NewPartial makes the private temporary folder for name (a file or a
// folder) in the run directory's folder dir.
func NewPartial(dir, name string) (*Partial, error) {
	d, rel, release, err := at(filepath.Join(dir, name))
	if err != nil {
		return nil, err
	}
	relDir := filepath.ToSlash(filepath.Dir(rel))
	tmpRel := tempName(name)
	if relDir != "." {
		tmpRel = relDir + "/" + tmpRel
	}
	beforeWrite(d.path(tmpRel))
	if err := d.root.Mkdir(tmpRel, 0o700); err != nil {
		release()
		return nil, fmt.Errorf("export: cannot create a temporary folder for %s in %s (is it writable?): %w", name, dir, d.explain(tmpRel, err))
	}
	f, err := d.root.Open(tmpRel)
	if err != nil {
		d.root.Remove(tmpRel)
		release()
		return nil, fmt.Errorf("export: %s: %w", d.path(tmpRel), err)
	}
	p := &Partial{Dir: d.path(tmpRel), name: name, d: d, rel: tmpRel, f: f, release: release}
	via := fmt.Sprintf("/proc/self/fd/%d", f.Fd())
	if st, err := os.Stat(via); err == nil {
		if fst, err := f.Stat(); err == nil && os.SameFile(st, fst) {
			p.Dir = via
		}
	}
	return p, nil
}

// File is the path at which the file name is written.
func (p *Partial) File() string { return filepath.Join(p.Dir, p.name) }

// finalRel is final relative to p's door.
func (p *Partial) finalRel(final string) (string, error) {
	a, err := absClean(final)
	if err != nil {
		return "", err
	}
	rel, err := filepath.Rel(p.d.dir, a)
	if err != nil || rel == ".." || strings.HasPrefix(rel, "../") {
		return "", fmt.Errorf("export: %s is not in the run directory %s", final, p.d.dir)
	}
	return filepath.ToSlash(rel), nil
}

// CommitFile renames the finished file (File) over final, a name in the
// same run directory, after checking that final is not a link: from the
// folder's handle to final's folder opened through the door (renameat).
func (p *Partial) CommitFile(final string) error {
	rel, err := p.finalRel(final)
	if err != nil {
		return err
	}
	if err := p.d.checkTarget(rel, false); err != nil {
		return err
	}
	beforeWrite(p.d.path(rel))
	parent, err := p.d.root.Open(filepath.ToSlash(filepath.Dir(rel)))
	if err != nil {
		return fmt.Errorf("export: %s: %w", final, p.d.explain(rel, err))
	}
	defer parent.Close()
	if err := syscall.Renameat(int(p.f.Fd()), p.name, int(parent.Fd()), filepath.Base(rel)); err != nil {
		return fmt.Errorf("export: renaming the finished %s into place: %w", final, p.d.explain(rel, err))
	}
	if st, err := p.d.root.Lstat(rel); err != nil || !st.Mode().IsRegular() {
		return fmt.Errorf("export: %s is not the file just written", final)
	}
	return nil
}

// CommitFolder makes the folder mode 0755 and renames it over final (a
// folder of the same run directory): an earlier folder at final is moved
// aside to final+".old" first and removed after; a link at either name is
// refused.
func (p *Partial) CommitFolder(final string) error {
	rel, err := p.finalRel(final)
	if err != nil {
		return err
	}
	d := p.d
	if err := p.f.Chmod(0o755); err != nil {
		return fmt.Errorf("export: %s: %w", d.path(p.rel), err)
	}
	old := rel + ".old"
	if err := d.checkTarget(rel, true); err != nil {
		return err
	}
	if err := d.checkTarget(old, true); err != nil {
		return err
	}
	d.root.RemoveAll(old)
	if st, err := d.root.Lstat(rel); err == nil && st.IsDir() {
		beforeWrite(d.path(old))
		if err := d.root.Rename(rel, old); err != nil {
			return fmt.Errorf("export: moving the earlier %s aside: %w", d.path(rel), d.explain(old, err))
		}
	}
	if err := d.checkTarget(rel, false); err != nil {
		return err
	}
	beforeWrite(d.path(rel))
	if err := d.root.Rename(p.rel, rel); err != nil {
		return fmt.Errorf("export: renaming the finished %s into place: %w", d.path(rel), d.explain(rel, err))
	}
	p.rel = ""
	d.root.RemoveAll(old)
	return nil
}

// Close removes the folder (with what is left in it) unless it was
// committed, and releases its handle.
func (p *Partial) Close() {
	if p.f == nil {
		return
	}
	if p.rel != "" {
		p.d.root.RemoveAll(p.rel)
	}
	p.f.Close()
	p.f = nil
	p.release()
}

// RemovePartials removes, through the door and without following links,
// the leftovers (PartialGlob) of a killed run in the folder rel of the run
// directory dir; it returns their names.
func RemovePartials(dir, rel string) ([]string, error) {
	d, r, release, err := at(filepath.Join(dir, filepath.FromSlash(rel), "x"))
	if err != nil {
		return nil, err
	}
	defer release()
	folder := strings.TrimSuffix(strings.TrimSuffix(r, "x"), "/")
	if folder == "" {
		folder = "."
	}
	if st, err := d.root.Lstat(folder); folder != "." && (err != nil || !st.IsDir()) {
		return nil, nil // missing, or a link (refused where the tool writes)
	}
	f, err := d.root.Open(folder)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, nil
		}
		return nil, fmt.Errorf("export: %s: %w", d.path(folder), d.explain(folder, err))
	}
	names, err := f.Readdirnames(-1)
	f.Close()
	if err != nil {
		return nil, fmt.Errorf("export: %s: %w", d.path(folder), err)
	}
	var removed []string
	for _, n := range names {
		if ok, _ := filepath.Match(PartialGlob, n); !ok {
			continue
		}
		p := n
		if folder != "." {
			p = folder + "/" + n
		}
		if err := d.root.RemoveAll(p); err != nil {
			return removed, fmt.Errorf("export: removing the leftover %s: %w", d.path(p), err)
		}
		removed = append(removed, d.path(p))
	}
	return removed, nil
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

// LinkInto puts a hard link to the file src at dst (a name in a run
// directory) atomically: the link gets a unique temporary name in dst's
// folder, opened through the door (the link is made through the folder's
// handle, /proc/self/fd/N, where /proc is mounted), and is renamed over a
// dst that is not a link. It fails (and leaves nothing) where the file
// system has no hard links across these folders; the caller then copies.
func LinkInto(src, dst string) error {
	d, rel, release, err := at(dst)
	if err != nil {
		return err
	}
	defer release()
	relDir := filepath.ToSlash(filepath.Dir(rel))
	beforeWrite(d.path(rel))
	parent, err := d.root.Open(relDir)
	if err != nil {
		return fmt.Errorf("export: %s: %w", d.path(relDir), d.explain(relDir, err))
	}
	defer parent.Close()
	name := tempName(filepath.Base(rel))
	tmpRel := name
	if relDir != "." {
		tmpRel = relDir + "/" + name
	}
	via := filepath.Join(fmt.Sprintf("/proc/self/fd/%d", parent.Fd()), name)
	if _, err := os.Stat(filepath.Dir(via)); err != nil {
		via = d.path(tmpRel)
	}
	if err := os.Link(src, via); err != nil {
		return err
	}
	return d.renameInto(tmpRel, rel)
}

// CreateExclusive creates the new file path (mode 0644) through the door
// of its run directory, failing with an error satisfying os.IsExist when
// anything (a link included) stands at its name: a lock file.
func CreateExclusive(path string) (*os.File, error) {
	d, rel, release, err := at(path)
	if err != nil {
		return nil, err
	}
	defer release()
	beforeWrite(path)
	f, err := d.root.OpenFile(rel, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil && !os.IsExist(err) {
		return nil, d.explain(rel, err)
	}
	return f, err
}

// CreateScratch creates the new file path (mode 0600, read and write)
// through the door of its run directory, failing when anything (a link
// included) stands at its name: a scratch file, which the caller removes
// (RemoveFile) and keeps using through the handle.
func CreateScratch(path string) (*os.File, error) {
	d, rel, release, err := at(path)
	if err != nil {
		return nil, err
	}
	defer release()
	beforeWrite(path)
	f, err := d.root.OpenFile(rel, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return nil, d.explain(rel, err)
	}
	return f, nil
}

// RemoveFile removes the file path (a lock) through the door of its run
// directory: a link standing at one of its folders is not followed (the
// removal is refused naming it), so nothing outside the run directory is
// removed; a link at path itself is removed, not its target.
func RemoveFile(path string) error {
	d, rel, release, err := at(path)
	if err != nil {
		return err
	}
	defer release()
	if err := d.root.Remove(rel); err != nil && !errors.Is(err, os.ErrNotExist) {
		return d.explain(rel, err)
	}
	return nil
}

// CheckOutputs refuses, right after the lock is taken and before anything
// is computed, a link (or another non-regular entry) standing at one of
// the fixed names files, or a non-folder at one of the folders dirs, that a
// command is about to write in the run directory root (CheckTarget,
// CheckDirs); missing names are fine. The checks are repeated at each write.
func CheckOutputs(root string, dirs, files []string) error {
	if err := CheckDirs(root, dirs...); err != nil {
		return err
	}
	for _, f := range files {
		if err := CheckTarget(filepath.Join(root, filepath.FromSlash(f)), false); err != nil {
			return err
		}
	}
	return nil
}
