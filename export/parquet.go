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
	return writeTable(path, t.Columns, t, rows, nil, "")
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
	bbox := [4]float64{math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)}
	for k := range lon {
		x, y := lon[k], lat[k]
		if !(x >= -180 && x <= 180) || !(y >= -90 && y <= 90) {
			return fmt.Errorf("export: %s: row %d has lon %v, lat %v; points need finite degrees, lon in [-180, 180], lat in [-90, 90]", path, k, x, y)
		}
		bbox[0], bbox[1] = math.Min(bbox[0], x), math.Min(bbox[1], y)
		bbox[2], bbox[3] = math.Max(bbox[2], x), math.Max(bbox[3], y)
	}
	cols := make([]Column, 0, len(t.Columns)+2)
	have := map[string]int{}
	for k, c := range t.Columns {
		have[c.Name] = k
	}
	if _, ok := have["geometry"]; ok {
		return fmt.Errorf("export: %s: column name \"geometry\" is reserved for the GeoParquet point column", path)
	}
	_, hasLon := have["lon"]
	_, hasLat := have["lat"]
	switch {
	case hasLon && hasLat:
		for name, want := range map[string][]float64{"lon": lon, "lat": lat} {
			c := t.Columns[have[name]]
			if c.Float64 == nil {
				return fmt.Errorf("export: %s: column %q must be Float64", path, name)
			}
			for k := range want {
				if c.Float64[k] != want[k] {
					return fmt.Errorf("export: %s: column %q row %d is %v but the point has %v", path, name, k, c.Float64[k], want[k])
				}
			}
		}
		cols = append(cols, t.Columns...)
	case hasLon || hasLat:
		return fmt.Errorf("export: %s: the table has only one of lon/lat; give both or neither", path)
	default:
		lonC := Float64Column("lon", "degree_east", "longitude of the cell centre (WGS 84, [-180, 180))", lon)
		latC := Float64Column("lat", "degree_north", "latitude of the cell centre (WGS 84)", lat)
		if t.Columns[0].Name == "cell_id" {
			cols = append(cols, t.Columns[0], lonC, latC)
			cols = append(cols, t.Columns[1:]...)
		} else {
			cols = append(append(cols, lonC, latC), t.Columns...)
		}
	}
	geo := geoMeta{Version: "1.1.0", PrimaryColumn: "geometry", Columns: map[string]geoColumn{
		"geometry": {Encoding: "WKB", GeometryTypes: []string{"Point"}},
	}}
	if rows > 0 {
		g := geo.Columns["geometry"]
		g.BBox = bbox[:]
		geo.Columns["geometry"] = g
	}
	meta, err := json.Marshal(geo)
	if err != nil {
		return err
	}
	points := &pointColumn{lon: lon, lat: lat}
	return writeTable(path, cols, t, rows, points, string(meta))
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

func writeTable(path string, cols []Column, t *Table, rows int, points *pointColumn, geo string) error {
	docs := make([]colDoc, 0, len(cols)+1)
	fields := make([]arrow.Field, 0, len(cols)+1)
	for k := range cols {
		c := &cols[k]
		docs = append(docs, colDoc{c.Name, c.Unit, c.Doc, c.StandardName, c.CellMethods})
		fields = append(fields, arrow.Field{Name: c.Name, Type: arrowType(c), Nullable: true, Metadata: fieldMeta(c)})
	}
	if points != nil {
		docs = append(docs, colDoc{Name: "geometry", Doc: "cell centre as a WKB point (lon, lat; OGC:CRS84)"})
		fields = append(fields, arrow.Field{Name: "geometry", Type: arrow.BinaryTypes.Binary, Nullable: false})
	}
	docJSON, err := json.Marshal(docs)
	if err != nil {
		return err
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
		parquet.WithStatsFor("geometry", false),
	}
	for k := range cols {
		if cols[k].String != nil {
			opts = append(opts, parquet.WithDictionaryFor(cols[k].Name, true))
		}
	}
	props := parquet.NewWriterProperties(opts...)
	aprops := pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema())
	mem := memory.NewGoAllocator()

	return WriteFileAtomic(path, func(w io.Writer) error {
		fw, err := pqarrow.NewFileWriter(schema, onlyWriter{w}, props, aprops)
		if err != nil {
			return err
		}
		for lo := 0; lo < rows || (rows == 0 && lo == 0); lo += group {
			hi := min(lo+group, rows)
			rec, err := buildRecord(mem, schema, cols, points, lo, hi)
			if err != nil {
				return err
			}
			err = fw.Write(rec)
			rec.Release()
			if err != nil {
				return err
			}
			if rows == 0 {
				break
			}
		}
		return fw.Close()
	})
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
