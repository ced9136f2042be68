package ingest

import (
	"context"
	"fmt"
	"io"
	"sort"
	"time"

	"swellgrid/grid"
)

// Block is a [time x cells] piece of the record: steps Step0..Step0+NT-1 of
// the whole record (all from one file) for cells C0..C1-1 (canonical ids).
type Block struct {
	File   int // index into Catalog.Files
	Step0  int
	NT     int
	Times  []Stamp
	C0, C1 int
	// Bulk holds each bulk role present as [t*(C1-C0) + c], SI units, NaN
	// where missing; directions in degrees "from". In a raw block
	// (ReadRange.Raw) a cell's values are set once Cook has cooked it.
	Bulk map[Role][]float64
	// Spec holds the spectra as [((t*(C1-C0) + c)*NF + f)*ND + d] in m2/Hz/rad
	// (ND = 1 and m2/Hz for 1-D spectra), frequencies and directions in the
	// order of Catalog.SpectralAxes[Axes], the axes of the file the block's
	// spectra come from; NaN where missing.
	Spec   []float64
	NF, ND int
	Axes   int
	// LastOfFile is true on the last block of a file.
	LastOfFile bool

	pend []pendingRole // a raw block's slabs, until Cook (raw.go)
}

// NC is the number of cells of the block.
func (b *Block) NC() int { return b.C1 - b.C0 }

// ReadRange chooses what Read reads.
type ReadRange struct {
	C0, C1   int // cells (canonical ids); C1 = 0 means all
	MaxSteps int // time steps per block (0: 64)
	FromFile int // first file to read (resume)
	// Sample > 0 reads only the first Sample steps of each file (in blocks of
	// Sample steps): a quick look at every file, for inspect.
	Sample int
	// Stats, if not nil, receives the reader's busy and waiting time.
	Stats *ReadStats
	// Raw sends blocks that still hold each role as read (Block.Raw): the
	// receiver unpacks them with Block.Cook, cell range by cell range, and
	// tallies and checks what it found (Catalog.Settle, CheckTally).
	// Otherwise Read cooks every block itself and refuses a role file
	// without data once a full cell range has read all of it.
	Raw bool
	// SpillTo, on the first pass of a run of several, makes Read also read
	// the later passes' cells and write their raw slabs to their streams
	// (spill.go); SpillFrom, on a later pass, makes it take its slabs
	// from the stream the first pass wrote instead of the files. A spilt
	// pass is read from file FromFile = 0 to the end in both.
	SpillTo   []SpillOut
	SpillFrom io.Reader
}

// ReadStats is where the reader's time went: Wait is the time spent blocked
// handing blocks on (the consumers were busy), Busy the rest of Read.
type ReadStats struct {
	Busy, Wait time.Duration
	Blocks     int
}

// Read reads the record in time order and sends blocks on out. It makes
// every NetCDF call of the run and must be called from one goroutine; it
// returns when all blocks are sent, on the first error, or when ctx ends.
func (c *Catalog) Read(ctx context.Context, r ReadRange, out chan<- *Block) error {
	if r.C1 == 0 {
		r.C1 = c.Grid.NCells()
	}
	if r.C0 < 0 || r.C1 > c.Grid.NCells() || r.C0 >= r.C1 {
		return fmt.Errorf("ingest: cell range %d..%d outside the grid's %d cells", r.C0, r.C1, c.Grid.NCells())
	}
	if r.MaxSteps <= 0 {
		r.MaxSteps = 64
	}
	if (r.SpillTo != nil || r.SpillFrom != nil) && (r.FromFile != 0 || r.Sample > 0) {
		return fmt.Errorf("ingest: a spilt pass is read whole, from its first file (asked: from file %d, sample %d)", r.FromFile, r.Sample)
	}
	for _, o := range r.SpillTo {
		if o.C0 < 0 || o.C1 > c.Grid.NCells() || o.C0 >= o.C1 {
			return fmt.Errorf("ingest: spill cell range %d..%d outside the grid's %d cells", o.C0, o.C1, c.Grid.NCells())
		}
	}
	defer DropBlockBuffers()
	if r.Sample > 0 {
		r.MaxSteps = r.Sample
	}
	if r.Stats != nil {
		t0, w0 := time.Now(), r.Stats.Wait
		defer func() { r.Stats.Busy += time.Since(t0) - (r.Stats.Wait - w0) }()
	}
	pending, done := Tally{}, Tally{} // what a cooked read has seen (not Raw)
	for fi := r.FromFile; fi < len(c.Files); fi++ {
		if err := c.readFile(ctx, fi, r, out, pending, done); err != nil {
			return err
		}
	}
	return nil
}

// readFile reads the record's steps Files[fi].Offset .. Files[fi+1].Offset-1
// (the file's segment), each role from the file of that role that holds
// them: the file itself when it carries every role, the files of one month
// when each holds one variable. A role with no file for some steps leaves
// them NaN (missing).
func (c *Catalog) readFile(ctx context.Context, fi int, r ReadRange, out chan<- *Block, pending, done Tally) error {
	s0, s1 := c.Files[fi].Offset, c.Steps
	if fi+1 < len(c.Files) {
		s1 = c.Files[fi+1].Offset
	}
	if c.Files[fi].Static || s1 <= s0 {
		return nil
	}
	defer ncThread()()
	// The source of each role: the file of the role holding step s0.
	type source struct {
		fi         int
		vi         *VarInfo
		g          *grid.Grid // the catalog's grid in this file's orientation
		invX, invY []int
	}
	sources := map[Role]source{}
	opened := map[int]*ncFile{}
	defer func() {
		ncMu.Lock()
		for _, f := range opened {
			f.close()
		}
		trimCHeap() // the file's chunk buffers, freed by the close
		ncMu.Unlock()
	}()
	for _, role := range sortedRoles(c.roleFiles) {
		for _, j := range c.roleFiles[role] {
			fe := &c.Files[j]
			// the file of the role whose steps read (a step shared with the
			// neighbouring file is read from one of them) span step s0
			if len(fe.uidx) == 0 || fe.uidx[0] > s0 || fe.uidx[len(fe.uidx)-1] < s0 {
				continue
			}
			f := opened[j]
			if f == nil {
				ncMu.Lock()
				// The file must be the one the catalog saw, before its first
				// read and (below) after the segment's last: then the values
				// read are of the bytes whose SHA-256 the manifest gives
				// (Catalog.HashFile checks the same stamp).
				if err := c.Unchanged(j); err != nil {
					ncMu.Unlock()
					return err
				}
				var err error
				f, err = openNC(fe.Path)
				ncMu.Unlock()
				if err != nil {
					return err
				}
				opened[j] = f
			}
			vi := fe.vars[role]
			v := f.find(vi.Name)
			if v == nil {
				return errf(fe.Path, vi.Name, "variable disappeared since the catalog was built; was the file replaced during the run?")
			}
			if r.SpillTo == nil {
				// (a spilling pass reads each block's chunks once per
				// pass: the cache keeps them for the later passes' reads)
				ncMu.Lock()
				err := readOnceCache(v, vi.chunks, vi.axes)
				ncMu.Unlock()
				if err != nil {
					return errf(fe.Path, vi.Name, "%v", err)
				}
			}
			cp := *vi
			cp.v = v
			// Each file is read in its own orientation: the catalog's grid
			// holds the canonical cells, the file's axes may run the other way
			// (a latitude descending in one month of an ascending record) or be
			// stored in another order (dimension order is in vi.axes).
			fg := *c.Grid
			if fe.xFile != nil {
				fg.XFile, fg.YFile = fe.xFile, fe.yFile
			}
			sources[role] = source{j, &cp, &fg, invert(fg.XFile), invert(fg.YFile)}
			break
		}
	}
	nc := r.C1 - r.C0
	// The spectra are on the axes of the file they are read from (axes
	// may change between files: spectralaxes.go).
	var nf, nd, axes int
	for _, role := range []Role{Spectrum2D, Spectrum1D} {
		if src, ok := sources[role]; ok {
			axes = c.axesOf(src.fi)
		}
	}
	if c.Spectral != nil {
		sp := c.SpectralAxes[axes]
		nf, nd = len(sp.FreqHz), max(1, len(sp.DirDeg))
	}
	if r.Sample > 0 {
		s1 = min(s1, s0+r.Sample)
	}
	for b0 := s0; b0 < s1; b0 += r.MaxSteps {
		nt := min(r.MaxSteps, s1-b0)
		b := &Block{File: fi, Step0: b0, NT: nt, Times: c.times[b0 : b0+nt], C0: r.C0, C1: r.C1,
			Bulk: map[Role][]float64{}, NF: nf, ND: nd, Axes: axes, LastOfFile: b0+nt >= s1}
		for _, role := range Roles {
			if c.roleFiles[role] == nil {
				continue
			}
			spec := role == Spectrum2D || role == Spectrum1D
			per := 1
			if spec {
				per = nf * nd
			}
			p := pendingRole{role: role, dst: newValues(nt * nc * per), per: per}
			if src, ok := sources[role]; ok {
				// The source's steps within this block, k0..k1-1.
				u := c.Files[src.fi].uidx
				k0 := sort.SearchInts(u, b0)
				k1 := sort.SearchInts(u, b0+nt)
				if k1 > k0 {
					// uidx[k] is the file's step lead+k
					path, t0 := c.Files[src.fi].Path, c.Files[src.fi].lead+k0
					var sl *rawSlab
					var err error
					if r.SpillFrom != nil {
						sl, err = spillRaw(r.SpillFrom, src.vi, src.g, src.invX, src.invY, t0, k1-k0, r.C0, r.C1)
					} else {
						if err = c.spillSlabs(r.SpillTo, path, src.vi, src.g, src.invX, src.invY, t0, k1-k0); err == nil {
							sl, err = c.readRaw(path, src.vi, src.g, src.invX, src.invY, t0, k1-k0, r.C0, r.C1)
						}
					}
					if err != nil {
						return err
					}
					sl.file = src.fi
					sl.rows = make([]int, k1-k0)
					for k := k0; k < k1; k++ {
						sl.rows[k-k0] = u[k] - b0
					}
					p.slab = sl
				}
			}
			if spec {
				b.Spec = p.dst
			} else {
				b.Bulk[role] = p.dst
			}
			b.pend = append(b.pend, p)
		}
		if b.pend == nil {
			b.pend = []pendingRole{}
		}
		if !r.Raw {
			// Cooked here, on the reader's goroutine (tests, inspect, the
			// benchmark's reader); a full-range read refuses a role file
			// without data before handing on the segment's last block.
			b.Cook(r.C0, r.C1, pending)
			b.releaseSlabs()
			if b.LastOfFile {
				c.Settle(pending, done, fi, r.FromFile, r.C0, r.C1)
				if err := c.CheckTally(done); err != nil {
					return err
				}
			}
		}
		if b.LastOfFile {
			// Every value of the segment is read: a file rewritten meanwhile
			// is refused before the last block is used (no state is saved
			// past a segment whose last block was not handed on).
			for _, src := range sources {
				if err := c.Unchanged(src.fi); err != nil {
					return err
				}
			}
		}
		var tw time.Time
		if r.Stats != nil {
			tw = time.Now()
		}
		select {
		case out <- b:
		case <-ctx.Done():
			return ctx.Err()
		}
		if r.Stats != nil {
			r.Stats.Wait += time.Since(tw)
			r.Stats.Blocks++
		}
	}
	return nil
}
