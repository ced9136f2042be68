package ingest

import (
	"fmt"
	"math"
	"sort"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/grid"
)

// A raw block (ReadRange.Raw) carries each role's slab as read from the file,
// in the file's storage type and order; Block.Cook unpacks, converts and
// scatters one cell range of it into Bulk and Spec. The reader makes only the
// NetCDF calls, and the workers, each owning a cell range, cook their own
// cells in parallel.

// rawNum are the storage types kept as read in a raw slab; other types are
// widened to float64 by the reader (ncVar.readSlab).
type rawNum interface {
	float32 | float64 | int16
}

// rawSlab is one role's hyperslab of one block, as stored in one file.
type rawSlab struct {
	file         int // index into Catalog.Files of the file read
	vi           *VarInfo
	g            *grid.Grid // the catalog's grid in the file's orientation
	invX, invY   []int
	start, count []uint64
	// rows[k] is the block row (time step within the block) of the slab's
	// k-th step.
	rows []int
	f64  []float64
	f32  []float32
	i16  []int16
}

// pendingRole is one role of a raw block: its destination in Bulk or Spec
// and the slab that fills it (nil: no file holds the role for these steps,
// so every value is missing).
type pendingRole struct {
	role Role
	dst  []float64
	per  int // values per (step, cell): NF*ND for spectra, else 1
	slab *rawSlab
}

// Raw reports whether the block still has to be cooked (Block.Cook).
func (b *Block) Raw() bool { return b.pend != nil }

// Cook unpacks (CF 1.8 sections 2.5.1 and 8.1, VarInfo.unpack), converts
// to SI units, turns directions to "from" in [0, 360) and scatters into Bulk
// and Spec, in canonical order, the values of cells lo..hi-1 (canonical ids
// within C0..C1) of a raw block; values no file holds are NaN. Calls for
// disjoint cell ranges may run concurrently; each range is cooked once. It
// adds to t (if not nil) the valid and the physically possible values it
// found in each role of each file. It makes no NetCDF call.
func (b *Block) Cook(lo, hi int, t Tally) {
	if lo < b.C0 || hi > b.C1 || lo >= hi {
		return
	}
	for i := range b.pend {
		p := &b.pend[i]
		var cnt counts
		if p.slab == nil {
			fillNaN(p.dst, b.NT, b.NC(), p.per, lo-b.C0, hi-b.C0, nil)
		} else {
			cnt = p.slab.cook(p.dst, b.NT, b.C0, b.C1, lo, hi, p.per)
		}
		if t != nil && p.slab != nil {
			t.add(TallyKey{File: p.slab.file, Role: p.role}, cnt.valid, cnt.possible(p.role), 0)
		}
	}
}

// counts are what one cook found: valid values, and among them the negative
// and the non-positive ones (for VarInfo role's physical limits).
type counts struct{ valid, neg, nonPos int64 }

// possible is the number of valid values possible for role r: heights and
// spectral densities >= 0, periods > 0 (common practice: the definitions of
// the quantities); every valid direction or depth.
func (c counts) possible(r Role) int64 {
	switch r {
	case Hm0, Spectrum1D, Spectrum2D:
		return c.valid - c.neg
	case Te, Tp:
		return c.valid - c.nonPos
	}
	return c.valid
}

// fillNaN sets to NaN the values of cells k0..k1-1 (block-relative) in every
// block row not in rows (sorted; nil: every row).
func fillNaN(dst []float64, nt, nc, per, k0, k1 int, rows []int) {
	nan := math.NaN()
	j := 0
	for r := 0; r < nt; r++ {
		if j < len(rows) && rows[j] == r {
			j++
			continue
		}
		seg := dst[(r*nc+k0)*per : (r*nc+k1)*per]
		for i := range seg {
			seg[i] = nan
		}
	}
}

func (s *rawSlab) cook(dst []float64, nt, c0, c1, lo, hi, per int) counts {
	fillNaN(dst, nt, c1-c0, per, lo-c0, hi-c0, s.rows)
	switch {
	case s.f32 != nil:
		return cookSlab(s, s.f32, dst, c0, c1, lo, hi, per)
	case s.i16 != nil:
		return cookSlab(s, s.i16, dst, c0, c1, lo, hi, per)
	}
	return cookSlab(s, s.f64, dst, c0, c1, lo, hi, per)
}

// cookSlab is Cook for one slab: plain loops for the common layouts,
// (time, y, x) on grids and (time, station[, frequency[, direction]]) on
// point sets, and an odometer over the slab for any other order.
func cookSlab[T rawNum](s *rawSlab, raw []T, dst []float64, c0, c1, lo, hi, per int) counts {
	vi, g, ax := s.vi, s.g, s.vi.axes
	dirRole := vi.Role == Dir || vi.Role == DirPeak
	nc := c1 - c0
	var cnt counts
	add := func(x float64) {
		if x == x {
			cnt.valid++
			if x < 0 {
				cnt.neg++
			}
			if !(x > 0) {
				cnt.nonPos++
			}
		}
	}
	switch {
	case g.Structured() && per == 1 && len(ax) == 3 && ax[0] == axT && ax[1] == axY && ax[2] == axX:
		ny, nx := int(s.count[1]), int(s.count[2])
		y0 := int(s.start[1])
		for k, r := range s.rows {
			out := dst[r*nc : (r+1)*nc]
			for iy := lo / g.NX; iy <= (hi-1)/g.NX; iy++ {
				base := (k*ny + g.YFile[iy] - y0) * nx
				a, z := max(lo, iy*g.NX), min(hi, (iy+1)*g.NX)
				row := out[a-c0 : z-c0]
				xs := g.XFile[a-iy*g.NX : z-iy*g.NX]
				for i, fx := range xs {
					x, _ := vi.cook(float64(raw[base+fx]), dirRole)
					add(x)
					row[i] = x
				}
			}
		}
		return cnt
	case g.Kind == grid.Points && len(ax) >= 2 && len(ax) <= 4 && ax[0] == axT && ax[1] == axP &&
		int(s.start[1]) == c0 && int(s.count[1]) == nc && trailing(ax, s.count) == per &&
		(len(ax) < 3 || ax[2] == axF) && (len(ax) < 4 || ax[3] == axD):
		for k, r := range s.rows {
			src := raw[(k*nc+lo-c0)*per : (k*nc+hi-c0)*per]
			out := dst[(r*nc+lo-c0)*per : (r*nc+hi-c0)*per]
			for i, v := range src {
				x, _ := vi.cook(float64(v), dirRole)
				add(x)
				out[i] = x
			}
		}
		return cnt
	}
	rank := len(ax)
	nd := 1
	for k, a := range ax {
		if a == axD {
			nd = int(s.count[k])
		}
	}
	idx := make([]int, rank)
	for i := range raw {
		var t, fx, fy, f, d int
		for k, a := range ax {
			switch a {
			case axT:
				t = idx[k]
			case axY:
				fy = idx[k] + int(s.start[k])
			case axX:
				fx = idx[k]
			case axP:
				fx = idx[k] + int(s.start[k])
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
			cell = s.invX[fx]
		default:
			cell = s.invY[fy]*g.NX + s.invX[fx]
		}
		if cell >= lo && cell < hi {
			x, _ := vi.cook(float64(raw[i]), dirRole)
			add(x)
			dst[((s.rows[t]*nc+cell-c0)*(per/nd)+f)*nd+d] = x
		}
		for k := rank - 1; k >= 0; k-- {
			idx[k]++
			if idx[k] < int(s.count[k]) {
				break
			}
			idx[k] = 0
		}
	}
	return cnt
}

// readRaw reads one role's slab for the file's steps t0..t0+nt-1 and the
// cells c0..c1-1, as stored (float, double and short kept in their type,
// other types widened to float64).
func (c *Catalog) readRaw(path string, vi *VarInfo, g *grid.Grid, invX, invY []int, t0, nt, c0, c1 int) (*rawSlab, error) {
	s, total := slabGeom(vi, g, invX, invY, t0, nt, c0, c1)
	v := vi.v
	var err error
	ncMu.Lock()
	switch v.typ {
	case netcdf.FLOAT:
		s.f32, _ = f32Pool.get(total) // every value is read over
		err = v.readTyped(s.f32, s.start, s.count)
	case netcdf.SHORT:
		s.i16, _ = i16Pool.get(total)
		err = v.readTyped(s.i16, s.start, s.count)
	default:
		s.f64 = make([]float64, total)
		err = v.readSlab(path, s.start, s.count, s.f64)
	}
	ncMu.Unlock()
	if err != nil && s.f64 == nil {
		err = fmt.Errorf("ingest: %s: variable %q: read of %v+%v failed: %v; the file may be truncated or corrupt", path, v.name, s.start, s.count, err)
	}
	return s, err
}

// slabGeom is the slab readRaw reads for the file's steps t0..t0+nt-1 and
// the cells c0..c1-1 (its start and count, without values) and its number
// of values.
func slabGeom(vi *VarInfo, g *grid.Grid, invX, invY []int, t0, nt, c0, c1 int) (*rawSlab, int) {
	v := vi.v
	rank := len(v.shape)
	start := make([]uint64, rank)
	count := make([]uint64, rank)
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
	return &rawSlab{vi: vi, g: g, invX: invX, invY: invY, start: start, count: count}, total
}

// TallyKey is one role variable of one input file (an index into
// Catalog.Files).
type TallyKey struct {
	File int
	Role Role
}

// TallyCount is what was read of one role variable of one file: the valid
// (not missing) values, the physically possible ones among them, and the
// number of cells whose every step of the file has been counted.
type TallyCount struct {
	Valid, Possible int64
	Cells           int
}

// Tally counts, per role variable of each input file, what a run has read:
// Block.Cook adds the values of the cells it cooks, Catalog.Settle marks a
// file's counts complete for a cell range once all its steps are read, and
// Catalog.CheckTally refuses a variable that, over all cells, holds no value
// at all or none that is possible. Tallies of disjoint cell ranges (passes,
// shards) add up.
type Tally map[TallyKey]*TallyCount

func (t Tally) add(k TallyKey, valid, possible int64, cells int) {
	c := t[k]
	if c == nil {
		c = &TallyCount{}
		t[k] = c
	}
	c.Valid += valid
	c.Possible += possible
	c.Cells += cells
}

// Add adds every count of o to t.
func (t Tally) Add(o Tally) {
	for k, c := range o {
		t.add(k, c.Valid, c.Possible, c.Cells)
	}
}

// TallyEntry is one count of a Tally as saved (checkpoint headers).
type TallyEntry struct {
	File     int   `json:"file"`
	Role     Role  `json:"role"`
	Valid    int64 `json:"valid"`
	Possible int64 `json:"possible"`
	Cells    int   `json:"cells"`
}

// Entries lists the counts in file and role order.
func (t Tally) Entries() []TallyEntry {
	out := make([]TallyEntry, 0, len(t))
	for k, c := range t {
		out = append(out, TallyEntry{k.File, k.Role, c.Valid, c.Possible, c.Cells})
	}
	sort.Slice(out, func(i, j int) bool {
		if out[i].File != out[j].File {
			return out[i].File < out[j].File
		}
		return roleOrder(out[i].Role) < roleOrder(out[j].Role)
	})
	return out
}

// TallyOf is the tally of saved entries.
func TallyOf(es []TallyEntry) Tally {
	t := Tally{}
	for _, e := range es {
		t.add(TallyKey{e.File, e.Role}, e.Valid, e.Possible, e.Cells)
	}
	return t
}

func roleOrder(r Role) int {
	for i, x := range Roles {
		if x == r {
			return i
		}
	}
	return len(Roles)
}

// Settle moves from pending to done the counts of every role file whose
// steps have all been read for cells c0..c1-1 once segment fi (Read's file
// index) is read, in a read that began at file from, and counts those cells
// for it. Counts of a file read only in part stay pending.
func (c *Catalog) Settle(pending, done Tally, fi, from, c0, c1 int) {
	s0 := 0
	if from < len(c.Files) {
		s0 = c.Files[from].Offset
	}
	s1 := c.Steps
	if fi+1 < len(c.Files) {
		s1 = c.Files[fi+1].Offset
	}
	for k, n := range pending {
		u := c.Files[k.File].uidx
		if len(u) == 0 || u[0] < s0 || u[len(u)-1] >= s1 {
			continue
		}
		done.add(k, n.Valid, n.Possible, c1-c0)
		delete(pending, k)
	}
}

// NoDataError refuses a role variable that holds no value at all, or none
// possible for its role, over every cell of the grid.
type NoDataError struct{ msg string }

func (e *NoDataError) Error() string { return e.msg }

// CheckTally refuses the first role variable (in file and role order) whose
// counts cover every cell of the grid and that holds no valid value, or
// valid values none of which is physically possible (a wrong sign or
// packing), or, for a spectral density, mostly negative values (notDensity).
// Variables not yet counted over every cell pass.
func (c *Catalog) CheckTally(t Tally) error {
	for _, e := range t.Entries() {
		if e.Cells < c.Grid.NCells() || e.File < 0 || e.File >= len(c.Files) {
			continue
		}
		fe := &c.Files[e.File]
		vi := fe.vars[e.Role]
		if vi == nil {
			continue
		}
		if e.Valid == 0 {
			return &NoDataError{errf(fe.Path, vi.Name, "every value is a fill value or missing; the variable holds no data: check the file or map role %s to another variable", e.Role).Error()}
		}
		if (e.Role == Spectrum2D || e.Role == Spectrum1D) && e.Possible > 0 && 2*e.Possible < e.Valid {
			return &NoDataError{vi.notDensity(fe.Path, e.Valid-e.Possible, e.Valid).Error()}
		}
		if e.Possible == 0 {
			why := "check the variable or the role mapping"
			if vi.Packed {
				why = fmt.Sprintf("check the packing attributes (scale_factor %v, add_offset %v; CF 1.8 section 8.1)", vi.Scale, vi.Offset)
			}
			return &NoDataError{errf(fe.Path, vi.Name, "every value is impossible for role %s (%d values, none %s); %s", e.Role, e.Valid, physicalRule(e.Role), why).Error()}
		}
	}
	return nil
}

// notDensity refuses a spectral density most of whose values are negative
// (neg of valid): a variance density is never negative (common practice:
// the definition of the quantity), so the values are not densities as
// read, not bad bins to clip one by one. The likely cause is a logarithm
// stored under the plain standard_name and units (log10 of densities below
// 1 is negative), else the packing.
func (vi *VarInfo) notDensity(path string, neg, valid int64) error {
	enc := vi.Encoding
	if enc == "" {
		enc = Linear
	}
	key := "units." + string(vi.Role) + "_encoding"
	found := quoteAttrs([]attr{{"standard_name", vi.StandardName}, {"long_name", vi.longName}, {"comment", vi.comment}, {"units", vi.Units}})
	why := fmt.Sprintf("the values are most likely logarithms of the density (log10 or ln) under a plain standard_name and units: if so, set %s = \"log10\" (or \"ln\") in the spec", key)
	if enc != Linear {
		why = fmt.Sprintf("they were decoded as %s (%s), which gives no negative value: check the encoding", enc, key)
	}
	if vi.Packed {
		why += fmt.Sprintf("; else check the packing attributes (scale_factor %v, add_offset %v; CF 1.8 section 8.1)", vi.Scale, vi.Offset)
	}
	return errf(path, vi.Name, "%d of %d values (%.1f%%) of the spectral density are negative, read as %s (%s); a variance density is never negative, so these are not densities and are not clipped bin by bin: %s",
		neg, valid, 100*float64(neg)/float64(valid), enc, found, why)
}
