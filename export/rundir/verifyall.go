package rundir

import (
	"fmt"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strings"

	"swellgrid/export/contract"
)

// VerifyAll proves every file the manifest's output_checksums list (size,
// then SHA-256), once: a long-lived reader of the run (`swellgrid serve`)
// calls it at start, and the later reads of those files are not checked
// again. The first damaged file, in path order, is the error.
func (r *Run) VerifyAll() error { return r.VerifyAllBut(nil) }

// VerifyAllBut proves every file the manifest's output_checksums list, as
// VerifyAll, except those for which skip is true: a command that reads a
// finished run (report, screen, validate) calls it before computing, so
// that no damaged or foreign product is read, while the files it is about
// to rewrite (the report, a rebuilt atlas) do not stop it from repairing
// them.
func (r *Run) VerifyAllBut(skip func(rel string) bool) error {
	paths := make([]string, 0, len(r.sums))
	for p := range r.sums {
		if skip == nil || !skip(p) {
			paths = append(paths, p)
		}
	}
	sort.Strings(paths)
	for _, p := range paths {
		if err := r.verify(p); err != nil {
			return err
		}
	}
	return nil
}

// FilesIn lists the files of the run's folder dir (relative to the run,
// slash-separated) whose names end in suffix, sorted: in a sealed run the
// ones its manifest vouches for (a file put there afterwards is no part of
// the run and is not read), in a run without checksums every one there.
// Read them with ReadFile, which verifies them.
func (r *Run) FilesIn(dir, suffix string) ([]string, error) {
	var out []string
	if r.sums != nil {
		for p := range r.sums {
			if path.Dir(p) == dir && strings.HasSuffix(p, suffix) {
				out = append(out, p)
			}
		}
	} else {
		files, err := filepath.Glob(filepath.Join(r.Dir, filepath.FromSlash(dir), "*"+suffix))
		if err != nil {
			return nil, err
		}
		for _, f := range files {
			out = append(out, dir+"/"+filepath.Base(f))
		}
	}
	sort.Strings(out)
	return out, nil
}

// ProveFiles proves the files rels of the finished run in dir without
// reading its tables: the manifest against its seal (ReadManifest), then
// each file against the manifest's output_checksums; a file they do not
// list is refused (nothing vouches for it). A run of an earlier version
// (no checksums, no seal) is not checked.
func ProveFiles(dir string, rels ...string) error {
	b, err := ReadManifest(dir)
	if err != nil {
		return err
	}
	m, err := contract.DecodeManifest(b)
	if err != nil {
		return &DamagedError{Path: filepath.Join(dir, contract.ManifestFile), Why: fmt.Sprintf("cannot be read (%v)", err)}
	}
	if m.OutputChecksums == nil {
		return nil
	}
	r := &Run{Dir: dir, Manifest: m, sums: map[string]contract.FileSum{}, verified: map[string]error{}}
	for _, s := range m.OutputChecksums {
		r.sums[s.Path] = s
	}
	for _, rel := range rels {
		if _, ok := r.sums[rel]; !ok {
			return &DamagedError{Path: filepath.Join(dir, filepath.FromSlash(rel)), Why: "is not among the files the run's manifest vouches for (output_checksums)",
				Fix: "it was put there after the run or its command was interrupted; make it again with the command that writes it"}
		}
		if err := r.verify(rel); err != nil {
			return err
		}
	}
	return nil
}

// ProveSealed proves the files (relative to dir, slash-separated) against
// the seal sealRel that export.SealFiles wrote: each must be listed there
// and have its SHA-256. A missing or malformed seal, a file it does not
// list and a file that differs are refused with a *DamagedError naming the
// file.
func ProveSealed(dir, sealRel string, files ...string) error {
	sealPath := filepath.Join(dir, filepath.FromSlash(sealRel))
	seals, serr := readSeals(sealPath)
	for _, f := range files {
		path := filepath.Join(dir, filepath.FromSlash(f))
		if serr != nil {
			return &DamagedError{Path: path, Why: fmt.Sprintf("has no valid seal (%v)", serr)}
		}
		want, ok := seals[f]
		if !ok {
			return &DamagedError{Path: path, Why: "is not listed in its seal " + sealPath}
		}
		st, err := os.Lstat(path)
		if err != nil {
			return &DamagedError{Path: path, Why: fmt.Sprintf("cannot be checked (%v)", err)}
		}
		if !st.Mode().IsRegular() {
			return &DamagedError{Path: path, Why: "is not a regular file"}
		}
		got, err := sha256Of(path)
		if err != nil {
			return &DamagedError{Path: path, Why: fmt.Sprintf("cannot be checked (%v)", err)}
		}
		if got != want {
			return &DamagedError{Path: path, Why: fmt.Sprintf("differs from its seal %s (SHA-256 %.12s..., the seal's %.12s...): it was changed after it was written", sealPath, got, want)}
		}
	}
	return nil
}
