package ingest

import (
	"fmt"
	"math"
	"slices"
)

// checkDuplicates compares, for every time held by two files of a role
// (Catalog.Duplicates), the values of the two files over every cell, after
// unpacking and in canonical cell order (NaN equal to NaN). Identical values
// are used once; different values are refused naming both files and the
// time, unless the policy says which file wins (the difference is then
// recorded: Duplicate.Identical false). It makes NetCDF calls: call it with
// ncMu free.
func (c *Catalog) checkDuplicates(policy DuplicatePolicy) error {
	if len(c.Duplicates) == 0 {
		return nil
	}
	defer ncThread()()
	for i := range c.Duplicates {
		if err := c.checkDuplicate(&c.Duplicates[i], policy); err != nil {
			return err
		}
	}
	return nil
}

// checkDuplicate compares one shared time, every role of it, opening each of
// the two files once.
func (c *Catalog) checkDuplicate(d *Duplicate, policy DuplicatePolicy) error {
	fa, err := c.openChecked(d.a)
	if err != nil {
		return err
	}
	defer closeLocked(fa)
	fb, err := c.openChecked(d.b)
	if err != nil {
		return err
	}
	defer closeLocked(fb)
	for _, role := range d.Roles {
		r := Role(role)
		if spec := r == Spectrum2D || r == Spectrum1D; spec && c.axesOf(d.a) != c.axesOf(d.b) {
			// two spectral layouts: no bin-by-bin comparison
			d.Identical = false
			if policy != DuplicatesRefuse {
				continue
			}
			pa, pb := &c.Files[d.a], &c.Files[d.b]
			return fmt.Errorf("ingest: %s and %s both hold time %s for role %s (variable %q) on different spectral axes (%s in the first, %s in the second), so the two spectra cannot be compared bin by bin; remove the step from one file, or set input.duplicate_steps = \"first\" (use %s) or \"last\" (use %s) in the spec",
				PathText(pa.Path), PathText(pb.Path), d.Time, r, pa.vars[r].Name, c.SpectralAxes[pa.axes].binsText(), c.SpectralAxes[pb.axes].binsText(), PathText(pa.Path), PathText(pb.Path))
		}
		same, cell, va, vb, err := c.sameStep(r, d, fa, fb)
		if err != nil {
			return err
		}
		d.Identical = d.Identical && same
		if same || policy != DuplicatesRefuse {
			continue
		}
		pa, pb := &c.Files[d.a], &c.Files[d.b]
		return fmt.Errorf("ingest: %s and %s both hold time %s for role %s (variable %q) with different values (cell %d: %v vs %v); remove the step from one file, or set input.duplicate_steps = \"first\" (use %s) or \"last\" (use %s) in the spec",
			PathText(pa.Path), PathText(pb.Path), d.Time, r, pa.vars[r].Name, cell, va, vb, PathText(pa.Path), PathText(pb.Path))
	}
	return nil
}

// openChecked opens file fi after checking that it is the file the catalog
// saw (Catalog.Unchanged).
func (c *Catalog) openChecked(fi int) (*ncFile, error) {
	ncMu.Lock()
	defer ncMu.Unlock()
	if err := c.Unchanged(fi); err != nil {
		return nil, err
	}
	return openNC(c.Files[fi].Path)
}

func closeLocked(f *ncFile) {
	ncMu.Lock()
	f.close()
	ncMu.Unlock()
}

// sameStep reads the shared time of d for role r from the open files fa
// (d.a) and fb (d.b) and compares them; on a difference it gives the first
// cell that differs and both values (its first value, for a spectrum).
func (c *Catalog) sameStep(r Role, d *Duplicate, fa, fb *ncFile) (same bool, cell int, va, vb float64, err error) {
	per := 1
	if (r == Spectrum2D || r == Spectrum1D) && c.Spectral != nil {
		per = c.SpectralAxes[c.axesOf(d.a)].bins() // both files' axes (checkDuplicate)
	}
	n := c.Grid.NCells()
	chunk := max(1, min(n, (1<<22)/per)) // cells per comparison: at most 4 Mi values a side
	for c0 := 0; c0 < n; c0 += chunk {
		c1 := min(n, c0+chunk)
		xa, err := c.stepValues(d.a, fa, r, d.stamp, c0, c1, per)
		if err != nil {
			return false, 0, 0, 0, err
		}
		xb, err := c.stepValues(d.b, fb, r, d.stamp, c0, c1, per)
		if err != nil {
			return false, 0, 0, 0, err
		}
		for i := range xa {
			if xa[i] != xb[i] && !(math.IsNaN(xa[i]) && math.IsNaN(xb[i])) {
				return false, c0 + i/per, xa[i], xb[i], nil
			}
		}
	}
	return true, 0, 0, 0, nil
}

// stepValues reads the values of role r at time t from f, the open file fi,
// for cells c0..c1-1, unpacked, in canonical order (per values a cell).
func (c *Catalog) stepValues(fi int, f *ncFile, r Role, t Stamp, c0, c1, per int) ([]float64, error) {
	fe := &c.Files[fi]
	k, ok := slices.BinarySearch(fe.times, t)
	if !ok {
		return nil, fmt.Errorf("ingest: internal error: %s holds no time %s", fe.Path, c.Date(t))
	}
	vi := fe.vars[r]
	v := f.find(vi.Name)
	if v == nil {
		return nil, errf(fe.Path, vi.Name, "variable disappeared since the catalog was built; was the file replaced meanwhile?")
	}
	cp := *vi
	cp.v = v
	fg := *c.Grid
	if fe.xFile != nil {
		fg.XFile, fg.YFile = fe.xFile, fe.yFile
	}
	sl, err := c.readRaw(fe.Path, &cp, &fg, invert(fg.XFile), invert(fg.YFile), k, 1, c0, c1)
	if err != nil {
		return nil, err
	}
	sl.rows = []int{0}
	dst := make([]float64, (c1-c0)*per)
	sl.cook(dst, 1, c0, c1, c0, c1, per)
	return dst, nil
}
