package engine

import (
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
)

// gmRef is testdata/gridmapping/reference.json: the longitudes and latitudes
// pyproj (Debian's python3-pyproj) gives every node of the projected and
// the rotated fixture (make_fixtures.py), row-major (y, x).
type gmRef struct {
	Lon, Lat, X, Y []float64
}

func readGMRef(t *testing.T) map[string]gmRef {
	t.Helper()
	b, err := os.ReadFile("../../testdata/gridmapping/reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref map[string]gmRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	return ref
}

// A hindcast on a projected (transverse Mercator) or rotated-pole native
// grid, with or without 2-D lat/lon, written by python3-netcdf4
// (testdata/gridmapping/make_fixtures.py): the run ends with exit 0; every
// cell's longitude and latitude equal pyproj's (1e-9 degree) where swellgrid
// computed them with PROJ, and every other column of cells.parquet equals
// the run of the same values on the plain lon/lat twin (1e-9 relative: the
// computation per cell does not depend on the grid); the manifest records
// the grid mapping; atlas.nc is on the native grid: GDAL (gdalinfo, Debian
// gdal-bin) finds the model's CRS and a geotransform whose origin and pixel
// size are the native axes' (first edge, spacing).
func TestGridMappingNativeGrids(t *testing.T) {
	gdal := testtool.Need(t, "gdalinfo", "gdal-bin")
	ref := readGMRef(t)
	tmp := t.TempDir()
	runs := map[string]string{}
	for _, name := range []string{"tm_latlon", "tm_xy", "rotated", "lonlat_tm", "lonlat_rot"} {
		dir := filepath.Join(tmp, name)
		s := clSpec([]string{filepath.Join("..", "..", "testdata", "gridmapping", name)}, dir)
		s.Output.Report = false
		clRun(t, s, Options{})
		runs[name] = dir
	}
	cols := func(name string) map[string][]any {
		c, err := parquetread.Columns(filepath.Join(runs[name], "cells.parquet"))
		if err != nil {
			t.Fatal(err)
		}
		return c
	}
	for _, c := range []struct{ run, twin, ref, crsWord string }{
		{"tm_latlon", "lonlat_tm", "tm", `(?i)transverse[ _]mercator`},
		{"tm_xy", "lonlat_tm", "tm", `(?i)transverse[ _]mercator`},
		{"rotated", "lonlat_rot", "rotated", `(?i)rotat|ob_tran`},
	} {
		got, want, r := cols(c.run), cols(c.twin), ref[c.ref]
		if len(got["lon"]) != 35 {
			t.Fatalf("%s: %d cells, want 35", c.run, len(got["lon"]))
		}
		for k := range got["lon"] {
			lon, lat := got["lon"][k].(float64), got["lat"][k].(float64)
			if math.Abs(lon-r.Lon[k]) > 1e-9 || math.Abs(lat-r.Lat[k]) > 1e-9 {
				t.Errorf("%s cell %d: (%.12f, %.12f), pyproj (%.12f, %.12f)", c.run, k, lon, lat, r.Lon[k], r.Lat[k])
			}
		}
		compared := 0
		for name, vals := range want {
			if name == "geometry" {
				continue
			}
			for k, w := range vals {
				g := got[name][k]
				wf, okw := w.(float64)
				gf, okg := g.(float64)
				if okw && okg {
					if math.Abs(wf-gf) > 1e-9*math.Max(1, math.Abs(wf)) && !(math.IsNaN(wf) && math.IsNaN(gf)) {
						t.Errorf("%s cell %d %s: %v, lon/lat twin %v", c.run, k, name, g, w)
					}
				} else if g != w {
					t.Errorf("%s cell %d %s: %v, lon/lat twin %v", c.run, k, name, g, w)
				}
				compared++
			}
		}
		m, err := os.ReadFile(filepath.Join(runs[c.run], "manifest.json"))
		if err != nil {
			t.Fatal(err)
		}
		var man struct {
			Grid struct {
				Mapping *struct {
					Name     string `json:"grid_mapping_name"`
					Proj     string `json:"proj_definition"`
					Computed bool   `json:"lon_lat_computed"`
				} `json:"grid_mapping"`
			} `json:"grid"`
		}
		json.Unmarshal(m, &man)
		if man.Grid.Mapping == nil || man.Grid.Mapping.Name == "" || man.Grid.Mapping.Computed != (c.run != "tm_latlon") {
			t.Errorf("%s: manifest grid_mapping %+v", c.run, man.Grid.Mapping)
		}
		out, err := exec.Command(gdal, "NETCDF:"+filepath.Join(runs[c.run], "atlas.nc")+":power_mean_kw_m").CombinedOutput()
		if err != nil {
			t.Fatalf("gdalinfo %s: %v\n%s", c.run, err, out)
		}
		s := string(out)
		if !regexp.MustCompile(c.crsWord).MatchString(s) {
			t.Errorf("%s: gdalinfo shows no %s CRS:\n%s", c.run, c.crsWord, s)
		}
		mo := regexp.MustCompile(`Origin = \(([-0-9.e+]+),([-0-9.e+]+)\)`).FindStringSubmatch(s)
		mp := regexp.MustCompile(`Pixel Size = \(([-0-9.e+]+),([-0-9.e+]+)\)`).FindStringSubmatch(s)
		if mo == nil || mp == nil {
			t.Errorf("%s: gdalinfo finds no geotransform:\n%s", c.run, s)
			continue
		}
		ox, _ := strconv.ParseFloat(mo[1], 64)
		px, _ := strconv.ParseFloat(mp[1], 64)
		scale := 1.0 // atlas.nc's projected axes are in metres whatever the input's unit (tm_xy: km)
		dx := (r.X[1] - r.X[0]) * scale
		if math.Abs(px-dx) > 1e-9*math.Abs(dx) || math.Abs(ox-(r.X[0]*scale-dx/2)) > 1e-6*math.Abs(dx) {
			t.Errorf("%s: geotransform origin x %v, pixel %v; native axis from %v by %v", c.run, ox, px, r.X[0]*scale, dx)
		}
		// every contour layer valid under GEOS (shapely), RFC 7946, and the
		// same as the lon/lat twin's
		py := testtool.NeedPython(t, "shapely")
		cout, err := exec.Command(py, "../../testdata/gridmapping/check_contours.py", runs[c.run], runs[c.twin]).Output()
		if err != nil {
			t.Fatalf("check_contours.py %s: %v", c.run, err)
		}
		var feats []struct {
			File         string
			Feature      int
			Valid        bool
			Why          string
			RFC          []string
			Diff, Scale  float64
			Features     int
			TwinFeatures int `json:"twin_features"`
		}
		if err := json.Unmarshal(cout, &feats); err != nil {
			t.Fatalf("check_contours.py: %v", err)
		}
		for _, f := range feats {
			if !f.Valid || len(f.RFC) > 0 || f.Diff > 1e-9*math.Max(1, f.Scale) || f.Features != f.TwinFeatures {
				t.Errorf("%s contours/%s feature %d: valid %v (%s), RFC 7946 %v, differs from the twin by %g of %g (%d vs %d features)", c.run, f.File, f.Feature, f.Valid, f.Why, f.RFC, f.Diff, f.Scale, f.Features, f.TwinFeatures)
			}
		}
		if len(feats) < 10 {
			t.Errorf("%s: only %d contour features checked", c.run, len(feats))
		}
		// QGIS opens the raster in the model's CRS, on the native axes, and
		// draws it (a picture of more than one colour, kept)
		q := runcheck.OpenInQGIS(t, filepath.Join(runs[c.run], "atlas.nc"), "power_mean_kw_m", "atlas_nc_"+c.run+"_qgis")
		if !q.Valid || !q.CRSValid || !regexp.MustCompile(c.crsWord).MatchString(q.WKT) || q.Width != 7 || q.Height != 5 {
			t.Errorf("%s: QGIS layer valid %v, CRS valid %v (%.80s...), %d x %d", c.run, q.Valid, q.CRSValid, q.WKT, q.Width, q.Height)
		} else if math.Abs(q.Extent[0]-(r.X[0]*scale-dx/2)) > 1e-6*math.Abs(dx) || q.Colours < 3 {
			t.Errorf("%s: QGIS extent %v (native axis from %v by %v), %d colours drawn", c.run, q.Extent, r.X[0]*scale, dx, q.Colours)
		}
		t.Logf("%s: %d values equal to the lon/lat twin, %d contour features valid and RFC 7946 like the twin's; gdalinfo: origin x %v, pixel %v, CRS %s; QGIS extent %v, %d colours (%s)", c.run, compared, len(feats), ox, px, c.crsWord, q.Extent, q.Colours, q.PNG)
	}
}

// A grid mapping swellgrid cannot read (sinusoidal without crs_wkt) is
// refused before computing, naming the mapping and what would work.
func TestGridMappingRefused(t *testing.T) {
	s := clSpec([]string{filepath.Join("..", "..", "testdata", "gridmapping", "bad_mapping")}, filepath.Join(t.TempDir(), "out"))
	_, err := Run(t.Context(), s, Options{Version: "test"})
	if err == nil {
		t.Fatal("a sinusoidal grid mapping was accepted")
	}
	for _, want := range []string{"sinusoidal", "crs_wkt", "bad_mapping_2001-01.nc"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("message lacks %q: %v", want, err)
		}
	}
}
