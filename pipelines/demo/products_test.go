package demo

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/products"
)

// needTool finds an outside program (testtool.Need: a skip, or a failure under CI).
func needTool(t *testing.T, name, deb string) string {
	t.Helper()
	return testtool.Need(t, name, deb)
}

var demoOnce struct {
	sync.Once
	dir string
	res *Result
	err error
}

// demoRun runs the demo once for the tests of this file, in a directory
// kept until the process ends.
func demoRun(t *testing.T) (string, *Result) {
	t.Helper()
	if testing.Short() {
		t.Skip("the demo takes a minute or two")
	}
	demoOnce.Do(func() {
		demoOnce.dir, demoOnce.err = os.MkdirTemp("", "swellgrid-products-")
		if demoOnce.err == nil {
			demoOnce.res, demoOnce.err = Run(context.Background(), demoOnce.dir, engine.Options{Version: "test"})
		}
	})
	if demoOnce.err != nil {
		t.Fatal(demoOnce.err)
	}
	return demoOnce.dir, demoOnce.res
}

func TestMain(m *testing.M) {
	code := m.Run()
	if demoOnce.dir != "" {
		os.RemoveAll(demoOnce.dir)
	}
	os.Exit(code)
}

// cellsOf reads cells.parquet with the Arrow reader (independent of the
// products' reader).
func cellsOf(t *testing.T, dir string) map[string][]any {
	t.Helper()
	c, err := parquetread.Columns(filepath.Join(dir, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// The run lists its products in the manifest and in its result.
func TestProductsListed(t *testing.T) {
	dir, res := demoRun(t)
	grid := filepath.Join(dir, "atlas-grid")
	var m struct {
		Outputs []string `json:"outputs"`
	}
	b, err := os.ReadFile(filepath.Join(grid, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"atlas.nc", "atlas.gpkg", filepath.Join("report", "index.html"), "cells.parquet", "manifest.json"} {
		found := false
		for _, o := range m.Outputs {
			found = found || o == want
		}
		if !found {
			t.Errorf("manifest outputs %v lack %s", m.Outputs, want)
		}
		found = false
		for _, o := range append(res.Runs[0].Result.Files, "manifest.json") {
			found = found || o == want
		}
		if !found {
			t.Errorf("run result files lack %s", want)
		}
	}
	for _, o := range m.Outputs {
		if _, err := os.Stat(filepath.Join(grid, o)); err != nil {
			t.Errorf("manifest lists %s, not in the run directory", o)
		}
	}
	// the point set has no raster, and says so
	pts := res.Runs[1].Result
	if _, err := os.Stat(filepath.Join(pts.OutDir, "atlas.nc")); err == nil {
		t.Error("atlas.nc written for a point set")
	}
	if !strings.Contains(strings.Join(pts.Warnings, "\n"), "no atlas.nc") {
		t.Errorf("point set run: no warning about the missing raster in %v", pts.Warnings)
	}
}

// atlas.nc read by Debian's python3-xarray (an independent CF reader): every
// numeric column of cells.parquet is a (lat, lon) variable equal to it, with
// CF units, the schema's standard_name and cell_methods, and the WGS 84 grid
// mapping; the calendar-month climatology equals monthly.parquet.
func TestAtlasNCWithXarray(t *testing.T) {
	dir, _ := demoRun(t)
	grid := filepath.Join(dir, "atlas-grid")
	checkAtlasNC(t, grid, "regular")
}

func checkAtlasNC(t *testing.T, run, kind string) {
	py := testtool.NeedPython(t, "xarray")
	out, err := exec.Command(py, "../../testdata/report/read_atlas_nc.py", filepath.Join(run, "atlas.nc")).Output()
	if err != nil {
		t.Fatalf("xarray: %v", err)
	}
	var nc struct {
		Dims   map[string]int       `json:"dims"`
		Coords map[string][]float64 `json:"coords"`
		Attrs  map[string]string    `json:"attrs"`
		Vars   map[string]struct {
			Dims   []string          `json:"dims"`
			Attrs  map[string]string `json:"attrs"`
			Values []*float64        `json:"values"`
		} `json:"vars"`
	}
	if err := json.Unmarshal(out, &nc); err != nil {
		t.Fatal(err)
	}
	cells := cellsOf(t, run)
	lon, lat := cells["lon"], cells["lat"]
	n := len(lon)
	if nc.Attrs["Conventions"] != "CF-1.8" {
		t.Errorf("Conventions = %q", nc.Attrs["Conventions"])
	}
	if crs, ok := nc.Vars["crs"]; !ok || crs.Attrs["grid_mapping_name"] != "latitude_longitude" || crs.Attrs["semi_major_axis"] != "6378137.0" || crs.Attrs["inverse_flattening"] != "298.257223563" {
		t.Errorf("grid mapping: %v", nc.Vars["crs"].Attrs)
	}
	// coordinates: regular grids have 1-D axes, rows of ascending latitude
	if kind == "regular" {
		nx, ny := nc.Dims["lon"], nc.Dims["lat"]
		if nx*ny != n {
			t.Fatalf("atlas.nc is %d x %d, cells.parquet has %d rows", ny, nx, n)
		}
		for k := 0; k < n; k++ {
			if nc.Coords["lon"][k%nx] != runcheck.Num(lon[k]) || nc.Coords["lat"][k/nx] != runcheck.Num(lat[k]) {
				t.Fatalf("cell %d at (%v, %v), atlas.nc (%v, %v)", k, lon[k], lat[k], nc.Coords["lon"][k%nx], nc.Coords["lat"][k/nx])
			}
		}
	} else {
		for k := 0; k < n; k++ {
			if !runcheck.SameNum(nc.Coords["lon"][k], runcheck.Num(lon[k])) || !runcheck.SameNum(nc.Coords["lat"][k], runcheck.Num(lat[k])) {
				t.Fatalf("cell %d at (%v, %v), atlas.nc (%v, %v)", k, lon[k], lat[k], nc.Coords["lon"][k], nc.Coords["lat"][k])
			}
		}
	}
	checked := 0
	for name, col := range cells {
		if name == "lon" || name == "lat" || name == "geometry" || name == "qc_flags" {
			continue
		}
		if len(col) > 0 {
			if _, text := col[0].(string); text {
				continue // text columns (station name) are not raster variables
			}
		}
		v, ok := nc.Vars[name]
		if !ok {
			t.Errorf("atlas.nc lacks the numeric column %s", name)
			continue
		}
		if v.Attrs["grid_mapping"] != "crs" || v.Attrs["long_name"] == "" {
			t.Errorf("%s: attributes %v", name, v.Attrs)
		}
		for k := 0; k < n; k++ {
			got := math.NaN()
			if v.Values[k] != nil {
				got = *v.Values[k]
			}
			if !runcheck.SameNum(got, runcheck.Num(col[k])) {
				t.Fatalf("%s cell %d: atlas.nc %v, cells.parquet %v", name, k, got, col[k])
			}
		}
		checked++
	}
	if checked < 30 {
		t.Errorf("only %d columns compared", checked)
	}
	// units in UDUNITS form and the CF attributes of the schema
	for name, want := range map[string][3]string{
		"power_mean_kw_m": {"kW m-1", "", "time: mean"},
		"hm0_mean_m":      {"m", "sea_surface_wave_significant_height", "time: mean"},
		"hm0_max_m":       {"m", "sea_surface_wave_significant_height", "time: maximum"},
	} {
		a := nc.Vars[name].Attrs
		if a["units"] != want[0] || a["standard_name"] != want[1] || a["cell_methods"] != want[2] {
			t.Errorf("%s: units %q standard_name %q cell_methods %q, want %v", name, a["units"], a["standard_name"], a["cell_methods"], want)
		}
	}
	// calendar-month climatology: (month, y, x) equal to the calendar_month rows
	mon, err := parquetread.Columns(filepath.Join(run, "monthly.parquet"), "cell_id", "period", "month", "power_mean_kw_m", "hm0_mean_m")
	if err != nil {
		t.Fatal(err)
	}
	rows := 0
	for i := range mon["cell_id"] {
		if mon["period"][i] != "calendar_month" {
			continue
		}
		k := int(mon["month"][i].(int64)-1)*n + int(mon["cell_id"][i].(int64))
		for col, v := range map[string]string{"power_mean_kw_m": "power_monthly_mean_kw_m", "hm0_mean_m": "hm0_monthly_mean_m"} {
			vv := nc.Vars[v]
			if len(vv.Dims) != 3 || vv.Dims[0] != "month" {
				t.Fatalf("%s dims %v", v, vv.Dims)
			}
			got := math.NaN()
			if vv.Values[k] != nil {
				got = *vv.Values[k]
			}
			if !runcheck.SameNum(got, runcheck.Num(mon[col][i])) {
				t.Fatalf("%s month %v cell %v: atlas.nc %v, monthly.parquet %v", v, mon["month"][i], mon["cell_id"][i], got, mon[col][i])
			}
		}
		rows++
	}
	if rows < 12 {
		t.Errorf("only %d climatology rows compared", rows)
	}
}

// gdalinfo (Debian gdal-bin) reads the mean power as a raster with the grid's
// size, extent and pixel size: GDAL's origin is the outer corner of the
// north-west cell (half a cell beyond the first longitude and the last
// latitude of cells.parquet) and the pixel size the axis steps.
func TestAtlasNCWithGdalinfo(t *testing.T) {
	gi := needTool(t, "gdalinfo", "gdal-bin")
	dir, _ := demoRun(t)
	nc := filepath.Join(dir, "atlas-grid", "atlas.nc")
	out, err := exec.Command(gi, "NETCDF:"+nc+":power_mean_kw_m").CombinedOutput()
	if err != nil {
		t.Fatalf("gdalinfo: %v\n%s", err, out)
	}
	s := string(out)
	t.Logf("gdalinfo:\n%s", runcheck.FirstLines(s, 24))
	cells := cellsOf(t, filepath.Join(dir, "atlas-grid"))
	lon, lat := cells["lon"], cells["lat"]
	nx := 1
	for nx < len(lat) && runcheck.Num(lat[nx]) == runcheck.Num(lat[0]) {
		nx++
	}
	ny := len(lon) / nx
	if !strings.Contains(s, fmt.Sprintf("Size is %d, %d", nx, ny)) {
		t.Errorf("gdalinfo size, want %d x %d: %s", nx, ny, s)
	}
	re := regexp.MustCompile(`Origin = \(([-0-9.e]+),([-0-9.e]+)\)\s+Pixel Size = \(([-0-9.e]+),([-0-9.e]+)\)`)
	m := re.FindStringSubmatch(s)
	if m == nil {
		t.Fatalf("no origin / pixel size in gdalinfo output")
	}
	dx, dy := runcheck.Num(lon[1])-runcheck.Num(lon[0]), runcheck.Num(lat[nx])-runcheck.Num(lat[0])
	top := runcheck.Num(lat[len(lat)-1])
	want := []float64{runcheck.Num(lon[0]) - dx/2, top + dy/2, dx, -dy}
	for k, w := range want {
		v, _ := strconv.ParseFloat(m[k+1], 64)
		if math.Abs(v-w) > 1e-6 {
			t.Errorf("gdalinfo %s = %v, want %v", []string{"origin x", "origin y", "pixel x", "pixel y"}[k], v, w)
		}
	}
	if !strings.Contains(s, `"WGS 84"`) && !strings.Contains(s, "WGS 84") {
		t.Errorf("gdalinfo shows no WGS 84 coordinate system")
	}
	if strings.Contains(s, "Warning") || strings.Contains(s, "ERROR") {
		t.Errorf("gdalinfo complains:\n%s", s)
	}
}

// ogrinfo (Debian gdal-bin) opens atlas.gpkg as it is and lists its layers
// with their feature counts; ogr2ogr converts the cells layer to GeoJSON and
// its values equal cells.parquet; an isoline layer converts with the levels
// of the contour layer.
func TestAtlasGpkgWithOGR(t *testing.T) {
	oi := needTool(t, "ogrinfo", "gdal-bin")
	o2 := needTool(t, "ogr2ogr", "gdal-bin")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	gp := filepath.Join(run, "atlas.gpkg")
	out, err := exec.Command(oi, "-ro", "-so", "-al", gp).CombinedOutput()
	if err != nil {
		t.Fatalf("ogrinfo: %v\n%s", err, out)
	}
	s := string(out)
	if strings.Contains(s, "Warning") || strings.Contains(s, "ERROR") {
		t.Errorf("ogrinfo complains:\n%s", s)
	}
	counts := map[string]int{}
	re := regexp.MustCompile(`(?m)^Layer name: (\S+)[\s\S]*?^Feature Count: (\d+)`)
	for _, m := range re.FindAllStringSubmatch(s, -1) {
		counts[m[1]], _ = strconv.Atoi(m[2])
	}
	t.Logf("ogrinfo layers and feature counts: %v", counts)
	cells := cellsOf(t, run)
	if counts["cells"] != len(cells["cell_id"]) {
		t.Errorf("cells layer: %d features, cells.parquet %d rows", counts["cells"], len(cells["cell_id"]))
	}
	for _, col := range []string{"power_mean_kw_m", "hm0_p90_m", "mvi", "aep_demo_wec_mwh"} {
		var fc struct {
			Features []json.RawMessage `json:"features"`
		}
		for _, l := range []string{"isolines_" + col, "bands_" + col} {
			f := col + ".geojson"
			if strings.HasPrefix(l, "bands_") {
				f = col + ".bands.geojson"
			}
			b, err := os.ReadFile(filepath.Join(run, "contours", f))
			if err != nil {
				t.Fatal(err)
			}
			json.Unmarshal(b, &fc)
			if counts[l] != len(fc.Features) {
				t.Errorf("layer %s: %d features, contours/%s %d", l, counts[l], f, len(fc.Features))
			}
		}
	}
	// R-tree index present and used: a spatial filter returns the cells inside it
	out, err = exec.Command(oi, "-ro", "-so", "-spat", "-34", "45", "-33", "46", gp, "cells").CombinedOutput()
	if err != nil {
		t.Fatalf("ogrinfo -spat: %v\n%s", err, out)
	}
	inside := 0
	for k := range cells["lon"] {
		x, y := runcheck.Num(cells["lon"][k]), runcheck.Num(cells["lat"][k])
		if x >= -34 && x <= -33 && y >= 45 && y <= 46 {
			inside++
		}
	}
	if m := regexp.MustCompile(`Feature Count: (\d+)`).FindStringSubmatch(string(out)); m == nil || m[1] != strconv.Itoa(inside) {
		t.Errorf("spatial filter: %v features, %d cells inside", m, inside)
	}
	// ogr2ogr to GeoJSON: every cell's values and position
	gj := filepath.Join(t.TempDir(), "cells.geojson")
	if out, err := exec.Command(o2, "-f", "GeoJSON", "-lco", "SIGNIFICANT_FIGURES=17", "-lco", "COORDINATE_PRECISION=15", gj, gp, "cells").CombinedOutput(); err != nil {
		t.Fatalf("ogr2ogr: %v\n%s", err, out)
	}
	b, err := os.ReadFile(gj)
	if err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			Properties map[string]any `json:"properties"`
			Geometry   *struct {
				Coordinates []float64 `json:"coordinates"`
			} `json:"geometry"`
		} `json:"features"`
	}
	if err := json.Unmarshal(b, &fc); err != nil {
		t.Fatal(err)
	}
	if len(fc.Features) != len(cells["cell_id"]) {
		t.Fatalf("GeoJSON has %d features, cells.parquet %d rows", len(fc.Features), len(cells["cell_id"]))
	}
	compared := 0
	for k, f := range fc.Features {
		id := int(runcheck.Num(f.Properties["cell_id"]))
		if id != k {
			t.Fatalf("feature %d holds cell %d", k, id)
		}
		if f.Geometry == nil || !runcheck.SameNum(f.Geometry.Coordinates[0], runcheck.Num(cells["lon"][k])) || !runcheck.SameNum(f.Geometry.Coordinates[1], runcheck.Num(cells["lat"][k])) {
			t.Fatalf("cell %d geometry %v, cells.parquet (%v, %v)", k, f.Geometry, cells["lon"][k], cells["lat"][k])
		}
		for name, col := range cells {
			if name == "geometry" {
				continue
			}
			got := f.Properties[name]
			switch want := col[k].(type) {
			case string:
				if got != want {
					t.Fatalf("cell %d %s: GeoPackage %v, cells.parquet %q", k, name, got, want)
				}
			default:
				g := math.NaN()
				if x, ok := got.(float64); ok {
					g = x
				}
				if !runcheck.SameNum(g, runcheck.Num(want)) {
					t.Fatalf("cell %d %s: GeoPackage %v, cells.parquet %v", k, name, got, want)
				}
			}
			compared++
		}
	}
	t.Logf("compared %d values of the cells layer with cells.parquet", compared)
}

// browserProfile makes Chromium's profile directory. It is not t.TempDir:
// Chromium's helper processes can still write to the profile for a moment
// after the browser has exited, and t.TempDir's cleanup then fails the test
// ("directory not empty", seen once under CI). The cleanup retries for up to
// 10 s and only logs a profile it could not remove.
func browserProfile(t *testing.T) string {
	t.Helper()
	dir, err := os.MkdirTemp("", "swellgrid-chromium-")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		var err error
		for i := 0; i < 50; i++ {
			if err = os.RemoveAll(dir); err == nil {
				return
			}
			time.Sleep(200 * time.Millisecond)
		}
		t.Logf("chromium profile %s not removed: %v", dir, err)
	})
	return dir
}

// headlessChrome starts Debian's chromium headless (no sandbox, no GPU, no
// background network, a private profile) with a window of w x h and a
// context that ends after three minutes; cancel stops it.
func headlessChrome(t *testing.T, chrome string, w, h int) (context.Context, func()) {
	opts := append(chromedp.DefaultExecAllocatorOptions[:0:0],
		chromedp.ExecPath(chrome), chromedp.Headless, chromedp.NoSandbox, chromedp.DisableGPU,
		chromedp.NoFirstRun, chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-quic", true), chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true), chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(browserProfile(t)), chromedp.WindowSize(w, h))
	actx, cancel := chromedp.NewExecAllocator(context.Background(), opts...)
	ctx, cancel2 := chromedp.NewContext(actx)
	ctx, cancel3 := context.WithTimeout(ctx, 3*time.Minute)
	return ctx, func() { cancel3(); cancel2(); cancel() }
}

// Headless chromium (Debian chromium) opens the demo's report from disk:
// no console error, no request to the network, every image loads; each map
// is not blank (luminance variance of its data area above a floor) and its
// colour bar range (the figure's data-min / data-max, also the end labels of
// the bar in the SVG) is the column's min and max over sea cells of
// cells.parquet. A full-page screenshot is kept with the test output.
func TestReportInChromium(t *testing.T) {
	chrome := needTool(t, "chromium", "chromium")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	index := filepath.Join(run, "report", "index.html")
	shotDir := filepath.Join(os.TempDir(), "swellgrid-test-output")
	os.MkdirAll(shotDir, 0o755)
	shot := filepath.Join(shotDir, "report_demo_index.png")

	ctx, cancel := headlessChrome(t, chrome, 1280, 1000)
	defer cancel()
	var mu sync.Mutex
	var consoleErrs, requests []string
	chromedp.ListenTarget(ctx, func(ev any) {
		mu.Lock()
		defer mu.Unlock()
		switch e := ev.(type) {
		case *runtime.EventConsoleAPICalled:
			if e.Type == runtime.APITypeError || e.Type == runtime.APITypeWarning {
				consoleErrs = append(consoleErrs, fmt.Sprintf("console %s: %v", e.Type, e.Args))
			}
		case *runtime.EventExceptionThrown:
			consoleErrs = append(consoleErrs, "exception: "+e.ExceptionDetails.Text)
		case *network.EventRequestWillBeSent:
			requests = append(requests, e.Request.URL)
		case *network.EventLoadingFailed:
			consoleErrs = append(consoleErrs, "loading failed: "+e.ErrorText)
		}
	})
	type imgState struct {
		Src      string `json:"src"`
		Complete bool   `json:"complete"`
		W        int    `json:"w"`
	}
	type mapFig struct {
		Column string `json:"column"`
		Min    string `json:"min"`
		Max    string `json:"max"`
		Img    string `json:"img"`
	}
	pages := []string{index}
	sites, _ := filepath.Glob(filepath.Join(run, "report", "site_*.html"))
	if len(sites) != 2 {
		t.Errorf("%d site pages, the demo grid has 2 sites", len(sites))
	}
	pages = append(pages, sites...)
	var maps []mapFig
	nimg := 0
	for pi, page := range pages {
		var imgs []imgState
		acts := []chromedp.Action{network.Enable(), chromedp.Navigate("file://" + page), chromedp.WaitReady("body"),
			chromedp.Poll(`Array.from(document.images).every(i => i.complete)`, nil, chromedp.WithPollingTimeout(60*time.Second)),
			chromedp.Evaluate(`Array.from(document.images).map(i => ({src: i.src, complete: i.complete, w: i.naturalWidth}))`, &imgs)}
		if pi == 0 {
			var buf []byte
			// quality 100 is chromedp's PNG; any other quality gives a
			// JPEG, which the .png name would mislabel
			acts = append(acts, chromedp.Evaluate(`Array.from(document.querySelectorAll('figure.map')).map(f => ({column: f.dataset.column, min: f.dataset.min, max: f.dataset.max, img: f.querySelector('img').getAttribute('src')}))`, &maps),
				chromedp.FullScreenshot(&buf, 100), chromedp.ActionFunc(func(context.Context) error { return os.WriteFile(shot, buf, 0o644) }))
		}
		var rowH []float64
		if pi > 0 {
			acts = append(acts, chromedp.Evaluate(`Array.from(document.querySelectorAll('table.numbers tr')).map(r => r.getBoundingClientRect().height)`, &rowH))
		}
		if err := chromedp.Run(ctx, acts...); err != nil {
			t.Fatalf("chromium on %s: %v", page, err)
		}
		if pi > 0 {
			// the site's numbers: rows of one height (issue 33: some were very tall)
			lo, hi := math.Inf(1), math.Inf(-1)
			for _, h := range rowH {
				lo, hi = math.Min(lo, h), math.Max(hi, h)
			}
			if len(rowH) < 10 || hi-lo > 1 {
				t.Errorf("%s: %d rows in the table of numbers, heights %.1f to %.1f px, want one height", filepath.Base(page), len(rowH), lo, hi)
			}
			t.Logf("%s: %d rows of the numbers table, heights %.1f to %.1f px", filepath.Base(page), len(rowH), lo, hi)
		}
		rose := false
		for _, im := range imgs {
			if !im.Complete || im.W == 0 {
				t.Errorf("%s: image %s did not load", filepath.Base(page), im.Src)
			}
			rose = rose || strings.HasSuffix(im.Src, "_rose_power_occurrence.png")
		}
		if pi > 0 && !rose {
			t.Errorf("%s: no directional power rose among its images", filepath.Base(page))
		}
		nimg += len(imgs)
	}
	mu.Lock()
	for _, e := range consoleErrs {
		t.Errorf("chromium: %s", e)
	}
	for _, u := range requests {
		if !strings.HasPrefix(u, "file://") && !strings.HasPrefix(u, "data:") {
			t.Errorf("the report asked the network for %s", u)
		}
	}
	mu.Unlock()
	t.Logf("screenshot of the demo's report/index.html: %s (%d pages, %d images loaded, %d requests, all file://)", shot, len(pages), nimg, len(requests))
	if b, err := os.ReadFile(shot); err != nil || len(b) < 20000 {
		t.Errorf("screenshot %s missing or tiny", shot)
	} else if !bytes.HasPrefix(b, []byte("\x89PNG\r\n\x1a\n")) {
		t.Errorf("screenshot %s is not a PNG (first bytes % x)", shot, b[:8])
	}

	// maps: every mapped column, colour bar = column range, not blank
	cells := cellsOf(t, run)
	land := make([]bool, len(cells["cell_id"]))
	for k, f := range cells["qc_flags"] {
		land[k] = strings.Contains(","+f.(string)+",", ",masked,")
	}
	// mapped: these columns where at least one sea cell has a value (the
	// demo's 3-year record publishes no 100-year level: extremes.min_years)
	var want []string
	for _, c := range []string{"power_mean_kw_m", "hm0_p90_m", "hm0_rl100y_m", "mvi", "aep_demo_wec_mwh", "cf_demo_wec"} {
		for k, v := range cells[c] {
			if !land[k] && !math.IsNaN(runcheck.Num(v)) {
				want = append(want, c)
				break
			}
		}
	}
	if len(want) < 5 {
		t.Errorf("only %v have values", want)
	}
	// then one map per screening scenario (the demo has two, with passing
	// and failing sea cells: a colour bar from 0 to 1)
	want = append(want, "screening_demo_core", "screening_demo_offshore")
	// then the P90/P50 ratio of the device's annual energy per horizon
	// (aep_bands.parquet; a map where some sea cell has a positive P90)
	ratio := map[string][]float64{}
	bp := filepath.Join(run, "aep_bands.parquet")
	bc, err := parquetread.Columns(bp, "cell_id", "horizon_y", "aep_p50_mwh", "aep_p90_mwh")
	if err != nil {
		t.Fatal(err)
	}
	num := func(v []any) []float64 {
		out := make([]float64, len(v))
		for i, x := range v {
			out[i] = runcheck.Num(x)
		}
		return out
	}
	bid, bh, b50, b90 := num(bc["cell_id"]), num(bc["horizon_y"]), num(bc["aep_p50_mwh"]), num(bc["aep_p90_mwh"])
	for _, h := range []float64{1, 10} { // uncertainty.horizons_y by default
		name := fmt.Sprintf("p90_p50_demo_wec_%gy", h)
		v := make([]float64, len(land))
		for k := range v {
			v[k] = math.NaN()
		}
		some := false
		for i := range bid {
			if bh[i] == h && b50[i] > 0 && !math.IsNaN(b90[i]) && !land[int(bid[i])] {
				v[int(bid[i])], some = b90[i]/b50[i], true
			}
		}
		if some {
			want = append(want, name)
			ratio[name] = v
		}
	}
	// then the levelised cost per cell of each scenario with costs
	// (screening.parquet's lcoe_per_mwh)
	sc, err := parquetread.Columns(filepath.Join(run, "screening.parquet"), "cell_id", "scenario", "lcoe_per_mwh")
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"demo_core", "demo_offshore"} {
		v := make([]float64, len(land))
		for k := range v {
			v[k] = math.NaN()
		}
		for i, id := range sc["cell_id"] {
			if sc["scenario"][i] == name {
				v[id.(int64)] = runcheck.Num(sc["lcoe_per_mwh"][i])
			}
		}
		want = append(want, "lcoe_per_mwh_"+name)
		ratio["lcoe_per_mwh_"+name] = v
	}
	var got []string
	for _, m := range maps {
		got = append(got, m.Column)
	}
	if strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("maps of %v, want %v", got, want)
	}
	for _, m := range maps {
		lo, hi := math.Inf(1), math.Inf(-1)
		for k, v := range cells[m.Column] {
			if x := runcheck.Num(v); !land[k] && !math.IsNaN(x) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
		for k, x := range ratio[m.Column] {
			if !land[k] && !math.IsNaN(x) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
		if strings.HasPrefix(m.Column, "screening_") {
			lo, hi = 0, 1
		}
		bmin, _ := strconv.ParseFloat(m.Min, 64)
		bmax, _ := strconv.ParseFloat(m.Max, 64)
		if bmin != lo || bmax != hi {
			t.Errorf("map %s: colour bar %v..%v, column %v..%v", m.Column, bmin, bmax, lo, hi)
		}
		svg, err := os.ReadFile(filepath.Join(run, "report", strings.TrimSuffix(m.Img, ".png")+".svg"))
		if err != nil {
			t.Fatal(err)
		}
		labels := svgTexts(svg)
		if !labels[fmtLabel(lo)] || !labels[fmtLabel(hi)] {
			t.Errorf("map %s: the SVG's labels lack the colour bar ends %s and %s", m.Column, fmtLabel(lo), fmtLabel(hi))
		}
		v := mapVariance(t, filepath.Join(run, "report", m.Img))
		if v < 100 {
			t.Errorf("map %s looks blank: luminance variance %.1f of its central area", m.Column, v)
		}
		t.Logf("map %s: colour bar %s..%s, luminance variance %.0f", m.Column, fmtLabel(lo), fmtLabel(hi), v)
	}
}

func fmtLabel(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

func svgTexts(b []byte) map[string]bool {
	out := map[string]bool{}
	for _, m := range regexp.MustCompile(`<text[^>]*>([^<]*)</text>`).FindAllSubmatch(b, -1) {
		out[strings.TrimSpace(string(m[1]))] = true
	}
	return out
}

// mapVariance is the variance of the luminance (0..255) over the central
// half of a map PNG (inside the data area of the map, left of the colour bar).
func mapVariance(t *testing.T, path string) float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	r := img.Bounds()
	w := r.Dx() * 3 / 4 // the map; the colour bar is on the right
	box := image.Rect(w/4, r.Dy()/4, w*3/4, r.Dy()*3/4)
	var s, s2, n float64
	for y := box.Min.Y; y < box.Max.Y; y++ {
		for x := box.Min.X; x < box.Max.X; x++ {
			c := img.At(x, y)
			rr, gg, bb, _ := c.RGBA()
			l := 0.2126*float64(rr>>8) + 0.7152*float64(gg>>8) + 0.0722*float64(bb>>8)
			s, s2, n = s+l, s2+l*l, n+1
		}
	}
	m := s / n
	return s2/n - m*m
}

// Rebuilding the report from the finished run gives the same pages and
// figures (nothing recomputed, nothing depends on the clock).
func TestReportRebuild(t *testing.T) {
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-spectral-points")
	before := readTree(t, filepath.Join(run, "report"))
	files, _, err := products.Rebuild(run, products.Products{Report: true})
	if err != nil {
		t.Fatal(err)
	}
	after := readTree(t, filepath.Join(run, "report"))
	if len(before) != len(after) || len(files) != len(after) {
		t.Errorf("rebuild: %d files before, %d after, %d reported", len(before), len(after), len(files))
	}
	for n, b := range before {
		if !bytes.Equal(b, after[n]) {
			t.Errorf("rebuild changed %s", n)
		}
	}
	// a point set gets a page for every point
	pages := 0
	for n := range after {
		if strings.HasPrefix(n, "site_point_") && strings.HasSuffix(n, ".html") {
			pages++
		}
	}
	if n := len(cellsOf(t, run)["cell_id"]); pages != n {
		t.Errorf("%d point pages, the demo has %d spectral points", pages, n)
	}
	if _, _, err := products.Rebuild(t.TempDir(), products.Products{Report: true}); err == nil || fault.KindOf(err) != fault.BadInput {
		t.Errorf("rebuild of an empty directory: %v", err)
	}
}

func readTree(t *testing.T, dir string) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range ents {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		out[e.Name()] = b
	}
	return out
}

// atlas.nc on a curvilinear grid: the 2-D lat/lon of the input and the values.
func TestAtlasNCCurvilinear(t *testing.T) {
	out := t.TempDir()
	s := testSpec(t, "testdata/curvilinear_bulk.nc", out)
	s.Output.Report = false
	mustRun(t, s)
	checkAtlasNC(t, out, "curvilinear")
	if _, err := os.Stat(filepath.Join(out, "report")); err == nil {
		t.Error("output.report = false still wrote report/")
	}
}
