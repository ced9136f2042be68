package export

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"

	"github.com/apache/arrow/go/v17/arrow"
	"github.com/apache/arrow/go/v17/arrow/array"
	"github.com/apache/arrow/go/v17/arrow/memory"
	"github.com/apache/arrow/go/v17/parquet"
	"github.com/apache/arrow/go/v17/parquet/compress"
	"github.com/apache/arrow/go/v17/parquet/pqarrow"
	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"

	"swellgrid/export/contract"
	"swellgrid/grid"
)

// Metadata keys written into every table's Parquet key/value metadata.
const (
	MetaColumns = "swellgrid:columns" // JSON list of {name, unit, doc, standard_name, cell_methods}
	MetaCaution = "swellgrid:caution" // the caller's caution, else ScreeningCaution
	MetaGeo     = "geo"               // GeoParquet metadata (WriteGeoParquet only)
)

// createdBy is the writer name in the Parquet footer; it carries no version
// or time so that the same table gives the same bytes.
const createdBy = "swellgrid export"

// WriteParquet writes t as a Parquet file at path (atomically, see
// WriteFileAtomic): zstd compression, column statistics, row groups of
// t.RowGroupRows rows, units and descriptions in the metadata key
// "swellgrid:columns". Used for the long tables (one row per cell and month,
// bin, threshold, ...).
func WriteParquet(path string, t *Table) error {
	rows, err := t.check(path)
	if err != nil {
		return err
	}
	st, err := newStream(path, t.Columns, t, nil, "")
	if err != nil {
		return err
	}
	defer st.Abort()
	if err := st.append(t.Columns, rows); err != nil {
		return err
	}
	return st.Close()
}

// NewParquetStream starts the Parquet file path for a table whose rows come
// in parts: t gives the columns (names, kinds, units, descriptions; their
// values are the first rows, possibly none), the metadata and the row group
// length. Append adds rows, Close writes the rest and puts the file in
// place (atomically, as WriteFileAtomic), Abort removes it. The file is
// byte-identical to WriteParquet of the whole table, however the rows were
// split: row groups hold RowGroupRows rows each, whatever the parts. It
// holds at most one row group of values in memory.
func NewParquetStream(path string, t *Table) (*TableStream, error) {
	rows, err := t.check(path)
	if err != nil {
		return nil, err
	}
	st, err := newStream(path, t.Columns, t, nil, "")
	if err != nil {
		return nil, err
	}
	if err := st.append(t.Columns, rows); err != nil {
		st.Abort()
		return nil, err
	}
	return st, nil
}

// NewGeoParquetStream is NewParquetStream for a GeoParquet table of the
// points lon, lat (see WriteGeoParquet), whose rows come in parts in point
// order: t's columns must not include lon and lat, which are added from
// the points (after a leading cell_id column). Close checks that every
// point has its row.
func NewGeoParquetStream(path string, t *Table, lon, lat []float64) (*TableStream, error) {
	rows, err := t.check(path)
	if err != nil {
		return nil, err
	}
	cols, meta, err := geoLayout(path, t, lon, lat)
	if err != nil {
		return nil, err
	}
	st, err := newStream(path, cols, t, &pointColumn{lon: lon, lat: lat}, meta)
	if err != nil {
		return nil, err
	}
	st.geo = len(cols) > len(t.Columns)
	if rows > 0 {
		if err := st.Append(t); err != nil {
			st.Abort()
			return nil, err
		}
	}
	return st, nil
}

// WriteGeoParquet writes t as a GeoParquet 1.1 file at path, one row per point
// (lon[k], lat[k]), in degrees on WGS 84. It adds a WKB point column
// "geometry" (the primary geometry column, written last) and the `geo` file
// metadata (version 1.1.0, encoding WKB, geometry type Point, bbox; the crs is
// omitted, which GeoParquet defines as OGC:CRS84, longitude first). If t has no
// "lon" and "lat" columns they are added, after a leading "cell_id" column if
// there is one, else first; if t has them they must equal lon and lat.
// Everything else is as for WriteParquet.
func WriteGeoParquet(path string, t *Table, lon, lat []float64) error {
	rows, err := t.check(path)
	if err != nil {
		return err
	}
	if len(lon) != rows || len(lat) != rows {
		return fmt.Errorf("export: %s: %d rows but %d lon and %d lat values", path, rows, len(lon), len(lat))
	}
	cols, meta, err := geoLayout(path, t, lon, lat)
	if err != nil {
		return err
	}
	st, err := newStream(path, cols, t, &pointColumn{lon: lon, lat: lat}, meta)
	if err != nil {
		return err
	}
	defer st.Abort()
	if err := st.append(cols, rows); err != nil {
		return err
	}
	return st.Close()
}

// geoLayout checks the points and gives the columns of a GeoParquet table
// (lon and lat added unless t has them) and its `geo` metadata.
func geoLayout(path string, t *Table, lon, lat []float64) ([]Column, string, error) {
	if len(lon) != len(lat) {
		return nil, "", fmt.Errorf("export: %s: %d lon and %d lat values", path, len(lon), len(lat))
	}
	for k := range lon {
		x, y := lon[k], lat[k]
		if !(x >= -180 && x <= 180) || !(y >= -90 && y <= 90) {
			return nil, "", fmt.Errorf("export: %s: row %d has lon %v, lat %v; points need finite degrees, lon in [-180, 180], lat in [-90, 90]", path, k, x, y)
		}
	}
	// GeoParquet's bbox follows RFC 7946 section 5: across 180 degrees,
	// west > east (section 5.2)
	bbox, _ := grid.BBox(lon, lat)
	cols := make([]Column, 0, len(t.Columns)+2)
	have := map[string]int{}
	for k, c := range t.Columns {
		have[c.Name] = k
	}
	if _, ok := have[contract.ColGeometry]; ok {
		return nil, "", fmt.Errorf("export: %s: column name \"geometry\" is reserved for the GeoParquet point column", path)
	}
	_, hasLon := have[contract.ColLon]
	_, hasLat := have[contract.ColLat]
	switch {
	case hasLon && hasLat:
		for name, want := range map[string][]float64{contract.ColLon: lon, contract.ColLat: lat} {
			c := t.Columns[have[name]]
			if c.Float64 == nil {
				return nil, "", fmt.Errorf("export: %s: column %q must be Float64", path, name)
			}
			for k := range c.Float64 { // the rows given (all of them but for a stream)
				if c.Float64[k] != want[k] {
					return nil, "", fmt.Errorf("export: %s: column %q row %d is %v but the point has %v", path, name, k, c.Float64[k], want[k])
				}
			}
		}
		cols = append(cols, t.Columns...)
	case hasLon || hasLat:
		return nil, "", fmt.Errorf("export: %s: the table has only one of lon/lat; give both or neither", path)
	default:
		lonC := Float64Column(contract.ColLon, "degree_east", "longitude of the cell centre (WGS 84, [-180, 180))", lon)
		latC := Float64Column(contract.ColLat, "degree_north", "latitude of the cell centre (WGS 84)", lat)
		if t.Columns[0].Name == contract.ColCellID {
			cols = append(cols, t.Columns[0], lonC, latC)
			cols = append(cols, t.Columns[1:]...)
		} else {
			cols = append(append(cols, lonC, latC), t.Columns...)
		}
	}
	geo := geoMeta{Version: "1.1.0", PrimaryColumn: contract.ColGeometry, Columns: map[string]geoColumn{
		contract.ColGeometry: {Encoding: "WKB", GeometryTypes: []string{"Point"}},
	}}
	if len(lon) > 0 {
		g := geo.Columns[contract.ColGeometry]
		g.BBox = bbox[:]
		geo.Columns[contract.ColGeometry] = g
	}
	meta, err := json.Marshal(geo)
	if err != nil {
		return nil, "", err
	}
	return cols, string(meta), nil
}

type geoMeta struct {
	Version       string               `json:"version"`
	PrimaryColumn string               `json:"primary_column"`
	Columns       map[string]geoColumn `json:"columns"`
}

type geoColumn struct {
	Encoding      string    `json:"encoding"`
	GeometryTypes []string  `json:"geometry_types"`
	BBox          []float64 `json:"bbox,omitempty"`
}

type pointColumn struct{ lon, lat []float64 }

type colDoc struct {
	Name         string `json:"name"`
	Unit         string `json:"unit"`
	Doc          string `json:"doc"`
	StandardName string `json:"standard_name,omitempty"`
	CellMethods  string `json:"cell_methods,omitempty"`
}

// fieldMeta is a column's Arrow field metadata: doc and unit, and the CF
// attributes where the column has them (keys sorted).
func fieldMeta(c *Column) arrow.Metadata {
	keys, vals := []string{}, []string{}
	if c.CellMethods != "" {
		keys, vals = append(keys, "cell_methods"), append(vals, c.CellMethods)
	}
	keys, vals = append(keys, "doc"), append(vals, c.Doc)
	if c.StandardName != "" {
		keys, vals = append(keys, "standard_name"), append(vals, c.StandardName)
	}
	keys, vals = append(keys, "unit"), append(vals, c.Unit)
	return arrow.NewMetadata(keys, vals)
}

// onlyWriter hides any Close method, so that the Parquet writer never closes
// the file under WriteFileAtomic.
type onlyWriter struct{ w io.Writer }

func (o onlyWriter) Write(p []byte) (int, error) { return o.w.Write(p) }

func arrowType(c *Column) arrow.DataType {
	switch {
	case c.Float64 != nil:
		return arrow.PrimitiveTypes.Float64
	case c.Int64 != nil:
		return arrow.PrimitiveTypes.Int64
	case c.String != nil:
		return arrow.BinaryTypes.String
	default:
		return arrow.FixedWidthTypes.Boolean
	}
}

// TableStream is a Parquet file being written part by part (see
// NewParquetStream).
type TableStream struct {
	path   string
	schema *arrow.Schema
	cols   []Column // the buffered rows not yet written (one row group at most)
	buf    int      // rows in cols
	rows   int      // rows written or buffered
	group  int
	points *pointColumn // GeoParquet: every point of the table
	geo    bool         // lon, lat columns come from points (a stream's parts lack them)
	af     *AtomicFile
	fw     *pqarrow.FileWriter
	mem    memory.Allocator
	closed bool
}

func newStream(path string, cols []Column, t *Table, points *pointColumn, geo string) (*TableStream, error) {
	docs := make([]colDoc, 0, len(cols)+1)
	fields := make([]arrow.Field, 0, len(cols)+1)
	for k := range cols {
		c := &cols[k]
		docs = append(docs, colDoc{c.Name, c.Unit, c.Doc, c.StandardName, c.CellMethods})
		fields = append(fields, arrow.Field{Name: c.Name, Type: arrowType(c), Nullable: true, Metadata: fieldMeta(c)})
	}
	if points != nil {
		docs = append(docs, colDoc{Name: contract.ColGeometry, Doc: "cell centre as a WKB point (lon, lat; OGC:CRS84)"})
		fields = append(fields, arrow.Field{Name: contract.ColGeometry, Type: arrow.BinaryTypes.Binary, Nullable: false})
	}
	docJSON, err := json.Marshal(docs)
	if err != nil {
		return nil, err
	}
	kv := map[string]string{}
	for k, v := range t.Meta {
		kv[k] = v
	}
	kv[MetaColumns] = string(docJSON)
	if kv[MetaCaution] == "" {
		kv[MetaCaution] = ScreeningCaution
	}
	if geo != "" {
		kv[MetaGeo] = geo
	}
	keys := make([]string, 0, len(kv))
	for k := range kv {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	vals := make([]string, len(keys))
	for k, key := range keys {
		vals[k] = kv[key]
	}
	md := arrow.NewMetadata(keys, vals)
	schema := arrow.NewSchema(fields, &md)

	group := t.RowGroupRows
	if group == 0 {
		group = DefaultRowGroupRows
	}
	// Dictionary encoding only for strings (flags, methods repeat a lot);
	// floats rarely repeat and zstd does better on them plain.
	opts := []parquet.WriterProperty{
		parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithStats(true),
		parquet.WithMaxRowGroupLength(int64(group)),
		parquet.WithCreatedBy(createdBy),
		parquet.WithDictionaryDefault(false),
		parquet.WithStatsFor(contract.ColGeometry, false),
	}
	for k := range cols {
		if cols[k].String != nil {
			opts = append(opts, parquet.WithDictionaryFor(cols[k].Name, true))
		}
	}
	props := parquet.NewWriterProperties(opts...)
	aprops := pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema())
	af, err := CreateAtomic(path)
	if err != nil {
		return nil, err
	}
	fw, err := pqarrow.NewFileWriter(schema, onlyWriter{af}, props, aprops)
	if err != nil {
		af.Abort()
		return nil, fmt.Errorf("export: writing %s: %w", path, err)
	}
	st := &TableStream{path: path, schema: schema, group: group, points: points, af: af, fw: fw, mem: memory.NewGoAllocator()}
	st.cols = make([]Column, len(cols))
	for k, c := range cols {
		st.cols[k] = Column{Name: c.Name}
		switch {
		case c.Float64 != nil:
			st.cols[k].Float64 = []float64{}
		case c.Int64 != nil:
			st.cols[k].Int64 = []int64{}
		case c.String != nil:
			st.cols[k].String = []string{}
		default:
			st.cols[k].Bool = []bool{}
		}
		if c.Valid != nil {
			st.cols[k].Valid = []bool{}
		}
	}
	return st, nil
}

// Rows is the number of rows appended so far.
func (s *TableStream) Rows() int { return s.rows }

// Append adds the rows of t, whose columns are those the stream was
// started with (without lon and lat for a GeoParquet stream), in order.
func (s *TableStream) Append(t *Table) error {
	n, err := t.check(s.path)
	if err != nil {
		return err
	}
	cols := t.Columns
	if s.geo {
		// lon and lat from the points, at their place in the layout.
		cols = make([]Column, 0, len(s.cols))
		k := 0
		for _, c := range s.cols {
			switch c.Name {
			case contract.ColLon, contract.ColLat:
				v := s.points.lon
				if c.Name == contract.ColLat {
					v = s.points.lat
				}
				if s.rows+n > len(v) {
					return fmt.Errorf("export: %s: rows %d..%d beyond the %d points", s.path, s.rows, s.rows+n-1, len(v))
				}
				cols = append(cols, Column{Name: c.Name, Float64: v[s.rows : s.rows+n]})
			default:
				if k >= len(t.Columns) {
					return fmt.Errorf("export: %s: the part has %d columns, the table %d", s.path, len(t.Columns), len(s.cols)-2)
				}
				cols = append(cols, t.Columns[k])
				k++
			}
		}
		if k != len(t.Columns) {
			return fmt.Errorf("export: %s: the part has %d columns, the table %d", s.path, len(t.Columns), len(s.cols)-2)
		}
	} else if s.points != nil {
		if s.rows+n > len(s.points.lon) {
			return fmt.Errorf("export: %s: rows %d..%d beyond the %d points", s.path, s.rows, s.rows+n-1, len(s.points.lon))
		}
		for _, c := range cols {
			want := s.points.lon
			switch c.Name {
			case contract.ColLat:
				want = s.points.lat
			case contract.ColLon:
			default:
				continue
			}
			if c.Float64 == nil {
				return fmt.Errorf("export: %s: column %q must be Float64", s.path, c.Name)
			}
			for k, v := range c.Float64 {
				if v != want[s.rows+k] {
					return fmt.Errorf("export: %s: column %q row %d is %v but the point has %v", s.path, c.Name, s.rows+k, v, want[s.rows+k])
				}
			}
		}
	}
	return s.append(cols, n)
}

// append adds n rows of cols (the stream's full layout).
func (s *TableStream) append(cols []Column, n int) error {
	if s.closed {
		return fmt.Errorf("export: %s: append after close", s.path)
	}
	if len(cols) != len(s.cols) {
		return fmt.Errorf("export: %s: the part has %d columns, the table %d", s.path, len(cols), len(s.cols))
	}
	for k := range cols {
		c, b := &cols[k], &s.cols[k]
		if c.Name != b.Name || c.kinds() != 1 || (c.Float64 != nil) != (b.Float64 != nil) || (c.Int64 != nil) != (b.Int64 != nil) ||
			(c.String != nil) != (b.String != nil) || (c.Bool != nil) != (b.Bool != nil) || (c.Valid != nil) != (b.Valid != nil) {
			return fmt.Errorf("export: %s: column %d of the part is %q of another kind than the table's %q", s.path, k, c.Name, b.Name)
		}
	}
	for lo := 0; lo < n; {
		hi := min(n, lo+s.group-s.buf)
		for k := range cols {
			c, b := &cols[k], &s.cols[k]
			switch {
			case c.Float64 != nil:
				b.Float64 = append(b.Float64, c.Float64[lo:hi]...)
			case c.Int64 != nil:
				b.Int64 = append(b.Int64, c.Int64[lo:hi]...)
			case c.String != nil:
				b.String = append(b.String, c.String[lo:hi]...)
			default:
				b.Bool = append(b.Bool, c.Bool[lo:hi]...)
			}
			if c.Valid != nil {
				b.Valid = append(b.Valid, c.Valid[lo:hi]...)
			}
		}
		s.buf += hi - lo
		s.rows += hi - lo
		lo = hi
		if s.buf == s.group {
			if err := s.flush(); err != nil {
				return err
			}
		}
	}
	return nil
}

// flush writes the buffered rows as one row group.
func (s *TableStream) flush() error {
	var points *pointColumn
	if s.points != nil {
		// the points of the buffered rows
		lo := s.rows - s.buf
		points = &pointColumn{lon: s.points.lon[lo:s.rows], lat: s.points.lat[lo:s.rows]}
	}
	rec, err := buildRecord(s.mem, s.schema, s.cols, points, 0, s.buf)
	if err != nil {
		return fmt.Errorf("export: writing %s: %w", s.path, err)
	}
	err = s.fw.Write(rec)
	rec.Release()
	if err != nil {
		return fmt.Errorf("export: writing %s: %w", s.path, err)
	}
	for k := range s.cols {
		b := &s.cols[k]
		b.Float64, b.Int64, b.String, b.Bool = trim(b.Float64), trim(b.Int64), trim(b.String), trim(b.Bool)
		b.Valid = trim(b.Valid)
	}
	s.buf = 0
	return nil
}

// trim empties a buffer, keeping its array (nil stays nil).
func trim[T any](v []T) []T {
	if v == nil {
		return nil
	}
	clear(v)
	return v[:0]
}

// Close writes the buffered rows and the footer and puts the file in place.
func (s *TableStream) Close() error {
	if s.closed {
		return fmt.Errorf("export: %s: closed twice", s.path)
	}
	if s.points != nil && s.rows != len(s.points.lon) {
		s.Abort()
		return fmt.Errorf("export: %s: %d rows but %d points", s.path, s.rows, len(s.points.lon))
	}
	if s.buf > 0 || s.rows == 0 {
		if err := s.flush(); err != nil {
			s.Abort()
			return err
		}
	}
	s.closed = true
	if err := s.fw.Close(); err != nil {
		s.af.Abort()
		return fmt.Errorf("export: writing %s: %w", s.path, err)
	}
	return s.af.Commit()
}

// Abort removes the unfinished file (a no-op after Close).
func (s *TableStream) Abort() {
	if !s.closed {
		s.closed = true
		s.af.Abort()
	}
}

func buildRecord(mem memory.Allocator, schema *arrow.Schema, cols []Column, points *pointColumn, lo, hi int) (arrow.Record, error) {
	arrs := make([]arrow.Array, 0, len(cols)+1)
	valid := func(c *Column) []bool {
		if c.Valid == nil {
			return nil
		}
		return c.Valid[lo:hi]
	}
	for k := range cols {
		c := &cols[k]
		switch {
		case c.Float64 != nil:
			b := array.NewFloat64Builder(mem)
			b.Reserve(hi - lo)
			for _, v := range c.Float64[lo:hi] {
				if math.IsNaN(v) {
					b.AppendNull()
				} else {
					b.Append(v)
				}
			}
			arrs = append(arrs, b.NewArray())
			b.Release()
		case c.Int64 != nil:
			b := array.NewInt64Builder(mem)
			b.AppendValues(c.Int64[lo:hi], valid(c))
			arrs = append(arrs, b.NewArray())
			b.Release()
		case c.String != nil:
			b := array.NewStringBuilder(mem)
			b.AppendValues(c.String[lo:hi], valid(c))
			arrs = append(arrs, b.NewArray())
			b.Release()
		default:
			b := array.NewBooleanBuilder(mem)
			b.AppendValues(c.Bool[lo:hi], valid(c))
			arrs = append(arrs, b.NewArray())
			b.Release()
		}
	}
	if points != nil {
		b := array.NewBinaryBuilder(mem, arrow.BinaryTypes.Binary)
		for k := lo; k < hi; k++ {
			g, err := wkb.Marshal(orb.Point{points.lon[k], points.lat[k]})
			if err != nil {
				b.Release()
				for _, a := range arrs {
					a.Release()
				}
				return nil, fmt.Errorf("encoding row %d as a WKB point: %w", k, err)
			}
			b.Append(g)
		}
		arrs = append(arrs, b.NewArray())
		b.Release()
	}
	rec := array.NewRecord(schema, arrs, int64(hi-lo))
	for _, a := range arrs {
		a.Release()
	}
	return rec, nil
}
