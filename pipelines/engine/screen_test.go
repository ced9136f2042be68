package engine

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/internal/parquetread"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/screening"
	"swellgrid/pipelines/tables"
)

// smallScreenRun writes a finished run directory by hand: the 5 x 3 regular
// grid of testdata/screening/fixture.json (lon -3, -2.5, -1.75, -1, 0.5;
// lat 58, 58.5, 59.25), with the cells.parquet columns the screening reads.
func smallScreenRun(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	lonAx := []float64{-3, -2.5, -1.75, -1, 0.5}
	latAx := []float64{58, 58.5, 59.25}
	nan := math.NaN()
	power := []float64{20, 25, 30, 35, 40, 10, 18, nan, 22, 50, 16, 17, 19, 21, 23}
	depth := []float64{60, 60, 60, 60, 60, 60, 60, 60, 200, 60, 20, 60, 60, 60, 60}
	var lon, lat, aep, avail, cf []float64
	var ids []int64
	flags := make([]string, 15)
	for j, y := range latAx {
		for i, x := range lonAx {
			lon, lat = append(lon, x), append(lat, y)
			ids = append(ids, int64(j*5+i))
		}
	}
	for i, p := range power {
		aep = append(aep, 100*p)
		avail = append(avail, 0.99-0.01*float64(i)) // invented availabilities for the delivered-energy test
		cf = append(cf, 100*p/(0.5*8766))           // a 500 kW device
		if i == 11 {
			aep[i] = nan
		}
	}
	flags[9] = "masked"
	writeScreenCells(t, dir, ids, lon, lat, depth, power, aep, avail, cf, flags)
	m := `{"software": "swellgrid", "caution": "test", "time_end": "2001-12-31T00:00:00Z",
 "grid": {"kind": "regular", "shape_ny_nx": [3, 5], "cells": 15, "masked_cells": 1, "bbox_lon_lat": [-3, 58, 0.5, 59.25]},
 "parameters": {"devices": [{"name": "wec"}]}, "columns": {}, "outputs": ["cells.parquet", "manifest.json"]}`
	if err := os.WriteFile(filepath.Join(dir, "manifest.json"), []byte(m), 0o644); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "exclusion.geojson"), []byte(`{"type": "FeatureCollection", "features": [
 {"type": "Feature", "properties": {"note": "invented test zone"}, "geometry": {"type": "Polygon", "coordinates": [[[-1.9, 57.9], [-1.6, 57.9], [-1.6, 58.1], [-1.9, 58.1], [-1.9, 57.9]]]}}]}`), 0o644)
	os.WriteFile(filepath.Join(dir, "ports.geojson"), []byte(`{"type": "FeatureCollection", "features": [
 {"type": "Feature", "properties": {"note": "invented test port"}, "geometry": {"type": "Point", "coordinates": [-3, 58]}}]}`), 0o644)
	os.WriteFile(filepath.Join(dir, "screen.toml"), []byte(`
[[screening.layer]]
name = "zone"
file = "exclusion.geojson"
[[screening.layer]]
name = "ports"
file = "ports.geojson"
[[screening.scenario]]
name = "core"
criteria = ["power_mean_kw_m >= 15", "depth_m between 30 and 150"]
exclude = ["zone"]
distance = [{layer = "ports", max_km = 150}]
device = "wec"
devices_per_km2 = 2
`), 0o644)
	return dir
}

// TestScreeningSummaryByHand: a scenario on the small grid against a hand
// computation. The passing cells, worked out by hand from the values above:
// row lat 58: cells 0, 1, 3 (cell 2's centre is in the zone, cell 4 is 207
// km from the port, over 150); row 58.5: cell 6 (5 has 10 kW/m, 7 no power,
// 8 is 200 m deep, 9 is masked and 211 km away); row 59.25: cell 11 (10 is
// 20 m deep, 12-14 are 156 km or more away; 11 is 142 km away). Cell areas
// are pyproj's (testdata/screening/reference.json, cell_area_m2, Geod
// polygon_area_perimeter), not ours.
func TestScreeningSummaryByHand(t *testing.T) {
	dir := smallScreenRun(t)
	files, _, err := screening.Rescreen(dir, filepath.Join(dir, "screen.toml"))
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("files: %v", files)
	var ref struct {
		Cells []float64 `json:"cell_area_m2"`
	}
	b, _ := os.ReadFile("../../testdata/screening/reference.json")
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	pass := map[int]bool{0: true, 1: true, 3: true, 6: true, 11: true}
	power := map[int]float64{0: 20, 1: 25, 3: 35, 6: 18, 11: 17}
	area, wp, energy := 0.0, 0.0, 0.0
	for id := range pass {
		a := ref.Cells[id] / 1e6
		area += a
		wp += a * power[id]
		if id != 11 { // no AEP there
			energy += a * 2 * 100 * power[id] / 1000
		}
	}
	var sum contract.ScreeningSummary
	sb, err := os.ReadFile(filepath.Join(dir, screening.File))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(sb, &sum); err != nil {
		t.Fatal(err)
	}
	s := sum.Scenarios[0]
	rel := func(name string, got *float64, want float64) {
		t.Helper()
		if got == nil || math.Abs(*got-want) > 1e-9*math.Abs(want) {
			if got == nil {
				t.Errorf("%s: null, by hand %v", name, want)
			} else {
				t.Errorf("%s: got %v, by hand %v", name, *got, want)
			}
		}
	}
	if s.Cells != 5 || s.CellsWithoutAEP != 1 {
		t.Errorf("cells passing %d (want 5), without AEP %d (want 1)", s.Cells, s.CellsWithoutAEP)
	}
	rel("area_km2", s.AreaKm2, area)
	rel("power_mean_kw_m", s.PowerMeanKWm, wp/area)
	rel("resource_mwh_per_m_yr", s.ResourceMWhPerMYr, wp/area*8.766)
	rel("power_min_kw_m", s.PowerMinKWm, 17)
	rel("power_max_kw_m", s.PowerMaxKWm, 35)
	rel("devices", s.Devices, 2*area)
	rel("annual_energy_gwh", s.AnnualEnergyGWh, energy)
	if sum.Caution != tables.Caution || len(sum.Layers) != 2 || len(sum.Layers[0].SHA256) != 64 {
		t.Errorf("summary: caution or layers missing: %+v", sum.Layers)
	}

	// screening.parquet, read back with the Arrow reader
	cols, err := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	for k, id := range cols["cell_id"] {
		i := int(id.(int64))
		if got := cols["pass"][k].(bool); got != pass[i] {
			t.Errorf("cell %d: pass %v, by hand %v (reasons %q)", i, got, pass[i], cols["reasons"][k])
		}
		if a := cols["area_km2"][k].(float64); math.Abs(a*1e6-ref.Cells[i]) > 1e-8*ref.Cells[i] {
			t.Errorf("cell %d: area %v km2, pyproj %v", i, a, ref.Cells[i]/1e6)
		}
	}
	for i, want := range map[int]string{
		2: "in zone", 4: "ports distance > 150 km", 5: "power_mean_kw_m >= 15",
		7: "power_mean_kw_m >= 15 (missing)", 8: "depth_m between 30 and 150", 9: "masked; ports distance > 150 km",
		10: "depth_m between 30 and 150", 12: "ports distance > 150 km",
	} {
		if got := cols["reasons"][i]; got != want {
			t.Errorf("cell %d: reasons %q, want %q", i, got, want)
		}
	}
	// the port distance of cell 0 is 0, of cell 11 about 142 km
	if d := cols["dist_ports_km"][0].(float64); d != 0 {
		t.Errorf("cell 0 is at the port, distance %v", d)
	}
	if d := cols["dist_ports_km"][11].(float64); math.Abs(d-142) > 2 {
		t.Errorf("cell 11: %v km to the port, about 142 by hand", d)
	}
	// the outline: the dissolved area equals the sum of the passing cells'
	var fc struct {
		Features []struct {
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	gb, err := os.ReadFile(filepath.Join(dir, "contours", "screening_core.geojson"))
	if err != nil {
		t.Fatal(err)
	}
	json.Unmarshal(gb, &fc)
	if len(fc.Features) != 1 || fc.Features[0].Properties["cells"] != 5.0 {
		t.Errorf("outline: %+v", fc.Features)
	}
	// the manifest records it
	mb, _ := os.ReadFile(filepath.Join(dir, "manifest.json"))
	for _, want := range []string{`"screening.parquet"`, `"contours/screening_core.geojson"`, `"power_mean_kw_m >= 15"`, sum.Layers[0].SHA256} {
		if !strings.Contains(string(mb), want) {
			t.Errorf("manifest lacks %s", want)
		}
	}
}

// Bad constraint files are refused (exit code 2) naming the file and what to do.
func TestScreeningBadLayers(t *testing.T) {
	dir := smallScreenRun(t)
	gj := func(geom string) string {
		return `{"type": "FeatureCollection", "features": [{"type": "Feature", "properties": {}, "geometry": ` + geom + `}]}`
	}
	for _, c := range []struct {
		name, body, want string
	}{
		{"bowtie.geojson", gj(`{"type": "Polygon", "coordinates": [[[0, 0], [1, 1], [1, 0], [0, 1], [0, 0]]]}`), "crosses itself"},
		{"open.geojson", gj(`{"type": "Polygon", "coordinates": [[[0, 0], [1, 0], [1, 1], [0, 1]]]}`), "not closed"},
		{"projected.geojson", gj(`{"type": "Polygon", "coordinates": [[[400000, 6400000], [410000, 6400000], [410000, 6410000], [400000, 6400000]]]}`), "reproject"},
		{"crs.geojson", `{"type": "FeatureCollection", "crs": {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::32630"}}, "features": []}`, "EPSG::32630"},
		{"empty.geojson", `{"type": "FeatureCollection", "features": []}`, "no features"},
		{"garbage.geojson", `not json`, "not GeoJSON"},
	} {
		p := filepath.Join(dir, c.name)
		os.WriteFile(p, []byte(c.body), 0o644)
		spec := filepath.Join(dir, "bad.toml")
		os.WriteFile(spec, []byte("[[screening.layer]]\nname = \"bad\"\nfile = \""+c.name+"\"\n[[screening.scenario]]\nname = \"s\"\nexclude = [\"bad\"]\n"), 0o644)
		_, _, err := screening.Rescreen(dir, spec)
		if err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), p) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: want exit 2 naming %s and %q, got %d: %v", c.name, p, c.want, fault.ExitCode(err), err)
		}
	}
	// a layer of lines cannot exclude; a criterion on an unknown column is refused
	os.WriteFile(filepath.Join(dir, "line.geojson"), []byte(gj(`{"type": "LineString", "coordinates": [[0, 0], [1, 1]]}`)), 0o644)
	for body, want := range map[string]string{
		"[[screening.layer]]\nname = \"l\"\nfile = \"line.geojson\"\n[[screening.scenario]]\nname = \"s\"\nexclude = [\"l\"]\n": "other than polygons",
		"[[screening.scenario]]\nname = \"s\"\ncriteria = [\"nope_m > 3\"]\n":                                                   "not a column",
		"[[screening.scenario]]\nname = \"s\"\ncriteria = [\"depth_m ~ 3\"]\n":                                                  "not a criterion",
	} {
		spec := filepath.Join(dir, "bad.toml")
		os.WriteFile(spec, []byte(body), 0o644)
		if _, _, err := screening.Rescreen(dir, spec); err == nil || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), want) {
			t.Errorf("want exit 2 with %q, got %v", want, err)
		}
	}
}

// writeScreenCells writes the cells.parquet of a screening test's run
// directory: one device ("wec") with its AEP, availability and capacity
// factor, the mean power, depth and qc flags of each cell.
func writeScreenCells(t *testing.T, dir string, ids []int64, lon, lat, depth, power, aep, avail, cf []float64, flags []string) {
	t.Helper()
	tb := &export.Table{Columns: []export.Column{
		export.Int64Column("cell_id", "1", "cell id", ids, nil),
		export.Float64Column("lon", "degree_east", "lon", lon),
		export.Float64Column("lat", "degree_north", "lat", lat),
		export.Float64Column("depth_m", "m", "depth", depth),
		export.Float64Column("power_mean_kw_m", "kW/m", "power", power),
		export.Float64Column("aep_wec_mwh", "MWh/yr", "aep", aep),
		export.Float64Column("availability_wec", "1", "availability", avail),
		export.Float64Column("cf_wec", "1", "capacity factor", cf),
		export.StringColumn("qc_flags", "", "flags", flags, nil),
	}}
	if err := export.WriteGeoParquet(filepath.Join(dir, "cells.parquet"), tb, lon, lat); err != nil {
		t.Fatal(err)
	}
}
