// Package gpkg writes atlas.gpkg, an OGC GeoPackage 1.3 (OGC 12-128r18) of a
// finished run for desktop GIS software: a point layer "cells" with every
// column of cells.parquet, a polygon layer of the cells' footprints on a
// structured grid, one line layer and one polygon layer per contoured column
// and one per screening scenario (from contours/*.geojson, with their
// GeoJSON twins' fields), and the default style of each in the QGIS
// layer_styles table (styles.go). It writes the required metadata
// tables (gpkg_spatial_ref_sys, gpkg_contents, gpkg_geometry_columns), the
// GeoPackage binary geometry (header + ISO WKB) and the R-tree spatial index
// extension (gpkg_rtree_index) of every layer. Every layer is in the grid's
// continuous longitude frame (grid.LonFrame: 0..360 for a grid across 180
// degrees, said in each layer's description), the contours joined again
// where their GeoJSON twins are cut at 180 degrees, so that a region across
// 180 degrees is one piece in a GIS.
//
// The SQLite engine is modernc.org/sqlite (pure Go). gpkg encodes values it
// is given (through export/rundir); it computes nothing.
package gpkg

import (
	"bytes"
	"database/sql"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"time"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/encoding/wkb"
	"github.com/paulmach/orb/geojson"
	_ "modernc.org/sqlite"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
)

// FileName is the GeoPackage's name in the run directory.
const FileName = contract.AtlasGPKGFile

// applicationID is "GPKG" as a big-endian 32-bit integer and userVersion
// 10300 marks version 1.3 (OGC 12-128r18, Requirement 2).
const (
	applicationID = 0x47504B47
	userVersion   = 10300
)

// Header writes the GeoPackage binary geometry header (OGC 12-128r18, 2.1.3):
// magic "GP", version 0, flags (bit 0: little-endian; bits 1-3: envelope
// [minx, maxx, miny, maxy] = 1, none = 0; bit 4: empty geometry), srs_id,
// the envelope, then the ISO WKB of g.
func Header(g orb.Geometry, srsID int32) ([]byte, error) {
	var buf bytes.Buffer
	buf.WriteString("GP")
	buf.WriteByte(0)
	empty := isEmpty(g)
	flags := byte(1) // little-endian
	_, isPoint := g.(orb.Point)
	withEnv := !empty && !isPoint
	if withEnv {
		flags |= 1 << 1
	}
	if empty {
		flags |= 1 << 4
	}
	buf.WriteByte(flags)
	binary.Write(&buf, binary.LittleEndian, srsID)
	if withEnv {
		b := g.Bound()
		for _, v := range []float64{b.Min[0], b.Max[0], b.Min[1], b.Max[1]} {
			binary.Write(&buf, binary.LittleEndian, v)
		}
	}
	var w []byte
	var err error
	if p, ok := g.(orb.Point); ok && empty {
		_ = p
		// An empty point is a point of NaN coordinates in WKB (OGC 12-128r18, 2.1.3.1.1).
		w = make([]byte, 21)
		w[0] = 1
		binary.LittleEndian.PutUint32(w[1:], 1)
		binary.LittleEndian.PutUint64(w[5:], math.Float64bits(math.NaN()))
		binary.LittleEndian.PutUint64(w[13:], math.Float64bits(math.NaN()))
	} else if w, err = wkb.Marshal(g, binary.LittleEndian); err != nil {
		return nil, err
	}
	buf.Write(w)
	return buf.Bytes(), nil
}

func isEmpty(g orb.Geometry) bool {
	switch t := g.(type) {
	case orb.Point:
		return math.IsNaN(t[0]) || math.IsNaN(t[1])
	case orb.MultiLineString:
		return len(t) == 0
	case orb.MultiPolygon:
		return len(t) == 0
	}
	return false
}

// Layer is one feature table: a geometry per feature and attribute columns.
type Layer struct {
	Name, Description, GeomType string // GeomType: POINT, MULTILINESTRING, MULTIPOLYGON
	Geoms                       []orb.Geometry
	Columns                     []*rundir.Column
}

// Write writes dir/atlas.gpkg from the run r, atomically (a temporary file
// renamed when complete).
func Write(r *rundir.Run) error {
	layers, err := Layers(r)
	if err != nil {
		return err
	}
	final := filepath.Join(r.Dir, FileName)
	part, err := export.NewPartial(r.Dir, FileName)
	if err != nil {
		return err
	}
	defer part.Close()
	tmp := part.File() // NetCDF-C and SQLite write by path: see export.Partial
	if err := write(tmp, stamp(r.Manifest.End), layers, styles(r, layers)); err != nil {
		err = rundir.NoSpace(r.Dir, err) // SQLite says "database or disk is full"; before the partial file's space is freed
		return fmt.Errorf("gpkg: writing %s: %w", final, err)
	}
	return part.CommitFile(final)
}

// stamp is the last_change of every layer: the end of the hindcast record,
// not the wall clock, so that identical inputs give identical bytes.
func stamp(end string) string {
	for _, f := range []string{time.RFC3339, "2006-01-02T15:04:05", "2006-01-02 15:04:05", "2006-01-02"} {
		if t, err := time.Parse(f, end); err == nil {
			return t.UTC().Format("2006-01-02T15:04:05.000Z")
		}
	}
	return "1970-01-01T00:00:00.000Z"
}

// Layers assembles the layers of r: cells (every column), and for every
// contours/<column>.geojson and .bands.geojson a line and a polygon layer.
func Layers(r *rundir.Run) ([]*Layer, error) {
	fr := r.Frame()
	lon, lat := fr.ShiftAll(r.Lon()), r.Lat()
	frameNote := ""
	if fr.Crosses180() {
		frameNote = " Longitudes in the grid's continuous frame 0..360 (the grid crosses 180 degrees east/west)."
	}
	cells := &Layer{Name: "cells", GeomType: "POINT", Description: "one point per cell with every column of cells.parquet (null: no result)." + frameNote + " " + r.Manifest.Caution}
	for i := range lon {
		cells.Geoms = append(cells.Geoms, orb.Point{lon[i], lat[i]})
	}
	cells.Columns = r.Cells.Columns
	out := []*Layer{cells}
	if fp := footprints(r, frameNote); fp != nil {
		out = append(out, fp)
	}
	files, err := r.FilesIn(contract.ContourDir, ".geojson")
	if err != nil {
		return nil, fmt.Errorf("gpkg: %w", err)
	}
	for _, f := range files {
		b, err := r.ReadFile(f) // verified against the manifest when sealed
		if err != nil {
			return nil, fmt.Errorf("gpkg: %w", err)
		}
		fc, err := geojson.UnmarshalFeatureCollection(b)
		if err != nil {
			return nil, fmt.Errorf("gpkg: %s: %w", f, err)
		}
		base := strings.TrimSuffix(filepath.Base(f), ".geojson")
		l := &Layer{}
		var props []prop
		if sc, ok := strings.CutPrefix(base, contract.ScreeningOutlinePrefix); ok {
			l.Name, l.GeomType, props = base, "MULTIPOLYGON", screeningProps
			l.Description = "passing area of screening scenario " + sc + " (cells taken whole; see screening.json)"
		} else if col, ok := strings.CutSuffix(base, ".bands"); ok {
			l.Name, l.GeomType, props = "bands_"+col, "MULTIPOLYGON", bandProps
			l.Description = "filled contour bands [lower, upper) of " + col + " (null bound: open band)"
			if sc, ok := strings.CutPrefix(col, contract.LCOEPrefix); ok {
				l.Description = "filled bands [lower, upper) of the levelised cost of energy per cell under screening scenario " + sc +
					" (screening.parquet's lcoe_per_mwh; null bound: open band). " + contract.LCOENote + " " + r.Manifest.Caution
			}
		} else {
			l.Name, l.GeomType, props = "isolines_"+col, "MULTILINESTRING", isolineProps
			l.Description = "isolines of " + col
		}
		cols := make([]*rundir.Column, len(props))
		for k, p := range props {
			cols[k] = &rundir.Column{Name: p.name, Kind: p.kind}
		}
		l.Description += frameNote
		for _, ft := range fc.Features {
			// the GeoJSON is cut at 180 degrees (RFC 7946); the layer is
			// in the grid's frame, joined again across it
			switch g := ft.Geometry.(type) {
			case orb.MultiLineString:
				l.Geoms = append(l.Geoms, grid.RejoinLines(g, fr))
			case orb.MultiPolygon:
				l.Geoms = append(l.Geoms, grid.RejoinPolygons(g, fr))
			case orb.LineString:
				l.Geoms = append(l.Geoms, grid.RejoinLines(orb.MultiLineString{g}, fr))
			case orb.Polygon:
				l.Geoms = append(l.Geoms, grid.RejoinPolygons(orb.MultiPolygon{g}, fr))
			default:
				return nil, fmt.Errorf("gpkg: %s: unexpected geometry %T", f, ft.Geometry)
			}
			for k, p := range props {
				if err := appendProp(cols[k], ft.Properties[p.name]); err != nil {
					return nil, fmt.Errorf("gpkg: %s: property %q: %w", f, p.name, err)
				}
			}
		}
		if u, ok := unitOf(fc); ok {
			for _, c := range cols {
				if c.Kind == rundir.Float {
					c.Unit = u
				}
			}
		}
		l.Columns = cols
		out = append(out, l)
	}
	return out, nil
}

func sqlType(c *rundir.Column) string {
	switch c.Kind {
	case rundir.Float:
		return "DOUBLE"
	case rundir.Int:
		return "INTEGER"
	case rundir.Bool:
		return "BOOLEAN"
	}
	return "TEXT"
}

func value(c *rundir.Column, i int) any {
	switch c.Kind {
	case rundir.Float:
		if math.IsNaN(c.Float[i]) {
			return nil
		}
		return c.Float[i]
	case rundir.Int:
		if !c.Valid[i] {
			return nil
		}
		return c.Int[i]
	case rundir.Bool:
		if !c.Valid[i] {
			return nil
		}
		return c.Bool[i]
	}
	if !c.Valid[i] {
		return nil
	}
	return c.Str[i]
}

func quote(id string) string { return `"` + strings.ReplaceAll(id, `"`, `""`) + `"` }

func write(path, lastChange string, layers []*Layer, ss []style) error {
	db, err := sql.Open("sqlite", path)
	if err != nil {
		return err
	}
	defer db.Close()
	db.SetMaxOpenConns(1)
	exec := func(q string, args ...any) error {
		if _, err := db.Exec(q, args...); err != nil {
			return fmt.Errorf("%s: %w", firstLine(q), err)
		}
		return nil
	}
	for _, q := range []string{
		fmt.Sprintf("PRAGMA application_id = %d", applicationID),
		fmt.Sprintf("PRAGMA user_version = %d", userVersion),
		"PRAGMA journal_mode = OFF",
		"PRAGMA synchronous = OFF",
		// Table definitions of OGC 12-128r18, Annex C (C.1, C.2, C.3, C.9).
		`CREATE TABLE gpkg_spatial_ref_sys (srs_name TEXT NOT NULL, srs_id INTEGER PRIMARY KEY, organization TEXT NOT NULL,
			organization_coordsys_id INTEGER NOT NULL, definition TEXT NOT NULL, description TEXT)`,
		`CREATE TABLE gpkg_contents (table_name TEXT NOT NULL PRIMARY KEY, data_type TEXT NOT NULL, identifier TEXT UNIQUE,
			description TEXT DEFAULT '', last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
			min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE, srs_id INTEGER,
			CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id))`,
		`CREATE TABLE gpkg_geometry_columns (table_name TEXT NOT NULL, column_name TEXT NOT NULL, geometry_type_name TEXT NOT NULL,
			srs_id INTEGER NOT NULL, z TINYINT NOT NULL, m TINYINT NOT NULL,
			CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name),
			CONSTRAINT uk_gc_table_name UNIQUE (table_name),
			CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
			CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id))`,
		`CREATE TABLE gpkg_extensions (table_name TEXT, column_name TEXT, extension_name TEXT NOT NULL, definition TEXT NOT NULL,
			scope TEXT NOT NULL, CONSTRAINT ge_tce UNIQUE (table_name, column_name, extension_name))`,
	} {
		if err := exec(q); err != nil {
			return err
		}
	}
	// The three rows every GeoPackage holds (Requirements 11): WGS 84
	// geographic 2-D, and the undefined Cartesian (-1) and geographic (0).
	for _, row := range [][]any{
		{"WGS 84 geodetic", 4326, "EPSG", 4326, wgs84WKT, "longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid"},
		{"Undefined cartesian SRS", -1, "NONE", -1, "undefined", "undefined cartesian coordinate reference system"},
		{"Undefined geographic SRS", 0, "NONE", 0, "undefined", "undefined geographic coordinate reference system"},
	} {
		if err := exec(`INSERT INTO gpkg_spatial_ref_sys VALUES (?, ?, ?, ?, ?, ?)`, row...); err != nil {
			return err
		}
	}
	for _, l := range layers {
		if err := writeLayer(db, exec, lastChange, l); err != nil {
			return fmt.Errorf("layer %s: %w", l.Name, err)
		}
	}
	return writeStyles(exec, lastChange, ss)
}

// wgs84WKT is EPSG:4326 in OGC WKT as GeoPackage files commonly hold it.
const wgs84WKT = `GEOGCS["WGS 84",DATUM["WGS_1984",SPHEROID["WGS 84",6378137,298.257223563,AUTHORITY["EPSG","7030"]],AUTHORITY["EPSG","6326"]],PRIMEM["Greenwich",0,AUTHORITY["EPSG","8901"]],UNIT["degree",0.0174532925199433,AUTHORITY["EPSG","9122"]],AXIS["Latitude",NORTH],AXIS["Longitude",EAST],AUTHORITY["EPSG","4326"]]`

func firstLine(s string) string {
	s = strings.TrimSpace(s)
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[:i]
	}
	return s
}

func writeLayer(db *sql.DB, exec func(string, ...any) error, lastChange string, l *Layer) error {
	if len(l.Columns) > 0 && l.Columns[0].Kind != rundir.Float && len(l.Geoms) != rowsOf(l.Columns[0]) {
		return errors.New("geometries and attribute rows differ in number")
	}
	defs := []string{"fid INTEGER PRIMARY KEY AUTOINCREMENT NOT NULL", "geom " + l.GeomType}
	names := []string{"geom"}
	for _, c := range l.Columns {
		defs = append(defs, quote(c.Name)+" "+sqlType(c))
		names = append(names, quote(c.Name))
	}
	t := quote(l.Name)
	if err := exec("CREATE TABLE " + t + " (" + strings.Join(defs, ", ") + ")"); err != nil {
		return err
	}
	env := orb.Bound{Min: orb.Point{math.Inf(1), math.Inf(1)}, Max: orb.Point{math.Inf(-1), math.Inf(-1)}}
	rtree := "rtree_" + l.Name + "_geom"
	if err := exec("CREATE VIRTUAL TABLE " + quote(rtree) + " USING rtree(id, minx, maxx, miny, maxy)"); err != nil {
		return err
	}
	tx, err := db.Begin()
	if err != nil {
		return err
	}
	ins, err := tx.Prepare("INSERT INTO " + t + " (" + strings.Join(names, ", ") + ") VALUES (" + strings.TrimSuffix(strings.Repeat("?, ", len(names)), ", ") + ")")
	if err != nil {
		tx.Rollback()
		return err
	}
	idx, err := tx.Prepare("INSERT INTO " + quote(rtree) + " VALUES (?, ?, ?, ?, ?)")
	if err != nil {
		tx.Rollback()
		return err
	}
	args := make([]any, len(names))
	for i, g := range l.Geoms {
		blob, err := Header(g, 4326)
		if err != nil {
			tx.Rollback()
			return err
		}
		args[0] = blob
		for k, c := range l.Columns {
			args[k+1] = value(c, i)
		}
		res, err := ins.Exec(args...)
		if err != nil {
			tx.Rollback()
			return err
		}
		if isEmpty(g) {
			continue
		}
		fid, _ := res.LastInsertId()
		b := g.Bound()
		env = env.Union(b)
		if _, err := idx.Exec(fid, b.Min[0], b.Max[0], b.Min[1], b.Max[1]); err != nil {
			tx.Rollback()
			return err
		}
	}
	if err := tx.Commit(); err != nil {
		return err
	}
	var minX, minY, maxX, maxY any
	if !math.IsInf(env.Min[0], 0) {
		minX, minY, maxX, maxY = env.Min[0], env.Min[1], env.Max[0], env.Max[1]
	}
	if err := exec(`INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change, min_x, min_y, max_x, max_y, srs_id)
		VALUES (?, 'features', ?, ?, ?, ?, ?, ?, ?, 4326)`, l.Name, l.Name, l.Description, lastChange, minX, minY, maxX, maxY); err != nil {
		return err
	}
	if err := exec(`INSERT INTO gpkg_geometry_columns VALUES (?, 'geom', ?, 4326, 0, 0)`, l.Name, l.GeomType); err != nil {
		return err
	}
	if err := exec(`INSERT INTO gpkg_extensions VALUES (?, 'geom', 'gpkg_rtree_index', 'http://www.geopackage.org/spec120/#extension_rtree', 'write-only')`, l.Name); err != nil {
		return err
	}
	// The triggers of the R-tree extension (OGC 12-128r18, F.3) keep the
	// index in step with later edits in a GIS; they are created after the
	// rows are in, because they call the ST_* functions that GeoPackage
	// readers (GDAL) register and plain SQLite lacks.
	for _, q := range rtreeTriggers {
		q = strings.NewReplacer("<t>", l.Name, "<c>", "geom", "<i>", "fid").Replace(q)
		if err := exec(q); err != nil {
			return err
		}
	}
	return nil
}

func rowsOf(c *rundir.Column) int {
	switch c.Kind {
	case rundir.Float:
		return len(c.Float)
	case rundir.Int:
		return len(c.Int)
	case rundir.Bool:
		return len(c.Bool)
	}
	return len(c.Str)
}

// rtreeTriggers are the triggers of the GeoPackage R-tree spatial index
// extension (OGC 12-128r18, Annex F.3), with <t> the table, <c> the geometry
// column and <i> the integer primary key.
var rtreeTriggers = []string{
	`CREATE TRIGGER "rtree_<t>_<c>_insert" AFTER INSERT ON "<t>" WHEN (new."<c>" NOT NULL AND NOT ST_IsEmpty(NEW."<c>"))
BEGIN
  INSERT OR REPLACE INTO "rtree_<t>_<c>" VALUES (NEW."<i>", ST_MinX(NEW."<c>"), ST_MaxX(NEW."<c>"), ST_MinY(NEW."<c>"), ST_MaxY(NEW."<c>"));
END`,
	`CREATE TRIGGER "rtree_<t>_<c>_update1" AFTER UPDATE OF "<c>" ON "<t>" WHEN OLD."<i>" = NEW."<i>" AND (NEW."<c>" NOTNULL AND NOT ST_IsEmpty(NEW."<c>"))
BEGIN
  INSERT OR REPLACE INTO "rtree_<t>_<c>" VALUES (NEW."<i>", ST_MinX(NEW."<c>"), ST_MaxX(NEW."<c>"), ST_MinY(NEW."<c>"), ST_MaxY(NEW."<c>"));
END`,
	`CREATE TRIGGER "rtree_<t>_<c>_update2" AFTER UPDATE OF "<c>" ON "<t>" WHEN OLD."<i>" = NEW."<i>" AND (NEW."<c>" IS NULL OR ST_IsEmpty(NEW."<c>"))
BEGIN
  DELETE FROM "rtree_<t>_<c>" WHERE id = OLD."<i>";
END`,
	`CREATE TRIGGER "rtree_<t>_<c>_update3" AFTER UPDATE ON "<t>" WHEN OLD."<i>" != NEW."<i>" AND (NEW."<c>" NOTNULL AND NOT ST_IsEmpty(NEW."<c>"))
BEGIN
  DELETE FROM "rtree_<t>_<c>" WHERE id = OLD."<i>";
  INSERT OR REPLACE INTO "rtree_<t>_<c>" VALUES (NEW."<i>", ST_MinX(NEW."<c>"), ST_MaxX(NEW."<c>"), ST_MinY(NEW."<c>"), ST_MaxY(NEW."<c>"));
END`,
	`CREATE TRIGGER "rtree_<t>_<c>_update4" AFTER UPDATE ON "<t>" WHEN OLD."<i>" != NEW."<i>" AND (NEW."<c>" IS NULL OR ST_IsEmpty(NEW."<c>"))
BEGIN
  DELETE FROM "rtree_<t>_<c>" WHERE id IN (OLD."<i>", NEW."<i>");
END`,
	`CREATE TRIGGER "rtree_<t>_<c>_delete" AFTER DELETE ON "<t>" WHEN old."<c>" NOT NULL
BEGIN
  DELETE FROM "rtree_<t>_<c>" WHERE id = OLD."<i>";
END`,
}

// prop is one property of a GeoJSON layer and the field type its GeoPackage
// twin stores it as.
type prop struct {
	name string
	kind rundir.Kind
}

// The properties of the layers under contours/, in the order and with the
// types their writers give them (export.WriteContours and
// export.WriteScreeningOutline, through pipelines/screening): a layer in
// atlas.gpkg carries the same fields as its GeoJSON twin (TestLayerFieldsMatchGeoJSON).
var (
	isolineProps   = []prop{{"level", rundir.Float}, {"column", rundir.String}, {"units", rundir.String}}
	bandProps      = []prop{{"lower", rundir.Float}, {"upper", rundir.Float}, {"column", rundir.String}, {"units", rundir.String}}
	screeningProps = []prop{{"scenario", rundir.String}, {"criteria", rundir.String}, {"cells", rundir.Int}, {"area_km2", rundir.Float}}
)

// appendProp appends a GeoJSON property value (nil: null) to c.
func appendProp(c *rundir.Column, v any) error {
	switch c.Kind {
	case rundir.Float:
		f, ok := v.(float64)
		if !ok {
			if v != nil {
				return fmt.Errorf("%v is not a number", v)
			}
			f = math.NaN()
		}
		c.Float = append(c.Float, f)
	case rundir.Int:
		f, ok := v.(float64)
		if ok && (f != math.Trunc(f) || math.Abs(f) > 1<<53) {
			return fmt.Errorf("%v is not an integer", v)
		}
		if !ok && v != nil {
			return fmt.Errorf("%v is not a number", v)
		}
		c.Int, c.Valid = append(c.Int, int64(f)), append(c.Valid, ok)
	case rundir.String:
		s, ok := v.(string)
		if !ok && v != nil {
			return fmt.Errorf("%v is not a text", v)
		}
		c.Str, c.Valid = append(c.Str, s), append(c.Valid, ok)
	default:
		return fmt.Errorf("unsupported field type")
	}
	return nil
}

// unitOf is the "units" property of the layer's first feature that has one.
func unitOf(fc *geojson.FeatureCollection) (string, bool) {
	for _, ft := range fc.Features {
		if u, ok := ft.Properties["units"].(string); ok {
			return u, true
		}
	}
	return "", false
}

// FootprintLayer is the name of the polygon layer of the cells' footprints.
const FootprintLayer = "cell_footprints"

// footprints is the layer of the cells' outlines (grid.CellCorners: edges
// halfway between neighbouring centres, in the grid's continuous longitude
// frame, WGS 84 like every layer) with every column of cells.parquet, one
// feature per cell in cell-id order; a cell with an unknown corner has an
// empty geometry. A mesh's cells are its faces or its nodes' median dual
// cells (grid.MeshOutlines). A point set has no cells of its own: nil.
func footprints(r *rundir.Run, frameNote string) *Layer {
	if r.Mesh != nil {
		return meshFootprints(r)
	}
	if !r.Structured() {
		return nil
	}
	g := &grid.Grid{Kind: r.GridKind, NX: r.NX, NY: r.NY, Lon: r.Lon(), Lat: r.Lat()}
	c, ok := grid.CellCorners(g)
	if !ok {
		return nil
	}
	l := &Layer{Name: FootprintLayer, GeomType: "MULTIPOLYGON", Columns: r.Cells.Columns,
		Description: "one polygon per cell (its outline, edges halfway between neighbouring centres) with every column of cells.parquet, for selecting and querying cells by area (null: no result)." + frameNote + " " + r.Manifest.Caution}
	l.Geoms = make([]orb.Geometry, 0, r.NX*r.NY)
	for j := 0; j < r.NY; j++ {
		for i := 0; i < r.NX; i++ {
			ring := c.CellRing(i, j)
			bad := false
			for _, p := range ring {
				bad = bad || math.IsNaN(p[0]) || math.IsNaN(p[1])
			}
			if bad {
				l.Geoms = append(l.Geoms, orb.MultiPolygon{})
				continue
			}
			if ring.Orientation() == orb.CW { // right-hand rule: exterior anticlockwise (OGC 06-103r4 6.1.11.1 recommends it; GeoPackage readers accept either)
				ring.Reverse()
			}
			l.Geoms = append(l.Geoms, orb.MultiPolygon{orb.Polygon{ring}})
		}
	}
	return l
}

// meshFootprints is the footprint layer of a mesh run: a face, or a node's
// median dual cell, per cell in cell-id order (empty where a node has none).
func meshFootprints(r *rundir.Run) *Layer {
	m := r.Mesh
	geoms := make([]orb.Geometry, r.Cells.Rows)
	for c, ring := range m.CellOutlines(r.Cells.Rows) {
		geoms[c] = orb.MultiPolygon{}
		if ring != nil {
			geoms[c] = orb.MultiPolygon{orb.Polygon{ring}}
		}
	}
	what := "its face"
	if m.Location == grid.OnNodes {
		what = "its node's median dual cell (edge midpoints joined through the face centroids round the node)"
	}
	return &Layer{Name: FootprintLayer, GeomType: "MULTIPOLYGON", Columns: r.Cells.Columns, Geoms: geoms,
		Description: "one polygon per cell of the mesh (" + what + ") with every column of cells.parquet, for selecting and querying cells by area (null: no result). " + r.Manifest.Caution}
}
