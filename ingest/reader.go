package ingest

import (
	"context"
	"fmt"
	"math"
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
	// where missing; directions in degrees "from".
	Bulk map[Role][]float64
	// Spec holds the spectra as [((t*(C1-C0) + c)*NF + f)*ND + d] in m2/Hz/rad
	// (ND = 1 and m2/Hz for 1-D spectra), frequencies and directions in the
	// order of Catalog.Spectral; NaN where missing.
	Spec   []float64
	NF, ND int
	// LastOfFile is true on the last block of a file.
	LastOfFile bool
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
	if r.Sample > 0 {
		r.MaxSteps = r.Sample
	}
	if r.Stats != nil {
		t0, w0 := time.Now(), r.Stats.Wait
		defer func() { r.Stats.Busy += time.Since(t0) - (r.Stats.Wait - w0) }()
	}
	for fi := r.FromFile; fi < len(c.Files); fi++ {
		if err := c.readFile(ctx, fi, r, out); err != nil {
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
func (c *Catalog) readFile(ctx context.Context, fi int, r ReadRange, out chan<- *Block) error {
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
		ncMu.Unlock()
	}()
	t0 := c.times[s0]
	for _, role := range sortedRoles(c.roleFiles) {
		for _, j := range c.roleFiles[role] {
			fe := &c.Files[j]
			if fe.First > t0 || fe.Last < t0 {
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
	valid := map[Role]int{}
	g := c.Grid
	nc := r.C1 - r.C0
	var nf, nd int
	if c.Spectral != nil {
		nf, nd = len(c.Spectral.FreqHz), max(1, len(c.Spectral.DirDeg))
	}
	var scratch, rows []float64 // the raw slab and unaligned rows, reused across blocks and roles
	if r.Sample > 0 {
		s1 = min(s1, s0+r.Sample)
	}
	for b0 := s0; b0 < s1; b0 += r.MaxSteps {
		nt := min(r.MaxSteps, s1-b0)
		b := &Block{File: fi, Step0: b0, NT: nt, Times: c.times[b0 : b0+nt], C0: r.C0, C1: r.C1,
			Bulk: map[Role][]float64{}, NF: nf, ND: nd, LastOfFile: b0+nt >= s1}
		for _, role := range Roles {
			if c.roleFiles[role] == nil {
				continue
			}
			spec := role == Spectrum2D || role == Spectrum1D
			per := 1
			if spec {
				per = nf * nd
			}
			dst := make([]float64, nt*nc*per)
			for i := range dst {
				dst[i] = math.NaN()
			}
			if src, ok := sources[role]; ok {
				// The source's steps within this block, k0..k1-1.
				u := c.Files[src.fi].uidx
				k0 := sort.SearchInts(u, b0)
				k1 := sort.SearchInts(u, b0+nt)
				if k1 > k0 {
					row := nc * per
					var n int
					var err error
					if u[k1-1]-u[k0] == k1-1-k0 {
						// Contiguous in the record (the common case): read in place.
						n, err = c.gather(c.Files[src.fi].Path, src.vi, src.g, src.invX, src.invY, k0, k1-k0, r.C0, r.C1, dst[(u[k0]-b0)*row:(u[k1-1]-b0+1)*row], per, &scratch)
					} else {
						if cap(rows) < (k1-k0)*row {
							rows = make([]float64, (k1-k0)*row)
						}
						tmp := rows[:(k1-k0)*row]
						n, err = c.gather(c.Files[src.fi].Path, src.vi, src.g, src.invX, src.invY, k0, k1-k0, r.C0, r.C1, tmp, per, &scratch)
						for k := k0; k < k1; k++ {
							copy(dst[(u[k]-b0)*row:(u[k]-b0+1)*row], tmp[(k-k0)*row:(k-k0+1)*row])
						}
					}
					if err != nil {
						return err
					}
					valid[role] += n
				}
			}
			if spec {
				b.Spec = dst
			} else {
				b.Bulk[role] = dst
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
	for _, role := range sortedRoles(sources) {
		src := sources[role]
		fe := &c.Files[src.fi]
		whole := fe.uidx[0] >= s0 && fe.uidx[len(fe.uidx)-1] < s1
		if valid[role] == 0 && whole && r.C0 == 0 && r.C1 == g.NCells() {
			return errf(fe.Path, src.vi.Name, "every value is a fill value or missing; the variable holds no data")
		}
	}
	return nil
}

// gather reads one role for steps t0..t0+nt-1 and cells c0..c1-1 and scatters
// the unpacked values into dst in canonical order; it returns the number of
// valid values. scratch holds the raw slab between calls.
func (c *Catalog) gather(path string, vi *VarInfo, g *grid.Grid, invX, invY []int, t0, nt, c0, c1 int, dst []float64, per int, scratch *[]float64) (int, error) {
	v := vi.v
	rank := len(v.shape)
	start := make([]uint64, rank)
	count := make([]uint64, rank)
	// Spatial extent in file indices.
	var y0, y1 int
	p0, p1 := c0, c1 // file range of a point set or mesh
	if g.Kind == grid.MeshKind {
		// A mesh's cells (Hilbert order) come from the file range that
		// holds them; compact when the file's order is spatially coherent.
		p0, p1 = math.MaxInt, -1
		for _, fx := range g.XFile[c0:c1] {
			p0, p1 = min(p0, fx), max(p1, fx+1)
		}
	}
	if g.Structured() {
		iy0, iy1 := c0/g.NX, (c1-1)/g.NX
		y0, y1 = math.MaxInt, -1
		for iy := iy0; iy <= iy1; iy++ {
			y0, y1 = min(y0, g.YFile[iy]), max(y1, g.YFile[iy])
		}
	}
	for k, ax := range vi.axes {
		switch ax {
		case axT:
			start[k], count[k] = uint64(t0), uint64(nt)
		case axY:
			start[k], count[k] = uint64(y0), uint64(y1-y0+1)
		case axX:
			count[k] = v.shape[k]
		case axP:
			start[k], count[k] = uint64(p0), uint64(p1-p0)
		default:
			count[k] = v.shape[k]
		}
	}
	total := 1
	for _, n := range count {
		total *= int(n)
	}
	if cap(*scratch) < total {
		*scratch = make([]float64, total)
	}
	buf := (*scratch)[:total]
	ncMu.Lock()
	err := v.readSlab(path, start, count, buf)
	ncMu.Unlock()
	if err != nil {
		return 0, err
	}
	if valid, ok := scatterFast(vi, g, invX, invY, start, count, c0, c1, buf, dst, per); ok {
		return valid, nil
	}
	nc := c1 - c0
	nd := 1
	for k, ax := range vi.axes {
		if ax == axD {
			nd = int(count[k])
		}
	}
	// Odometer over the slab in storage order.
	idx := make([]int, rank)
	valid := 0
	dirRole := vi.Role == Dir || vi.Role == DirPeak
	for i := 0; i < total; i++ {
		var t, fx, fy, f, d int
		for k, ax := range vi.axes {
			switch ax {
			case axT:
				t = idx[k]
			case axY:
				fy = idx[k] + int(start[k])
			case axX:
				fx = idx[k]
			case axP:
				fx = idx[k] + int(start[k])
			case axF:
				f = idx[k]
			case axD:
				d = idx[k]
			}
		}
		var cell int
		switch g.Kind {
		case grid.Points:
			cell = fx
		case grid.MeshKind:
			cell = invX[fx]
		default:
			cell = invY[fy]*g.NX + invX[fx]
		}
		if cell >= c0 && cell < c1 {
			x := vi.unpack(buf[i])
			if x == x {
				if dirRole {
					if vi.DirTo {
						x += 180
					}
					x = math.Mod(x, 360)
					if x < 0 {
						x += 360
					}
				}
				valid++
			}
			dst[((t*nc+cell-c0)*(per/nd)+f)*nd+d] = x
		}
		for k := rank - 1; k >= 0; k-- {
			idx[k]++
			if idx[k] < int(count[k]) {
				break
			}
			idx[k] = 0
		}
	}
	return valid, nil
}
