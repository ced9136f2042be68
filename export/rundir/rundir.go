// Package rundir reads a finished run directory back: the manifest and the
// Parquet tables, as typed columns. It serves the products made from a run
// after its tables are written (the HTML report, the CF raster atlas.nc and
// the GeoPackage atlas.gpkg), so that `swellgrid report DIR` can rebuild them
// without recomputing anything.
//
// rundir knows the file names and columns of the output contract; it never
// computes statistics and never reads NetCDF.
package rundir

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"syscall"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"github.com/apache/arrow/go/v17/parquet/file"
	"github.com/apache/arrow/go/v17/parquet/metadata"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"

	"swellgrid/export/contract"
	"swellgrid/grid"
)

// Kind of values a Column holds.
type Kind int

const (
	Float Kind = iota
	Int
	String
	Bool
)

// Column is one column of a table read back. Float columns hold NaN for
// nulls; Int, String and Bool columns mark nulls with Valid (false = null).
type Column struct {
	Name         string
	Unit         string
	Doc          string
	StandardName string // CF standard_name, where the schema gives one
	CellMethods  string // CF cell_methods, where the schema gives them
	LongName     string // CF long_name, where the schema gives one
	Kind         Kind
	Float        []float64
	Int          []int64
	Str          []string
	Bool         []bool
	Valid        []bool
}

// Numeric reports whether c holds numbers (float or integer).
func (c *Column) Numeric() bool { return c.Kind == Float || c.Kind == Int }

// Value returns row i as a float64 (NaN for null or non-numeric).
func (c *Column) Value(i int) float64 {
	switch c.Kind {
	case Float:
		return c.Float[i]
	case Int:
		if !c.Valid[i] {
			return math.NaN()
		}
		return float64(c.Int[i])
	}
	return math.NaN()
}

// Table is a Parquet table read back, columns in file order.
type Table struct {
	Path    string
	Columns []*Column
	Rows    int
	Meta    map[string]string
	byName  map[string]*Column
}

// Col returns the named column or nil.
func (t *Table) Col(name string) *Column {
	if t == nil {
		return nil
	}
	return t.byName[name]
}

// ReadTable reads every column of the Parquet file at path except the WKB
// geometry.
func ReadTable(path string) (*Table, error) { return readTable(path, nil, nil) }

// ReadColumns reads the named columns of the Parquet file at path (every
// row), so that a table of a large grid is not decoded whole for a few of
// its columns; a name the file lacks is left out (Col gives nil).
func ReadColumns(path string, names ...string) (*Table, error) { return readTable(path, nil, names) }

// ReadCellRows reads the rows of the Parquet file at path whose cell_id is
// cell, every column but the geometry: only the row groups whose cell_id
// statistics (min .. max) include cell are decoded, so that a long table of
// a large grid (written in cell-id order) is not held whole to draw one
// site. A file whose row groups lack cell_id statistics is read whole and
// filtered; one without a cell_id column gives no rows.
func ReadCellRows(path string, cell int64) (*Table, error) { return readTable(path, &cell, nil) }

// rowGroupsOf lists the row groups of rdr whose cell_id statistics include
// cell (nil, false when a row group lacks them: read all).
func rowGroupsOf(rdr *file.Reader, cell int64) ([]int, bool) {
	return cellRanges(rdr).groupsOf(cell)
}

// groupRanges is the cell_id range (statistics min .. max) of each row
// group of a Parquet file; ok false when a row group lacks them.
type groupRanges struct {
	lo, hi []int64
	ok     bool
}

// cellRanges reads the cell_id range of every row group of rdr from its
// footer.
func cellRanges(rdr *file.Reader) groupRanges {
	ci := rdr.MetaData().Schema.ColumnIndexByName(contract.ColCellID)
	if ci < 0 {
		return groupRanges{}
	}
	var g groupRanges
	for i := 0; i < rdr.NumRowGroups(); i++ {
		cc, err := rdr.MetaData().RowGroup(i).ColumnChunk(ci)
		if err != nil {
			return groupRanges{}
		}
		if ok, err := cc.StatsSet(); err != nil || !ok {
			return groupRanges{}
		}
		st, err := cc.Statistics()
		if err != nil {
			return groupRanges{}
		}
		is, ok := st.(*metadata.Int64Statistics)
		if !ok || !is.HasMinMax() {
			return groupRanges{}
		}
		g.lo, g.hi = append(g.lo, is.Min()), append(g.hi, is.Max())
	}
	g.ok = true
	return g
}

// groupsOf lists the row groups whose range includes cell (nil, false
// without ranges: read all).
func (g groupRanges) groupsOf(cell int64) ([]int, bool) {
	if !g.ok {
		return nil, false
	}
	var rgs []int
	for i := range g.lo {
		if g.lo[i] <= cell && cell <= g.hi[i] {
			rgs = append(rgs, i)
		}
	}
	return rgs, true
}

// readTable reads the table at path: every row (cell nil) or those of one
// cell (ReadCellRows), every column (names nil) or the named ones.
func readTable(path string, cell *int64, names []string) (*Table, error) {
	var t *Table
	err := withParquet(path, func(rdr *file.Reader) error {
		rgs := allGroups(rdr)
		if cell != nil {
			if sel, ok := rowGroupsOf(rdr, *cell); ok {
				rgs = sel
			}
		}
		var err error
		if t, err = decodeGroups(path, rdr, names, rgs); err != nil {
			return err
		}
		if cell != nil {
			t.keep(t.RowsOf(contract.ColCellID, *cell))
		}
		return nil
	})
	return t, err
}

// withParquet opens the Parquet file at path for fn. A panic of the Parquet
// reader on a damaged file (a failed page CRC, a bad length) is an error
// (*DamagedError), never a crash.
func withParquet(path string, fn func(rdr *file.Reader) error, opts ...file.ReadOption) (err error) {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("rundir: %w", err)
	}
	defer f.Close()
	defer func() {
		if p := recover(); p != nil {
			err = &DamagedError{Path: path, Why: fmt.Sprintf("cannot be read as Parquet (%v)", p)}
		}
	}()
	rdr, err := file.NewParquetReader(f, opts...)
	if err != nil {
		return fmt.Errorf("rundir: %s: not a readable Parquet file (rerun the run or its export): %w", path, err)
	}
	defer rdr.Close()
	return fn(rdr)
}

// DamagedError is a file of a finished run that does not match the size or
// SHA-256 its manifest records (output_checksums), or that its reader
// cannot decode: damaged, truncated or copied from another run. It is bad
// input (exit code 2 in pipelines/fault), never read.
type DamagedError struct {
	Path string
	Why  string
	// Fix, when set, says what to do instead of the general advice (the
	// file is damaged or foreign: rerun).
	Fix string
}

func (e *DamagedError) Error() string {
	if e.Fix != "" {
		return fmt.Sprintf("rundir: %s %s: %s", e.Path, e.Why, e.Fix)
	}
	return fmt.Sprintf("rundir: %s %s: the file is damaged or was copied from another run; rerun the run (`swellgrid run` with the same spec and --out) to make it again", e.Path, e.Why)
}

// IsBadInput marks a DamagedError as bad input (pipelines/fault).
func (e *DamagedError) IsBadInput() bool { return true }

// UncheckedWarning is the warning of a run directory whose manifest has no
// output checksums (written by an earlier version): its files are read
// without proof.
const UncheckedWarning = "the manifest records no output checksums (a run of an earlier swellgrid): its files are read without verification; rerun it to have them verified"

// verify proves the file rel (relative to the run directory) against the
// manifest's output_checksums before it is read, once per Run: its size,
// then its SHA-256. A run without checksums (an earlier version) is read
// as before (Open warns); a file the manifest lists among its outputs but
// gives no checksum is refused; a file it does not list (validation's
// tables, written later) is not a sealed output and is read as it is.
func (r *Run) verify(rel string) error {
	if r.sums == nil {
		return nil
	}
	if err, ok := r.verified[rel]; ok {
		return err
	}
	err := r.check(rel)
	r.verified[rel] = err
	return err
}

func (r *Run) check(rel string) error {
	err := r.checkSum(rel)
	if de, ok := err.(*DamagedError); ok {
		de.Fix = rebuildFix(r.Dir, rel)
	}
	return err
}

// rebuildFix says how to make the product rel of the run dir again from
// the run's tables ("" for a table: the general advice, rerun the run).
func rebuildFix(dir, rel string) string {
	switch {
	case rel == contract.AtlasNCFile || rel == contract.AtlasGPKGFile:
		return fmt.Sprintf("the file is damaged or was copied from another run; it is made from the run's tables: rebuild it with `swellgrid report --atlas %s` (or rerun the run)", dir)
	case strings.HasPrefix(rel, contract.ReportDir+"/"):
		return fmt.Sprintf("the file is damaged or was copied from another run; rebuild the report with `swellgrid report %s` (or rerun the run)", dir)
	}
	return ""
}

func (r *Run) checkSum(rel string) error {
	path := filepath.Join(r.Dir, filepath.FromSlash(rel))
	want, ok := r.sums[rel]
	if !ok {
		if slices.Contains(r.Manifest.Outputs, rel) {
			return &DamagedError{Path: path, Why: "is listed in the manifest's outputs without a checksum"}
		}
		return nil
	}
	st, err := os.Lstat(path)
	if err != nil {
		return &DamagedError{Path: path, Why: fmt.Sprintf("cannot be checked (%v)", err)}
	}
	if !st.Mode().IsRegular() {
		return &DamagedError{Path: path, Why: "is not a regular file"}
	}
	if st.Size() != want.Size {
		return &DamagedError{Path: path, Why: fmt.Sprintf("is %d bytes, the manifest records %d", st.Size(), want.Size)}
	}
	f, err := os.Open(path)
	if err != nil {
		return &DamagedError{Path: path, Why: fmt.Sprintf("cannot be checked (%v)", err)}
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return &DamagedError{Path: path, Why: fmt.Sprintf("cannot be checked (%v)", err)}
	}
	if got := hex.EncodeToString(h.Sum(nil)); got != want.SHA256 {
		return &DamagedError{Path: path, Why: fmt.Sprintf("has SHA-256 %.12s..., the manifest records %.12s...", got, want.SHA256)}
	}
	return nil
}

func allGroups(rdr *file.Reader) []int {
	rgs := make([]int, rdr.NumRowGroups())
	for i := range rgs {
		rgs[i] = i
	}
	return rgs
}

// readGroups is pqarrow's FileReader.ReadRowGroups decoding every column
// on the calling goroutine: ReadRowGroups decodes in goroutines of its own,
// where a panic of the decoder on a damaged file (zstd's "match offset
// bigger than current history", a failed CRC) could not be recovered
// (withParquet turns it into a DamagedError).
func readGroups(fr *pqarrow.FileReader, cols, rgs []int) (arrow.Table, error) {
	readers, sc, err := fr.GetFieldReaders(context.Background(), cols, rgs)
	if err != nil {
		return nil, err
	}
	defer func() {
		for _, r := range readers {
			r.Release()
		}
	}()
	columns := make([]arrow.Column, 0, len(readers))
	defer func() {
		for i := range columns {
			columns[i].Release()
		}
	}()
	for i, r := range readers {
		ch, err := fr.ReadColumn(rgs, r)
		if err != nil {
			return nil, err
		}
		columns = append(columns, *arrow.NewColumn(sc.Field(i), ch))
		ch.Release()
	}
	var nrows int
	if len(columns) > 0 {
		nrows = columns[0].Len()
	}
	return array.NewTable(sc, columns, int64(nrows)), nil
}

// decodeGroups decodes the row groups rgs of rdr, the named columns (nil:
// all but the geometry).
func decodeGroups(path string, rdr *file.Reader, names []string, rgs []int) (*Table, error) {
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		return nil, fmt.Errorf("rundir: %s: %w", path, err)
	}
	cols := make([]int, rdr.MetaData().Schema.NumColumns())
	for i := range cols {
		cols[i] = i
	}
	if names != nil {
		cols = cols[:0]
		for _, n := range names {
			if i := rdr.MetaData().Schema.ColumnIndexByName(n); i >= 0 {
				cols = append(cols, i)
			}
		}
		slices.Sort(cols) // file order, as ReadTable gives them
	}
	tbl, err := readGroups(fr, cols, rgs)
	if err != nil {
		return nil, fmt.Errorf("rundir: %s: %w", path, err)
	}
	defer tbl.Release()
	t := &Table{Path: path, Rows: int(tbl.NumRows()), Meta: map[string]string{}, byName: map[string]*Column{}}
	if kv := rdr.MetaData().KeyValueMetadata(); kv != nil {
		for i, k := range kv.Keys() {
			t.Meta[k] = kv.Values()[i]
		}
	}
	md := tbl.Schema().Metadata()
	for i, k := range md.Keys() {
		t.Meta[k] = md.Values()[i]
	}
	docs := map[string]map[string]any{}
	if s := t.Meta["swellgrid:columns"]; s != "" {
		var list []map[string]any
		if err := json.Unmarshal([]byte(s), &list); err == nil {
			for _, d := range list {
				if n, ok := d["name"].(string); ok {
					docs[n] = d
				}
			}
		}
	}
	str := func(d map[string]any, k string) string {
		if v, ok := d[k].(string); ok {
			return v
		}
		return ""
	}
	for ci := 0; ci < int(tbl.NumCols()); ci++ {
		ac := tbl.Column(ci)
		if ac.Name() == contract.ColGeometry {
			continue
		}
		c := &Column{Name: ac.Name()}
		d := docs[c.Name]
		c.Unit, c.Doc, c.StandardName, c.CellMethods, c.LongName = str(d, "unit"), str(d, "doc"), str(d, "standard_name"), str(d, "cell_methods"), str(d, "long_name")
		// the Arrow field metadata carries the same keys
		fm := tbl.Schema().Field(ci).Metadata
		for key, dst := range map[string]*string{"unit": &c.Unit, "doc": &c.Doc, "standard_name": &c.StandardName, "cell_methods": &c.CellMethods, "long_name": &c.LongName} {
			if i := fm.FindKey(key); i >= 0 && *dst == "" {
				*dst = fm.Values()[i]
			}
		}
		switch ac.DataType().ID() {
		case arrow.FLOAT64:
			c.Kind, c.Float = Float, make([]float64, 0, t.Rows)
		case arrow.INT64:
			c.Kind, c.Int, c.Valid = Int, make([]int64, 0, t.Rows), make([]bool, 0, t.Rows)
		case arrow.BOOL:
			c.Kind, c.Bool, c.Valid = Bool, make([]bool, 0, t.Rows), make([]bool, 0, t.Rows)
		default:
			c.Kind, c.Str, c.Valid = String, make([]string, 0, t.Rows), make([]bool, 0, t.Rows)
		}
		for _, ch := range ac.Data().Chunks() {
			for i := 0; i < ch.Len(); i++ {
				null := ch.IsNull(i)
				switch a := ch.(type) {
				case *array.Float64:
					v := a.Value(i)
					if null {
						v = math.NaN()
					}
					c.Float = append(c.Float, v)
				case *array.Int64:
					c.Int, c.Valid = append(c.Int, a.Value(i)), append(c.Valid, !null)
				case *array.Boolean:
					c.Bool, c.Valid = append(c.Bool, a.Value(i)), append(c.Valid, !null)
				case *array.String:
					c.Str, c.Valid = append(c.Str, a.Value(i)), append(c.Valid, !null)
				case *array.Dictionary:
					s := ""
					if !null {
						s = a.Dictionary().(*array.String).Value(a.GetValueIndex(i))
					}
					c.Str, c.Valid = append(c.Str, s), append(c.Valid, !null)
				default:
					s := ""
					if !null {
						s = a.ValueStr(i)
					}
					c.Str, c.Valid = append(c.Str, s), append(c.Valid, !null)
				}
			}
		}
		t.Columns = append(t.Columns, c)
		t.byName[c.Name] = c
	}
	return t, nil
}

// subset is a copy of t's header with the rows rows (t is not changed).
func (t *Table) subset(rows []int) *Table {
	sub := &Table{Path: t.Path, Meta: t.Meta, Rows: t.Rows, byName: map[string]*Column{}}
	for _, c := range t.Columns {
		cp := *c
		sub.Columns = append(sub.Columns, &cp)
		sub.byName[cp.Name] = &cp
	}
	sub.keep(rows)
	return sub
}

// keep reduces t to the rows rows, in that order.
func (t *Table) keep(rows []int) {
	for _, c := range t.Columns {
		switch c.Kind {
		case Float:
			c.Float = pick(c.Float, rows)
		case Int:
			c.Int = pick(c.Int, rows)
		case Bool:
			c.Bool = pick(c.Bool, rows)
		default:
			c.Str = pick(c.Str, rows)
		}
		if c.Valid != nil {
			c.Valid = pick(c.Valid, rows)
		}
	}
	t.Rows = len(rows)
}

func pick[T any](v []T, rows []int) []T {
	out := make([]T, len(rows))
	for k, i := range rows {
		out[k] = v[i]
	}
	return out
}

// Run is a finished run directory read back.
type Run struct {
	Dir      string
	Manifest *contract.Manifest
	Cells    *Table
	// NX, NY: the structured shape (points: NX = points, NY = 1).
	NX, NY   int
	GridKind grid.Kind // the manifest's grid kind
	Land     []bool    // masked cells (qc flag "masked"): drawn as land, no values
	Mesh     *Mesh     // the UGRID mesh of a run on one (mesh.go), else nil
	// Warnings say what was read without proof (UncheckedWarning).
	Warnings []string
	tables   map[string]*Table
	groups   map[string]*groupRead // CellTable's last row groups of each table
	footers  map[string]*footer    // CellTable's parsed footer of each table
	sums     map[string]contract.FileSum
	verified map[string]error // verify's verdicts
}

// ReadManifest reads dir/manifest.json and proves it against its seal
// (contract.ManifestSeal, the SHA-256 the run wrote in its sealed state):
// a manifest that differs from its seal, or that records output checksums
// but has no seal, is refused with a *DamagedError. A manifest of an
// earlier version (no output_checksums, no seal) is returned as it is
// (Open warns that it is unchecked).
func ReadManifest(dir string) ([]byte, error) {
	path := filepath.Join(dir, contract.ManifestFile)
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("rundir: %s is not a finished run directory (no manifest.json; run `swellgrid run` or `swellgrid merge` first): %w", dir, err)
	}
	sealPath := filepath.Join(dir, filepath.FromSlash(contract.ManifestSeal))
	seal, serr := readSeal(sealPath)
	if serr == nil {
		sum := sha256.Sum256(b)
		if seal != hex.EncodeToString(sum[:]) {
			return nil, &DamagedError{Path: path, Why: fmt.Sprintf("differs from its seal %s (SHA-256 %.12s..., the manifest's %.12s...): it was changed after the run wrote it", sealPath, seal, hex.EncodeToString(sum[:]))}
		}
		return b, nil
	}
	var top struct {
		Sums json.RawMessage `json:"output_checksums"`
	}
	if jerr := json.Unmarshal(b, &top); jerr != nil || len(top.Sums) > 0 {
		return nil, &DamagedError{Path: path, Why: fmt.Sprintf("has no valid seal (%v), although it records output checksums", serr),
			Fix: fmt.Sprintf("if the run directory was copied, copy its %s folder with it; if the run was made by a swellgrid from before the seal (checksums but no %s) or the seal was removed, run the same `swellgrid run` command again (its spec and the same --out: it rewrites the products from the run's checkpoints and seals them) or rerun into a new --out", contract.StateDir, contract.ManifestSeal)}
	}
	return b, nil
}

// readSeal reads the seal of the manifest (readSeals: its one line is of
// manifest.json).
func readSeal(path string) (string, error) {
	seals, err := readSeals(path)
	if err != nil {
		return "", err
	}
	h, ok := seals[contract.ManifestFile]
	if !ok || len(seals) != 1 {
		return "", fmt.Errorf("%s is not a seal of %s", path, contract.ManifestFile)
	}
	return h, nil
}

// readSeals reads a seal: a regular file of at most 64 KiB, one line per
// file as sha256sum writes them ("<64 hex digits>  <name>"); it returns
// the lower-case digests by name.
func readSeals(path string) (map[string]string, error) {
	st, err := os.Lstat(path)
	if err != nil {
		return nil, err
	}
	if !st.Mode().IsRegular() || st.Size() > 64<<10 {
		return nil, fmt.Errorf("%s is not a seal", path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	out := map[string]string{}
	for _, line := range strings.Split(strings.TrimSuffix(string(b), "\n"), "\n") {
		f := strings.Fields(line)
		if len(f) != 2 || len(f[0]) != 64 {
			return nil, fmt.Errorf("%s is not a seal", path)
		}
		if _, err := hex.DecodeString(f[0]); err != nil {
			return nil, fmt.Errorf("%s is not a seal", path)
		}
		out[f[1]] = strings.ToLower(f[0])
	}
	return out, nil
}

// sha256Of is the SHA-256 of the file at path (FIPS 180-4), in hex.
func sha256Of(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// ReadFile reads the file rel of the run directory after verifying it
// against the manifest's output_checksums when they list it (validation.json).
func (r *Run) ReadFile(rel string) ([]byte, error) {
	if err := r.verify(rel); err != nil {
		return nil, err
	}
	return os.ReadFile(filepath.Join(r.Dir, filepath.FromSlash(rel)))
}

// Open reads the manifest and cells.parquet of the run directory dir. The
// manifest bytes may be given (a run that is about to write its manifest);
// nil reads dir/manifest.json.
func Open(dir string, manifest []byte) (*Run, error) {
	if manifest == nil {
		b, err := ReadManifest(dir)
		if err != nil {
			return nil, err
		}
		manifest = b
	}
	m, err := contract.DecodeManifest(manifest)
	if err != nil {
		return nil, fmt.Errorf("rundir: %w", err)
	}
	r := &Run{Dir: dir, Manifest: m, GridKind: m.Grid.Kind, NY: m.Grid.Shape[0], NX: m.Grid.Shape[1], tables: map[string]*Table{}, groups: map[string]*groupRead{}}
	if m.OutputChecksums == nil {
		r.Warnings = append(r.Warnings, fmt.Sprintf("%s: %s", dir, UncheckedWarning))
	} else {
		r.sums, r.verified = map[string]contract.FileSum{}, map[string]error{}
		for _, s := range m.OutputChecksums {
			r.sums[s.Path] = s
		}
		if _, ok := r.sums[contract.CellsFile]; !ok {
			return nil, &DamagedError{Path: filepath.Join(dir, contract.ManifestFile), Why: "records no checksum of " + contract.CellsFile}
		}
	}
	if err := r.verify(contract.CellsFile); err != nil {
		return nil, err
	}
	cells, err := ReadTable(filepath.Join(dir, contract.CellsFile))
	if err != nil {
		return nil, err
	}
	r.Cells = cells
	if r.NX*r.NY != cells.Rows {
		return nil, fmt.Errorf("rundir: %s: the manifest's grid is %d x %d but cells.parquet has %d rows; the directory mixes two runs, rerun it", dir, r.NY, r.NX, cells.Rows)
	}
	for _, need := range []string{contract.ColCellID, contract.ColLon, contract.ColLat} {
		if cells.Col(need) == nil {
			return nil, fmt.Errorf("rundir: %s: cells.parquet has no column %q", dir, need)
		}
	}
	id := cells.Col(contract.ColCellID)
	for i := 0; i < cells.Rows; i++ {
		if id.Int[i] != int64(i) {
			return nil, fmt.Errorf("rundir: %s: cells.parquet row %d holds cell %d; rows must be in cell-id order", dir, i, id.Int[i])
		}
	}
	if r.GridKind == grid.MeshKind {
		for _, name := range []string{contract.TableMeshNodes, contract.TableMeshFaces} {
			if err := r.verify(contract.ParquetFile(name)); err != nil {
				return nil, err
			}
		}
		if r.Mesh, err = readMesh(dir, cells.Rows); err != nil {
			return nil, err
		}
	}
	r.Land = make([]bool, cells.Rows)
	if q := cells.Col(contract.ColQCFlags); q != nil && q.Kind == String {
		for i, s := range q.Str {
			for _, f := range strings.Split(s, contract.QCFlagSeparator) {
				if f == contract.QCFlagMasked {
					r.Land[i] = true
				}
			}
		}
	}
	return r, nil
}

// Table reads (once) the long table name (e.g. "monthly" for
// monthly.parquet); it returns nil, nil when the run has no such file.
func (r *Run) Table(name string) (*Table, error) {
	if t, ok := r.tables[name]; ok {
		return t, nil
	}
	p := filepath.Join(r.Dir, contract.ParquetFile(name))
	if _, err := os.Stat(p); errors.Is(err, os.ErrNotExist) {
		r.tables[name] = nil
		return nil, nil
	}
	if err := r.verify(contract.ParquetFile(name)); err != nil {
		return nil, err
	}
	t, err := ReadTable(p)
	if err != nil {
		return nil, err
	}
	r.tables[name] = t
	return t, nil
}

// Columns reads the named columns of the long table name (ReadColumns), not
// cached; nil, nil when the run has no such file.
func (r *Run) Columns(name string, cols ...string) (*Table, error) {
	p := filepath.Join(r.Dir, contract.ParquetFile(name))
	if _, err := os.Stat(p); errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err := r.verify(contract.ParquetFile(name)); err != nil {
		return nil, err
	}
	return ReadColumns(p, cols...)
}

// CellTable reads the rows of cell from the long table name: only the row
// groups that hold it (ReadCellRows), what a site's figures need, without
// holding the whole table. The row groups last decoded of each table are
// kept, so that sites in cell-id order (every point of a point set) decode
// each row group once. nil, nil when the run has no such file.
//
// cols, when given, are the only columns decoded (with cell_id; a name the
// file lacks is left out): what a figure needs of a wide table.
func (r *Run) CellTable(name string, cell int64, cols ...string) (*Table, error) {
	if t, ok := r.tables[name]; ok { // already read whole
		if t == nil {
			return nil, nil
		}
		return t.subset(t.RowsOf(contract.ColCellID, cell)), nil
	}
	p := filepath.Join(r.Dir, contract.ParquetFile(name))
	if _, err := os.Stat(p); errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err := r.verify(contract.ParquetFile(name)); err != nil {
		return nil, err
	}
	ft, err := r.footerOf(name)
	if err != nil {
		return nil, err
	}
	rgs, ok := ft.ranges.groupsOf(cell)
	if !ok {
		rgs = make([]int, len(ft.md.GetRowGroups()))
		for i := range rgs {
			rgs[i] = i
		}
	}
	var names []string // nil: every column
	if len(cols) > 0 {
		names = append([]string{contract.ColCellID}, cols...)
		slices.Sort(names)
		names = slices.Compact(names)
	}
	if g := r.groups[name]; g != nil && slices.Equal(g.rgs, rgs) && g.holds(names) { // decoded already: the file is not opened
		return g.t.subset(g.t.RowsOf(contract.ColCellID, cell)), nil
	}
	var out *Table
	err = withParquet(p, func(rdr *file.Reader) error {
		t, err := decodeGroups(p, rdr, names, rgs)
		if err != nil {
			return err
		}
		g := &groupRead{rgs: rgs, names: names, t: t}
		r.groups[name] = g
		out = g.t.subset(g.t.RowsOf(contract.ColCellID, cell))
		return nil
	}, file.WithMetadata(ft.md))
	return out, err
}

// ReadFooters parses and keeps the footers of the named long tables, as
// CellTable's first read of each does (a table the run lacks is left
// out), so that the first cell read does not pay for them: a large grid's
// footers (the statistics of every row group) are much of a cell's read.
func (r *Run) ReadFooters(names ...string) error {
	for _, n := range names {
		p := filepath.Join(r.Dir, contract.ParquetFile(n))
		if _, err := os.Stat(p); errors.Is(err, os.ErrNotExist) {
			continue
		}
		if err := r.verify(contract.ParquetFile(n)); err != nil {
			return err
		}
		if _, err := r.footerOf(n); err != nil {
			return err
		}
	}
	return nil
}

// footerOf returns the kept footer of the long table name, parsing it on
// first use (the file verified by the caller).
func (r *Run) footerOf(name string) (*footer, error) {
	if ft := r.footers[name]; ft != nil {
		return ft, nil
	}
	var ft *footer
	err := withParquet(filepath.Join(r.Dir, contract.ParquetFile(name)), func(rdr *file.Reader) error {
		ft = &footer{md: rdr.MetaData(), ranges: cellRanges(rdr)}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if r.footers == nil {
		r.footers = map[string]*footer{}
	}
	r.footers[name] = ft
	return ft, nil
}

// footer is a long table's parsed Parquet footer and the cell_id range of
// each of its row groups, kept by CellTable after the table's first read
// (the file was proved against its checksum then and is not rewritten).
type footer struct {
	md     *metadata.FileMetaData
	ranges groupRanges
}

// groupRead is the row groups of a long table last decoded by CellTable.
type groupRead struct {
	rgs   []int
	names []string // the columns decoded (sorted; nil: every column)
	t     *Table
}

// holds reports whether g decoded every column of names (nil: all).
func (g *groupRead) holds(names []string) bool {
	if g.names == nil {
		return true
	}
	if names == nil {
		return false
	}
	for _, n := range names {
		if _, ok := slices.BinarySearch(g.names, n); !ok {
			return false
		}
	}
	return true
}

// Lon and Lat of every cell (cells.parquet: lon in [-180, 180)).
func (r *Run) Lon() []float64 { return r.Cells.Col(contract.ColLon).Float }
func (r *Run) Lat() []float64 { return r.Cells.Col(contract.ColLat).Float }

// Frame is the continuous longitude frame of the run's cells
// (grid.LonFrame: 0..360 for a grid across 180 degrees), which atlas.nc,
// atlas.gpkg and the report's maps use.
func (r *Run) Frame() grid.Frame { return grid.LonFrame(r.Lon()) }

// FrameLon is the cells' longitudes in the run's continuous frame (Frame).
func (r *Run) FrameLon() []float64 { return r.Frame().ShiftAll(r.Lon()) }

// Structured reports whether the cells form a (y, x) grid.
func (r *Run) Structured() bool {
	return r.GridKind == grid.Regular || r.GridKind == grid.Curvilinear
}

// NearestSeaCell returns the cell nearest to (lon, lat) by great-circle
// distance among the cells that are not land and have a mean power, and the
// distance in km (haversine on a sphere of radius 6371.0088 km, the IUGG mean
// Earth radius). It returns -1 if there is no such cell.
func (r *Run) NearestSeaCell(lon, lat float64) (int, float64) {
	pw := r.Cells.Col(contract.ColPowerMean)
	best, bd := -1, math.Inf(1)
	lons, lats := r.Lon(), r.Lat()
	for i := range lons {
		if r.Land[i] || math.IsNaN(lons[i]) || (pw != nil && math.IsNaN(pw.Float[i])) {
			continue
		}
		if d := Haversine(lon, lat, lons[i], lats[i]); d < bd {
			best, bd = i, d
		}
	}
	return best, bd
}

// Haversine is the great-circle distance in km between two points given in
// degrees: d = 2 R asin(sqrt(sin^2(dphi/2) + cos phi1 cos phi2 sin^2(dlambda/2)))
// with R = 6371.0088 km (IUGG mean radius; Moritz 2000, Geodetic Reference
// System 1980).
func Haversine(lon1, lat1, lon2, lat2 float64) float64 {
	const R = 6371.0088
	p1, p2 := lat1*math.Pi/180, lat2*math.Pi/180
	dp, dl := p2-p1, (lon2-lon1)*math.Pi/180
	a := math.Sin(dp/2)*math.Sin(dp/2) + math.Cos(p1)*math.Cos(p2)*math.Sin(dl/2)*math.Sin(dl/2)
	return 2 * R * math.Asin(math.Min(1, math.Sqrt(a)))
}

// RowsOf returns the row indices of t whose int column key equals v, in order
// (the long tables are in cell-id order; others are scanned).
func (t *Table) RowsOf(key string, v int64) []int {
	c := t.Col(key)
	if c == nil || c.Kind != Int {
		return nil
	}
	lo := sort.Search(len(c.Int), func(i int) bool { return c.Int[i] >= v })
	var out []int
	for i := lo; i < len(c.Int) && c.Int[i] == v; i++ {
		out = append(out, i)
	}
	if out == nil { // not sorted by key: scan
		for i, x := range c.Int {
			if x == v {
				out = append(out, i)
			}
		}
	}
	return out
}

// RowsOfStr returns the row indices of t whose string column key equals v,
// in order.
func (t *Table) RowsOfStr(key, v string) []int {
	c := t.Col(key)
	if c == nil || c.Kind != String {
		return nil
	}
	var out []int
	for i, x := range c.Str {
		if x == v {
			out = append(out, i)
		}
	}
	return out
}

// NoSpace adds "no space left on device" (syscall.ENOSPC) and what to do to
// err, a write error in the run directory dir, when the file system of dir
// has less than 1 MiB left for an unprivileged writer: what a write error of
// a library that gives no errno (NetCDF-C's "HDF error", SQLite's "disk is
// full") most likely means there. Otherwise, or when err already says so,
// err is returned as it is.
func NoSpace(dir string, err error) error {
	var st syscall.Statfs_t
	if errors.Is(err, syscall.ENOSPC) || syscall.Statfs(dir, &st) != nil || int64(st.Bavail)*st.Bsize >= 1<<20 {
		return err
	}
	return fmt.Errorf("%w: %w; free space on the output's file system and run again", err, syscall.ENOSPC)
}

// Files lists the files of the run directory dir, relative to it and
// sorted, leaving out its state folder (contract.StateDir: checkpoints, the
// lock), which holds no output.
func Files(dir string) []string {
	var files []string
	filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return nil
		}
		if d.IsDir() {
			if d.Name() == contract.StateDir {
				return filepath.SkipDir
			}
			return nil
		}
		rel, _ := filepath.Rel(dir, p)
		files = append(files, rel)
		return nil
	})
	sort.Strings(files)
	return files
}
