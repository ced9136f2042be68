package rundir

import "sort"

// VerifyAll proves every file the manifest's output_checksums list (size,
// then SHA-256), once: a long-lived reader of the run (`swellgrid serve`)
// calls it at start, and the later reads of those files are not checked
// again. The first damaged file, in path order, is the error.
func (r *Run) VerifyAll() error {
	paths := make([]string, 0, len(r.sums))
	for p := range r.sums {
		paths = append(paths, p)
	}
	sort.Strings(paths)
	for _, p := range paths {
		if err := r.verify(p); err != nil {
			return err
		}
	}
	return nil
}
