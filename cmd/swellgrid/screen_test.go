package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/export"
)

// swellgrid screen: a bad constraint file exits 2 naming the file; so do a
// directory that is no finished run and a missing --spec.
func TestScreenCommandRefusals(t *testing.T) {
	dir := t.TempDir()
	lon, lat := []float64{0, 1, 0, 1}, []float64{50, 50, 51, 51}
	tb := &export.Table{Columns: []export.Column{
		export.Int64Column("cell_id", "1", "cell id", []int64{0, 1, 2, 3}, nil),
		export.Float64Column("lon", "degree_east", "lon", lon),
		export.Float64Column("lat", "degree_north", "lat", lat),
		export.Float64Column("power_mean_kw_m", "kW/m", "power", []float64{10, 20, 30, 40}),
	}}
	if err := export.WriteGeoParquet(filepath.Join(dir, "cells.parquet"), tb, lon, lat); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "manifest.json"), []byte(`{"grid": {"kind": "regular", "shape_ny_nx": [2, 2]}, "outputs": []}`), 0o644)
	bad := filepath.Join(dir, "bowtie.geojson")
	os.WriteFile(bad, []byte(`{"type": "Feature", "properties": {}, "geometry": {"type": "Polygon", "coordinates": [[[0, 0], [1, 1], [1, 0], [0, 1], [0, 0]]]}}`), 0o644)
	spec := filepath.Join(dir, "s.toml")
	os.WriteFile(spec, []byte("[[screening.layer]]\nname = \"z\"\nfile = \"bowtie.geojson\"\n[[screening.scenario]]\nname = \"a\"\nexclude = [\"z\"]\n"), 0o644)
	good := filepath.Join(dir, "good.toml")
	os.WriteFile(good, []byte("[[screening.scenario]]\nname = \"a\"\ncriteria = [\"power_mean_kw_m >= 25\"]\n"), 0o644)
	for _, c := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"screen", dir, "--spec", spec}, 2, bad},
		{[]string{"screen", t.TempDir(), "--spec", good}, 2, "not a finished run"},
		{[]string{"screen", dir}, 2, "--spec"},
		{[]string{"screen", dir, "--spec", good}, 0, ""},
	} {
		var stderr bytes.Buffer
		code := mainCode(c.args, &stderr)
		if code != c.code || !strings.Contains(stderr.String(), c.want) {
			t.Errorf("%v: exit %d (want %d), stderr %q (want %q)", c.args, code, c.code, stderr.String(), c.want)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "screening.parquet")); err != nil {
		t.Errorf("the good spec wrote no screening.parquet: %v", err)
	}
}
