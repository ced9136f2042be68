package engine

import (
	"database/sql"
	"encoding/json"
	"encoding/xml"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"
	"github.com/paulmach/orb/geojson"

	"swellgrid/export/contract"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/internal/parquetread"
	"swellgrid/pipelines/products"
	"swellgrid/pipelines/screening"
	"swellgrid/stats"
)

// lcoeRun is smallScreenRun with a site at cell 1 (-2.5 E, 58 N), screened
// with delivSpec (two scenarios with costs) and its report, atlas.nc and
// atlas.gpkg built. It returns the run directory and screening.parquet as
// read by Arrow's reader (parquetread, not the reader of the products).
func lcoeRun(t *testing.T) (string, map[string][]any) {
	t.Helper()
	dir := smallScreenRun(t)
	mp := filepath.Join(dir, "manifest.json")
	b, err := os.ReadFile(mp)
	if err != nil {
		t.Fatal(err)
	}
	m := strings.Replace(string(b), `"devices": [{"name": "wec"}]`, `"devices": [{"name": "wec"}], "sites": [{"name": "Point A", "lon": -2.5, "lat": 58}]`, 1)
	// what atlas.nc's global attributes need of a run's manifest
	m = strings.Replace(m, `"time_end"`, `"version": "test", "calendar": "standard", "time_start": "2001-01-01T00:00:00Z", "depth_source": "invented", "time_end"`, 1)
	if m == string(b) {
		t.Fatal("smallScreenRun's manifest changed: no devices to add a site beside")
	}
	os.WriteFile(mp, []byte(m), 0o644)
	os.WriteFile(filepath.Join(dir, "deliv.toml"), []byte(delivSpec), 0o644)
	if _, _, err := screening.Rescreen(dir, filepath.Join(dir, "deliv.toml")); err != nil {
		t.Fatal(err)
	}
	if _, _, err := products.Build(dir, nil, products.Products{Report: true, NetCDF: true, GeoPackage: true}); err != nil {
		t.Fatal(err)
	}
	cols, err := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	return dir, cols
}

// lcoeOf is scenario sc's lcoe_per_mwh per cell (15 cells; NaN: null).
func lcoeOf(cols map[string][]any, sc string) []float64 {
	v := make([]float64, 15)
	for i := range v {
		v[i] = math.NaN()
	}
	for k, id := range cols["cell_id"] {
		if cols["scenario"][k].(string) == sc && cols["lcoe_per_mwh"][k] != nil {
			v[id.(int64)] = cols["lcoe_per_mwh"][k].(float64)
		}
	}
	return v
}

// TestLCOELayers: the levelised cost per cell of each scenario (checked
// by hand in TestScreeningDeliveredByHand) reaches atlas.nc as the variable
// lcoe_per_mwh_<scenario> value for value (read with NetCDF-C), atlas.gpkg
// and contours/ as a band layer whose bands are the marching-squares bands
// (grid.Bands, itself checked against GDAL in grid's tests) of the
// screening.parquet values at the nice levels of their range, and the
// report as a map; each says that these are screening figures (the
// caution, stats.Caution, and contract.LCOENote).
func TestLCOELayers(t *testing.T) {
	dir, cols := lcoeRun(t)
	for _, sc := range []string{"far_dc", "near_ac"} {
		want := lcoeOf(cols, sc)
		name := contract.LCOELayer(sc)
		// atlas.nc, rows of ascending latitude as cell ids
		var got []float64
		var comment string
		err := ingest.WithNetCDF(func() error {
			ds, err := netcdf.OpenFile(filepath.Join(dir, "atlas.nc"), netcdf.NOWRITE)
			if err != nil {
				return err
			}
			defer ds.Close()
			v, err := ds.Var(name)
			if err != nil {
				return err
			}
			got = make([]float64, 15)
			if err := v.ReadFloat64s(got); err != nil {
				return err
			}
			n, err := v.Attr("comment").Len()
			if err != nil {
				return err
			}
			c := make([]byte, n)
			if err := v.Attr("comment").ReadBytes(c); err != nil {
				return err
			}
			comment = string(c)
			return nil
		})
		if err != nil {
			t.Fatalf("atlas.nc %s: %v", name, err)
		}
		finite := 0
		for i := range want {
			if !(got[i] == want[i] || math.IsNaN(got[i]) && math.IsNaN(want[i])) {
				t.Errorf("atlas.nc %s cell %d: %v, screening.parquet %v", name, i, got[i], want[i])
			}
			if !math.IsNaN(want[i]) {
				finite++
			}
		}
		if finite < 10 {
			t.Fatalf("%s: only %d cells with a levelised cost", sc, finite)
		}
		if !strings.Contains(comment, contract.LCOENote) || !strings.Contains(comment, "test") { // the manifest's caution ("test")
			t.Errorf("atlas.nc %s comment: %q", name, comment)
		}
		// the bands: grid.Bands of the parquet values, masked cell 9 left out
		lo, hi := math.Inf(1), math.Inf(-1)
		masked := make([]bool, 15)
		masked[9] = true
		for i, v := range want {
			if !math.IsNaN(v) && !masked[i] {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		levels := grid.NiceLevels(lo, hi, 8)
		edges := append(append([]float64{math.Inf(-1)}, levels...), math.Inf(1))
		lon := []float64{-3, -2.5, -1.75, -1, 0.5}
		var glon, glat []float64
		for _, y := range []float64{58, 58.5, 59.25} {
			for _, x := range lon {
				glon, glat = append(glon, x), append(glat, y)
			}
		}
		f, _ := grid.GeoField(5, 3, glon, glat, want, masked)
		bands, err := grid.Bands(f, edges)
		if err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(filepath.Join(dir, contract.ContourDir, contract.ContourBandsFile(name)))
		if err != nil {
			t.Fatal(err)
		}
		fc, err := geojson.UnmarshalFeatureCollection(b)
		if err != nil {
			t.Fatal(err)
		}
		if len(fc.Features) != len(bands) {
			t.Fatalf("%s: %d bands, want %d (levels %v)", name, len(fc.Features), len(bands), levels)
		}
		for k, ft := range fc.Features {
			lower, _ := ft.Properties["lower"].(float64)
			if k > 0 && lower != edges[k] {
				t.Errorf("%s band %d: lower %v, want %v", name, k, ft.Properties["lower"], edges[k])
			}
			if ft.Properties["units"] != contract.LCOEUnit {
				t.Errorf("%s band %d: units %v", name, k, ft.Properties["units"])
			}
			gotJ, _ := geojson.NewGeometry(ft.Geometry).MarshalJSON()
			wantJ, _ := geojson.NewGeometry(grid.CutPolygons(bands[k])).MarshalJSON()
			if string(gotJ) != string(wantJ) {
				t.Errorf("%s band %d: geometry differs from grid.Bands of screening.parquet", name, k)
			}
		}
		// atlas.gpkg: the layer with every band, the note and the caution
		db, err := sql.Open("sqlite", filepath.Join(dir, "atlas.gpkg"))
		if err != nil {
			t.Fatal(err)
		}
		var rows int
		var desc string
		if err := db.QueryRow(`SELECT COUNT(*) FROM "bands_` + name + `"`).Scan(&rows); err != nil {
			t.Fatalf("atlas.gpkg: %v", err)
		}
		if err := db.QueryRow(`SELECT description FROM gpkg_contents WHERE table_name = ?`, "bands_"+name).Scan(&desc); err != nil {
			t.Fatal(err)
		}
		var styles int
		db.QueryRow(`SELECT COUNT(*) FROM layer_styles WHERE f_table_name = ?`, "bands_"+name).Scan(&styles)
		db.Close()
		if rows != len(bands) || !strings.Contains(desc, contract.LCOENote) || !strings.Contains(desc, "test") || styles != 1 {
			t.Errorf("atlas.gpkg bands_%s: %d rows (want %d), %d styles, description %q", name, rows, len(bands), styles, desc)
		}
		// the report's map and its caption
		html, err := os.ReadFile(filepath.Join(dir, "report", "index.html"))
		if err != nil {
			t.Fatal(err)
		}
		if _, err := os.Stat(filepath.Join(dir, "report", "map_"+name+".svg")); err != nil {
			t.Errorf("report: no map of %s: %v", name, err)
		}
		if !strings.Contains(string(html), "map_"+name+".png") || !strings.Contains(string(html), "not investment advice") {
			t.Errorf("report: the map of %s or its note is missing", name)
		}
	}
	if !strings.Contains(contract.LCOENote, "not investment advice") || !strings.Contains(stats.Caution, "screening estimates") {
		t.Error("the notes changed their words")
	}
}

// svgBar is a filled rectangle of a figure: its fill and its lower and
// upper y (SVG units, the plot's y up).
type svgBar struct {
	fill   string
	y0, y1 float64
	x      float64
}

// svgBarsAndTexts parses an SVG document with encoding/xml and returns its
// rectangles filled with one of fills and its texts (in document order).
func svgBarsAndTexts(t *testing.T, b []byte, fills ...string) ([]svgBar, []string) {
	t.Helper()
	var doc struct {
		G struct {
			Paths []struct {
				D     string `xml:"d,attr"`
				Style string `xml:"style,attr"`
			} `xml:"path"`
			Texts []string `xml:"text"`
		} `xml:"g"`
	}
	if err := xml.Unmarshal(b, &doc); err != nil {
		t.Fatalf("SVG: %v", err)
	}
	num := regexp.MustCompile(`-?[0-9.]+(e-?[0-9]+)?`)
	var bars []svgBar
	for _, p := range doc.G.Paths {
		for _, f := range fills {
			if !strings.Contains(p.Style, "fill:"+f) {
				continue
			}
			xs := num.FindAllString(p.D, -1)
			if len(xs) != 8 {
				t.Fatalf("bar path %q is not a rectangle", p.D)
			}
			v := make([]float64, 8)
			for i, s := range xs {
				v[i], _ = strconv.ParseFloat(s, 64)
			}
			ys := []float64{v[1], v[3], v[5], v[7]}
			sort.Float64s(ys)
			bars = append(bars, svgBar{f, ys[0], ys[3], (v[0] + v[2]) / 2})
		}
	}
	return bars, doc.G.Texts
}

// TestWaterfallAgainstParquet: the site's waterfall figure of each scenario
// (report/site_point_a_waterfall_<k>.svg, parsed with encoding/xml) draws
// five bars, each against screening.parquet's row of the site's cell (read
// by Arrow's reader), worked out here: the AEP bar 0..aep_mwh, the array
// factor's loss aep x array_factor..aep, availability's aep x af x
// availability..aep x af, the export loss delivered_mwh..aep x af x
// availability, and the delivered bar 0..delivered_mwh. Heights are read
// in the plot's own scale (the AEP bar's top is aep_mwh, its foot 0) to the
// SVG's 5 significant digits; the labels above the bars say the energies.
func TestWaterfallAgainstParquet(t *testing.T) {
	dir, cols := lcoeRun(t)
	k := 0
	for r, id := range cols["cell_id"] {
		if id.(int64) != 1 {
			continue
		}
		k++
		f := func(n string) float64 { return cols[n][r].(float64) }
		aep, af, av, loss, del := f("aep_mwh"), f("array_factor"), f("availability"), f("loss_frac"), f("delivered_mwh")
		if math.Abs(aep*af*av*(1-loss)-del) > 1e-9*del {
			t.Fatalf("screening.parquet row %d: delivered %v is not the product of its factors", r, del)
		}
		want := [][2]float64{{0, aep}, {aep * af, aep}, {aep * af * av, aep * af}, {del, aep * af * av}, {0, del}}
		b, err := os.ReadFile(filepath.Join(dir, "report", "site_point_a_waterfall_"+strconv.Itoa(k)+".svg"))
		if err != nil {
			t.Fatal(err)
		}
		bars, texts := svgBarsAndTexts(t, b, "#3B528B", "#D62728")
		if len(bars) != 5 {
			t.Fatalf("waterfall %d: %d bars, want 5", k, len(bars))
		}
		sort.Slice(bars, func(i, j int) bool { return bars[i].x < bars[j].x })
		base, scale := bars[0].y0, aep/(bars[0].y1-bars[0].y0)
		for j, w := range want {
			lo, hi := (bars[j].y0-base)*scale, (bars[j].y1-base)*scale
			tol := 2e-4 * aep
			if math.Abs(lo-w[0]) > tol || math.Abs(hi-w[1]) > tol {
				t.Errorf("waterfall %s bar %d: %.3f..%.3f MWh/yr, screening.parquet gives %.3f..%.3f", cols["scenario"][r], j, lo, hi, w[0], w[1])
			}
			wantFill := "#D62728"
			if j == 0 || j == 4 {
				wantFill = "#3B528B"
			}
			if bars[j].fill != wantFill {
				t.Errorf("waterfall bar %d: fill %s", j, bars[j].fill)
			}
		}
		joined := "|" + strings.Join(texts, "|") + "|"
		for _, l := range []string{strconv.FormatFloat(aep, 'g', 4, 64), strconv.FormatFloat(del, 'g', 4, 64), "-" + strconv.FormatFloat(aep-aep*af, 'g', 4, 64)} {
			if !strings.Contains(joined, "|"+l+"|") {
				t.Errorf("waterfall %d: no label %s among %v", k, l, texts)
			}
		}
	}
	if k != 2 {
		t.Fatalf("%d scenarios at the site's cell, want 2", k)
	}
}

// TestSpacingInWidths: a layout spaced 10 device widths along and 20
// across the waves, for a device 12.5 m wide (the run's manifest), is 125
// m by 250 m: 1e6 / (125 x 250) = 32 devices per km2 by hand, as
// devices_per_km2 = 32 gives; without a width it is refused.
func TestSpacingInWidths(t *testing.T) {
	dir := smallScreenRun(t)
	mp := filepath.Join(dir, "manifest.json")
	b, _ := os.ReadFile(mp)
	os.WriteFile(mp, []byte(strings.Replace(string(b), `{"name": "wec"}`, `{"name": "wec", "width_m": 12.5}`, 1)), 0o644)
	spec := strings.Replace(strings.Replace(delivSpec, "spacing_along_m = 200", "spacing_along_widths = 10", 1), "spacing_across_m = 250", "spacing_across_widths = 20", 1)
	os.WriteFile(filepath.Join(dir, "w.toml"), []byte(spec), 0o644)
	if _, _, err := screening.Rescreen(dir, filepath.Join(dir, "w.toml")); err != nil {
		t.Fatal(err)
	}
	var sum contract.ScreeningSummary
	b, _ = os.ReadFile(filepath.Join(dir, screening.File))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	sc := sum.Scenarios[0]
	if sc.Name != "far_dc" || math.Abs(sc.DevicesPerKm2-32) > 1e-12 || sc.AreaKm2 == nil || sc.Devices == nil || math.Abs(*sc.Devices-32**sc.AreaKm2) > 1e-9**sc.Devices {
		t.Errorf("%s: %v devices per km2 (by hand 32), %v devices over %v km2", sc.Name, sc.DevicesPerKm2, sc.Devices, sc.AreaKm2)
	}
	// the same layout by density: the same delivered energy and cost
	byW, _ := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	os.WriteFile(filepath.Join(dir, "d.toml"), []byte(strings.Replace(strings.Replace(delivSpec, "spacing_along_m = 200", "devices_per_km2 = 32", 1), "spacing_across_m = 250\n", "", 1)), 0o644)
	if _, _, err := screening.Rescreen(dir, filepath.Join(dir, "d.toml")); err != nil {
		t.Fatal(err)
	}
	byD, _ := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	for k := range byD["lcoe_per_mwh"] {
		if byD["lcoe_per_mwh"][k] != byW["lcoe_per_mwh"][k] {
			t.Errorf("row %d: LCOE %v with spacing in widths, %v with the same density", k, byW["lcoe_per_mwh"][k], byD["lcoe_per_mwh"][k])
		}
	}
	plain := smallScreenRun(t) // a run whose device states no width
	os.WriteFile(filepath.Join(plain, "w.toml"), []byte(spec), 0o644)
	if _, _, err := screening.Rescreen(plain, filepath.Join(plain, "w.toml")); err == nil || !strings.Contains(err.Error(), "width_m") {
		t.Errorf("spacing in widths without a width: %v, want a refusal naming width_m", err)
	}
}
