package engine

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/screening"
)

// connRef is testdata/dateline/connection_reference.json.
type connRef struct {
	NX, NY    int
	Ports     [][2]float64 `json:"ports"`
	Scenarios []struct {
		Name, Export string
		RouteFactor  float64 `json:"route_factor"`
		ArrayFactor  float64 `json:"array_factor"`
		Fixed, PerKm float64 `json:"-"`
	} `json:"scenarios"`
	Cells []struct {
		ID        int64 `json:"cell_id"`
		Lon, Lat  float64
		AEP       float64 `json:"aep_wec_mwh"`
		Avail     float64 `json:"availability_wec"`
		DistKm    float64 `json:"dist_km"`
		Scenarios map[string]struct {
			RouteKm   float64 `json:"route_km"`
			Loss      float64 `json:"loss_frac"`
			Delivered float64 `json:"delivered_mwh"`
		} `json:"scenarios"`
	} `json:"cells"`
}

// TestConnectionAcrossDateLine: cells on both sides of 180 degrees and a
// connection point across the date line from the western cells
// (testdata/dateline/connection_reference.py, whose output is reproduced
// here first). screening.parquet's route_km, loss_frac and delivered_mwh
// of an AC and a DC scenario (the defaults of stats/delivery, route
// factors 1.1 and 1.3) equal the reference's, computed from pyproj's
// geodesic (Geod.inv on WGS 84, Karney 2013) alone: within 1e-6 km of
// route (our Vincenty geodesic against Karney's) and the losses and energy
// that follow.
func TestConnectionAcrossDateLine(t *testing.T) {
	py := testtool.NeedPython(t, "pyproj")
	script := filepath.Join("..", "..", "testdata", "dateline", "connection_reference.py")
	out, err := exec.Command(py, script).Output()
	if err != nil {
		t.Fatalf("%s: %v", script, err)
	}
	stored, err := os.ReadFile(filepath.Join("..", "..", "testdata", "dateline", "connection_reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(out, stored) {
		t.Fatalf("connection_reference.json is not what %s writes today: regenerate it", script)
	}
	var ref connRef
	if err := json.Unmarshal(stored, &ref); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	n := len(ref.Cells)
	var lon, lat, aep, avail, cf, power, depth []float64
	var ids []int64
	flags := make([]string, n)
	for _, c := range ref.Cells {
		ids = append(ids, c.ID)
		lon, lat = append(lon, c.Lon), append(lat, c.Lat)
		aep, avail = append(aep, c.AEP), append(avail, c.Avail)
		cf = append(cf, c.AEP/(0.5*8766)) // a 500 kW device
		power, depth = append(power, 30), append(depth, 60)
	}
	writeScreenCells(t, dir, ids, lon, lat, depth, power, aep, avail, cf, flags)
	m := fmt.Sprintf(`{"software": "swellgrid", "caution": "test", "time_end": "2001-12-31T00:00:00Z",
 "grid": {"kind": "regular", "shape_ny_nx": [%d, %d], "cells": %d, "masked_cells": 0, "bbox_lon_lat": [179, 50, -179.5, 51]},
 "parameters": {"devices": [{"name": "wec"}]}, "columns": {}, "outputs": ["cells.parquet", "manifest.json"]}`, ref.NY, ref.NX, n)
	os.WriteFile(filepath.Join(dir, "manifest.json"), []byte(m), 0o644)
	ports := `{"type": "FeatureCollection", "features": [`
	for k, p := range ref.Ports {
		if k > 0 {
			ports += ","
		}
		ports += fmt.Sprintf(`{"type": "Feature", "properties": {"note": "invented connection point"}, "geometry": {"type": "Point", "coordinates": [%v, %v]}}`, p[0], p[1])
	}
	os.WriteFile(filepath.Join(dir, "ports.geojson"), []byte(ports+"]}"), 0o644)
	spec := "[[screening.layer]]\nname = \"ports\"\nfile = \"ports.geojson\"\n"
	for _, s := range ref.Scenarios {
		spec += fmt.Sprintf("[[screening.scenario]]\nname = %q\ncriteria = [\"power_mean_kw_m >= 10\"]\ndevice = \"wec\"\ndevices_per_km2 = 2\nconnection = \"ports\"\nexport = %q\nroute_factor = %v\narray_factor = %v\n",
			s.Name, s.Export, s.RouteFactor, s.ArrayFactor)
	}
	os.WriteFile(filepath.Join(dir, "conn.toml"), []byte(spec), 0o644)
	if _, _, err := screening.Rescreen(dir, filepath.Join(dir, "conn.toml")); err != nil {
		t.Fatal(err)
	}
	cols, err := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for k, id := range cols["cell_id"] {
		c := ref.Cells[id.(int64)]
		sc := cols["scenario"][k].(string)
		want, ok := c.Scenarios[sc]
		if !ok {
			t.Fatalf("scenario %s not in the reference", sc)
		}
		for _, chk := range []struct {
			name      string
			want, tol float64
		}{{"route_km", want.RouteKm, 1e-6}, {"loss_frac", want.Loss, 1e-9}, {"delivered_mwh", want.Delivered, 1e-6}} {
			got, _ := cols[chk.name][k].(float64)
			if !(math.Abs(got-chk.want) <= chk.tol) {
				t.Errorf("cell %d (%g E, %g N) %s %s: %.9f, pyproj reference %.9f", c.ID, c.Lon, c.Lat, sc, chk.name, got, chk.want)
			}
		}
		seen++
	}
	if seen != 2*n {
		t.Fatalf("%d rows, want %d", seen, 2*n)
	}
	// the western cells are nearer the point across the date line than
	// the far one (else the fixture would not test the crossing)
	if d := ref.Cells[0].DistKm; !(d < 200) {
		t.Fatalf("cell 0 is %v km from its connection: the nearest is not across the date line", d)
	}
}
