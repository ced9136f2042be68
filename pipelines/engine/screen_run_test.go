package engine

import (
	"bytes"
	"database/sql"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/testtool"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/screening"
)

// TestScreeningInRun: a run whose spec has a [screening] section writes the
// screening (manifest, gpkg layer), and `swellgrid screen` with the same
// section rewrites screening.parquet byte for byte. The within layer is a
// GeoPackage written by GDAL's ogr2ogr (not by us).
func TestScreeningInRun(t *testing.T) {
	ogr := testtool.Need(t, "ogr2ogr", "gdal-bin")
	out := t.TempDir()
	lay := t.TempDir()
	s := testSpec(t, "testdata/bulk_monthly", out)
	s.Output.Report = false
	s.Output.NetCDF = false
	os.WriteFile(filepath.Join(lay, "zone.geojson"), []byte(`{"type": "FeatureCollection", "features": [
 {"type": "Feature", "properties": {"note": "invented"}, "geometry": {"type": "Polygon", "coordinates": [[[-180, -89], [0, -89], [180, -89], [180, 89], [0, 89], [-180, 89], [-180, -89]]]}}]}`), 0o644)
	gpkg := filepath.Join(lay, "zone.gpkg")
	if b, err := exec.Command(ogr, "-f", "GPKG", "-nln", "zone", gpkg, filepath.Join(lay, "zone.geojson")).CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr: %v\n%s", err, b)
	}
	os.WriteFile(filepath.Join(lay, "pt.geojson"), []byte(`{"type": "Feature", "properties": {}, "geometry": {"type": "Point", "coordinates": [0, 0]}}`), 0o644)
	s.Screening = &runspec.ScreeningSpec{
		Layers:    []runspec.ScreenLayerSpec{{Name: "zone", File: gpkg, Table: "zone"}, {Name: "pt", File: filepath.Join(lay, "pt.geojson")}},
		Scenarios: []runspec.ScenarioSpec{{Name: "all", Criteria: []string{"power_mean_kw_m > 0"}, Within: []string{"zone"}, Distance: []runspec.DistanceRule{{Layer: "pt", MinKm: 1}}}},
	}
	mustRun(t, s)
	first, err := os.ReadFile(filepath.Join(out, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	m, _ := os.ReadFile(filepath.Join(out, "manifest.json"))
	for _, want := range []string{`"screening": {`, `"screening.parquet"`, "contours/screening_all.geojson", "zone.gpkg"} {
		if !bytes.Contains(m, []byte(want)) {
			t.Errorf("manifest lacks %s", want)
		}
	}
	db, err := sql.Open("sqlite", filepath.Join(out, "atlas.gpkg"))
	if err != nil {
		t.Fatal(err)
	}
	var n int
	if err := db.QueryRow(`SELECT count(*) FROM gpkg_contents WHERE table_name = 'screening_all'`).Scan(&n); err != nil || n != 1 {
		t.Errorf("atlas.gpkg has no layer screening_all: %v", err)
	}
	db.Close()
	spec := filepath.Join(lay, "screen.toml")
	os.WriteFile(spec, []byte(`[[screening.layer]]
name = "zone"
file = "zone.gpkg"
table = "zone"
[[screening.layer]]
name = "pt"
file = "pt.geojson"
[[screening.scenario]]
name = "all"
criteria = ["power_mean_kw_m > 0"]
within = ["zone"]
distance = [{layer = "pt", min_km = 1}]
`), 0o644)
	if _, _, err := screening.Rescreen(out, spec); err != nil {
		t.Fatal(err)
	}
	again, _ := os.ReadFile(filepath.Join(out, "screening.parquet"))
	if !bytes.Equal(first, again) {
		t.Error("swellgrid screen with the run's own [screening] wrote a different screening.parquet")
	}
	m2, _ := os.ReadFile(filepath.Join(out, "manifest.json"))
	if !bytes.Contains(m2, []byte(`"screening": {`)) || strings.Count(string(m2), `"screening.parquet"`) < 2 {
		t.Errorf("rescreened manifest lacks the screening")
	}
	// a GeoPackage in another CRS is refused naming the file
	utm := filepath.Join(lay, "utm.gpkg")
	if b, err := exec.Command(ogr, "-f", "GPKG", "-t_srs", "EPSG:32631", "-nln", "zone", utm, filepath.Join(lay, "pt.geojson")).CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr: %v\n%s", err, b)
	}
	os.WriteFile(spec, []byte("[[screening.layer]]\nname = \"u\"\nfile = \"utm.gpkg\"\n[[screening.scenario]]\nname = \"s\"\ndistance = [{layer = \"u\", max_km = 5}]\n"), 0o644)
	_, _, err = screening.Rescreen(out, spec)
	if err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), utm) || !strings.Contains(err.Error(), "EPSG:32631") {
		t.Errorf("a UTM GeoPackage: want exit 2 naming %s and its CRS, got %v", utm, err)
	}
}
