package export

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"swellgrid/internal/parquetread"
	"testing"

	"github.com/apache/arrow/go/v17/parquet/file"
	"github.com/paulmach/orb"
)

// sampleCells is an encoding fixture (not a physical result): n cells on a
// lon/lat lattice with columns of every kind and some nulls.
func sampleCells(n int) (*Table, []float64, []float64) {
	lon := make([]float64, n)
	lat := make([]float64, n)
	id := make([]int64, n)
	p := make([]float64, n)
	steps := make([]int64, n)
	stepsOK := make([]bool, n)
	flags := make([]string, n)
	ok := make([]bool, n)
	for k := 0; k < n; k++ {
		lon[k] = -30 + float64(k%100)*0.1
		lat[k] = 40 + float64(k/100)*0.1
		id[k] = int64(k)
		p[k] = float64(k) * 0.5
		if k%7 == 3 {
			p[k] = math.NaN()
		}
		steps[k] = int64(1000 + k)
		stepsOK[k] = k%5 != 0
		flags[k] = []string{"", "low_coverage", "gev_not_converged"}[k%3]
		ok[k] = k%2 == 0
	}
	return &Table{Columns: []Column{
		Int64Column("cell_id", "1", "cell id", id, nil),
		Float64Column("power_mean_kw_m", "kW/m", "mean wave power", p),
		Int64Column("steps", "1", "time steps used", steps, stepsOK),
		StringColumn("qc_flags", "", "quality flags", flags, nil),
		BoolColumn("converged", "", "fit converged", ok, nil),
	}, Meta: map[string]string{"swellgrid:scenario": "synthetic test fixture"}}, lon, lat
}

func readBack(t *testing.T, path string) (*file.Reader, map[string][]any) {
	t.Helper()
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	out, err := parquetread.Columns(path)
	if err != nil {
		t.Fatal(err)
	}
	return rdr, out
}

func TestGeoParquetRoundTrip(t *testing.T) {
	dir := t.TempDir()
	tab, lon, lat := sampleCells(250)
	tab.RowGroupRows = 100
	path := filepath.Join(dir, "cells.parquet")
	if err := WriteGeoParquet(path, tab, lon, lat); err != nil {
		t.Fatal(err)
	}
	rdr, cols := readBack(t, path)
	defer rdr.Close()
	if got := rdr.NumRowGroups(); got != 3 {
		t.Errorf("%d row groups, want 3 (250 rows, 100 per group)", got)
	}
	order := []string{}
	for k := 0; k < rdr.MetaData().Schema.NumColumns(); k++ {
		order = append(order, rdr.MetaData().Schema.Column(k).Name())
	}
	if want := "cell_id lon lat power_mean_kw_m steps qc_flags converged geometry"; strings.Join(order, " ") != want {
		t.Errorf("columns %v, want %s", order, want)
	}
	for k := 0; k < 250; k++ {
		if k%7 == 3 {
			if cols["power_mean_kw_m"][k] != nil {
				t.Fatalf("row %d: NaN not written as null", k)
			}
		} else if cols["power_mean_kw_m"][k] != float64(k)*0.5 {
			t.Fatalf("row %d: power %v", k, cols["power_mean_kw_m"][k])
		}
		if (cols["steps"][k] == nil) != (k%5 == 0) {
			t.Fatalf("row %d: steps null mismatch", k)
		}
		if cols["lon"][k] != lon[k] || cols["lat"][k] != lat[k] {
			t.Fatalf("row %d: lon/lat", k)
		}
		// WKB point per OGC Simple Features Access 1.2.1 section 8.2:
		// byte order 1 (little endian), uint32 type 1 (Point), float64 x, y.
		g := cols["geometry"][k].([]byte)
		want := make([]byte, 21)
		want[0] = 1
		want[1] = 1
		putF := func(b []byte, v float64) {
			u := math.Float64bits(v)
			for i := 0; i < 8; i++ {
				b[i] = byte(u >> (8 * i))
			}
		}
		putF(want[5:], lon[k])
		putF(want[13:], lat[k])
		if !bytes.Equal(g, want) {
			t.Fatalf("row %d: WKB %x, want %x", k, g, want)
		}
	}
	kv := rdr.MetaData().KeyValueMetadata()
	geo := kv.FindValue("geo")
	if geo == nil {
		t.Fatal("no geo metadata")
	}
	var gm struct {
		Version       string `json:"version"`
		PrimaryColumn string `json:"primary_column"`
		Columns       map[string]struct {
			Encoding      string    `json:"encoding"`
			GeometryTypes []string  `json:"geometry_types"`
			BBox          []float64 `json:"bbox"`
		} `json:"columns"`
	}
	if err := json.Unmarshal([]byte(*geo), &gm); err != nil {
		t.Fatal(err)
	}
	g := gm.Columns["geometry"]
	// GeoParquet 1.1.0 specification: version, primary_column, encoding WKB,
	// geometry_types, bbox [xmin, ymin, xmax, ymax].
	if gm.Version != "1.1.0" || gm.PrimaryColumn != "geometry" || g.Encoding != "WKB" || len(g.GeometryTypes) != 1 || g.GeometryTypes[0] != "Point" {
		t.Errorf("geo metadata %s", *geo)
	}
	if len(g.BBox) != 4 || g.BBox[0] != -30 || g.BBox[1] != 40 || g.BBox[2] != -30+99*0.1 || g.BBox[3] != 40+2*0.1 {
		t.Errorf("bbox %v", g.BBox)
	}
	if v := kv.FindValue(MetaCaution); v == nil || *v != ScreeningCaution {
		t.Error("caution missing from the metadata")
	}
	if v := kv.FindValue("swellgrid:scenario"); v == nil || *v != "synthetic test fixture" {
		t.Error("table Meta missing")
	}
	// Column statistics present (Parquet format: ColumnMetaData.statistics).
	rg := rdr.MetaData().RowGroup(0)
	cc, err := rg.ColumnChunk(3)
	if err != nil {
		t.Fatal(err)
	}
	if ok, _ := cc.StatsSet(); !ok {
		t.Error("no statistics on power_mean_kw_m")
	}
	if cc.Compression().String() != "ZSTD" {
		t.Errorf("compression %v, want ZSTD", cc.Compression())
	}
}

func TestParquetDeterministic(t *testing.T) {
	dir := t.TempDir()
	var sums []string
	for k := 0; k < 2; k++ {
		tab, lon, lat := sampleCells(3000)
		p := filepath.Join(dir, "cells"+string(rune('a'+k))+".parquet")
		if err := WriteGeoParquet(p, tab, lon, lat); err != nil {
			t.Fatal(err)
		}
		s, err := SHA256File(p)
		if err != nil {
			t.Fatal(err)
		}
		sums = append(sums, s)
	}
	if sums[0] != sums[1] {
		t.Errorf("same table, different bytes: %s vs %s", sums[0], sums[1])
	}
}

func TestWriteParquetLong(t *testing.T) {
	dir := t.TempDir()
	tab := &Table{Columns: []Column{
		Int64Column("cell_id", "1", "cell", []int64{0, 0, 1, 1}, nil),
		Int64Column("month", "1", "calendar month", []int64{1, 2, 1, 2}, nil),
		Float64Column("power_mean_kw_m", "kW/m", "monthly mean power", []float64{10, math.NaN(), 12, 13}),
	}}
	p := filepath.Join(dir, "monthly.parquet")
	if err := WriteParquet(p, tab); err != nil {
		t.Fatal(err)
	}
	rdr, cols := readBack(t, p)
	defer rdr.Close()
	if _, ok := cols["geometry"]; ok {
		t.Error("long table should have no geometry")
	}
	if rdr.MetaData().KeyValueMetadata().FindValue("geo") != nil {
		t.Error("long table should have no geo metadata")
	}
	if cols["power_mean_kw_m"][1] != nil || cols["power_mean_kw_m"][3] != 13.0 {
		t.Errorf("values %v", cols["power_mean_kw_m"])
	}
	// Empty table: valid file, zero rows.
	empty := &Table{Columns: []Column{Float64Column("x", "", "", []float64{})}}
	if err := WriteParquet(filepath.Join(dir, "empty.parquet"), empty); err != nil {
		t.Fatal(err)
	}
}

func TestTableErrors(t *testing.T) {
	dir := t.TempDir()
	bad := []*Table{
		{},
		{Columns: []Column{Float64Column("Bad Name", "", "", []float64{1})}},
		{Columns: []Column{Float64Column("a", "", "", []float64{1}), Float64Column("a", "", "", []float64{1})}},
		{Columns: []Column{Float64Column("a", "", "", []float64{1}), Float64Column("b", "", "", []float64{1, 2})}},
		{Columns: []Column{{Name: "a", Float64: []float64{1}, Int64: []int64{1}}}},
		{Columns: []Column{{Name: "a"}}},
		{Columns: []Column{Int64Column("a", "", "", []int64{1, 2}, []bool{true})}},
	}
	for k, tab := range bad {
		p := filepath.Join(dir, "t.parquet")
		if err := WriteParquet(p, tab); err == nil {
			t.Errorf("table %d accepted", k)
		}
		if _, err := os.Stat(p); err == nil {
			t.Fatalf("table %d: a file was left behind", k)
		}
	}
	tab, lon, lat := sampleCells(3)
	lon[1] = 200
	if err := WriteGeoParquet(filepath.Join(dir, "c.parquet"), tab, lon, lat); err == nil || !strings.Contains(err.Error(), "row 1") {
		t.Errorf("out-of-range lon: %v", err)
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "out.txt")
	if err := WriteFileAtomic(p, func(w io.Writer) error { _, err := io.WriteString(w, "first"); return err }); err != nil {
		t.Fatal(err)
	}
	// A failing writer leaves the old file untouched and no temporary file.
	boom := errors.New("boom")
	err := WriteFileAtomic(p, func(w io.Writer) error { io.WriteString(w, "half"); return boom })
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want boom", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "first" {
		t.Errorf("file replaced on error: %q", b)
	}
	// A failing writer never creates a new final name.
	q := filepath.Join(dir, "new.txt")
	WriteFileAtomic(q, func(w io.Writer) error { return boom })
	func() {
		defer func() { recover() }()
		WriteFileAtomic(q, func(w io.Writer) error { panic("writer panics") })
	}()
	if _, err := os.Stat(q); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("failed write created %s", q)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 {
		names := []string{}
		for _, e := range ents {
			names = append(names, e.Name())
		}
		t.Errorf("directory holds %v, want only out.txt", names)
	}
	st, _ := os.Stat(p)
	if st.Mode().Perm() != 0o644 {
		t.Errorf("mode %v", st.Mode())
	}
	if err := WriteFileAtomic(filepath.Join(dir, "missing", "x"), func(io.Writer) error { return nil }); err == nil {
		t.Error("missing directory accepted")
	}
}

// SHA-256 of "abc" is ba7816bf...15ad (FIPS 180-2, appendix B.1).
func TestSHA256File(t *testing.T) {
	p := filepath.Join(t.TempDir(), "abc")
	os.WriteFile(p, []byte("abc"), 0o644)
	got, err := SHA256File(p)
	if err != nil {
		t.Fatal(err)
	}
	if want := "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"; got != want {
		t.Errorf("sha256(abc) = %s, want %s", got, want)
	}
}

func TestWriteManifest(t *testing.T) {
	dir := t.TempDir()
	m := map[string]any{"zeta": 1, "alpha": []string{"a"}, "params": map[string]float64{"rho": 1025, "g": 9.81}}
	p := filepath.Join(dir, "manifest.json")
	if err := WriteManifest(p, m); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(p)
	want := "{\n  \"alpha\": [\n    \"a\"\n  ],\n  \"params\": {\n    \"g\": 9.81,\n    \"rho\": 1025\n  },\n  \"zeta\": 1\n}\n"
	if string(b) != want {
		t.Errorf("manifest:\n%s\nwant:\n%s", b, want)
	}
	if err := WriteManifest(filepath.Join(dir, "bad.json"), map[string]float64{"x": math.NaN()}); err == nil {
		t.Error("NaN accepted")
	}
	if _, err := os.Stat(filepath.Join(dir, "bad.json")); err == nil {
		t.Error("failed manifest left a file")
	}
}

func TestWriteContoursLayout(t *testing.T) {
	dir := t.TempDir()
	lines := []orb.MultiLineString{{{{0, 0}, {1, 1}}}, nil}
	sq := orb.Polygon{{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}}
	bands := []orb.MultiPolygon{{sq}, {}}
	err := WriteContours(dir, "power_mean_kw_m", "kW/m", []float64{10, 20}, lines, []float64{math.Inf(-1), 10, 20}, bands)
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Type     string `json:"type"`
		Name     string `json:"name"`
		Caution  string `json:"caution"`
		CRS      any    `json:"crs"`
		Features []struct {
			Geometry struct {
				Type        string          `json:"type"`
				Coordinates json.RawMessage `json:"coordinates"`
			} `json:"geometry"`
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	b, err := os.ReadFile(filepath.Join(dir, "contours", "power_mean_kw_m.bands.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	// RFC 7946: FeatureCollection, no "crs" member (section 4).
	if fc.Type != "FeatureCollection" || fc.CRS != nil || len(fc.Features) != 2 || fc.Caution == "" {
		t.Fatalf("bands layer: %s", b)
	}
	p0 := fc.Features[0].Properties
	if p0["lower"] != nil || p0["upper"] != 10.0 || p0["column"] != "power_mean_kw_m" || p0["units"] != "kW/m" {
		t.Errorf("band properties %v", p0)
	}
	if fc.Features[1].Geometry.Type != "MultiPolygon" || string(fc.Features[1].Geometry.Coordinates) != "[]" {
		t.Errorf("empty band geometry %s %s", fc.Features[1].Geometry.Type, fc.Features[1].Geometry.Coordinates)
	}
	// Mismatched inputs: error and no files for a new column.
	if err := WriteContours(dir, "hm0_mean_m", "m", []float64{1}, nil, nil, nil); err == nil {
		t.Error("levels without lines accepted")
	}
	if err := WriteContours(dir, "../evil", "m", nil, nil, nil, nil); err == nil {
		t.Error("path-like column name accepted")
	}
	if _, err := os.Stat(filepath.Join(dir, "contours", "hm0_mean_m.geojson")); err == nil {
		t.Error("failed call left a file")
	}
}
