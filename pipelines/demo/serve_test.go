package demo

import (
	"bytes"
	"encoding/json"
	"fmt"
	"image"
	"image/png"
	"math"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/input"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"swellgrid/export/contract"
	"swellgrid/export/report"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/serve"
)

// `swellgrid serve` on the demo's grid atlas, driven by headless Chromium:
// the map is drawn in the report's colours (the pixel at a known cell has
// the viridis colour of its value, computed here from cells.parquet read
// with Arrow's reader), switching the layer changes the picture, hovering
// a cell reads its value, clicking it opens its page whose numbers equal
// cells.parquet's, and nothing is asked of the network. Screenshots are
// kept (the test prints where).
func TestServeInChromium(t *testing.T) {
	chrome := needTool(t, "chromium", "chromium")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-grid")
	ts := serveRun(t, run)
	shotDir := filepath.Join(os.TempDir(), "swellgrid-test-output")
	os.MkdirAll(shotDir, 0o755)

	// cells.parquet, independently
	cells := cellsOf(t, run)
	power := cells[contract.ColPowerMean]
	p90name := contract.Hm0PercentileColumn(90)
	p90 := cells[p90name]
	land := seaMask(cells)
	// the known cell: the sea cell of highest mean power
	known, best := -1, math.Inf(-1)
	for k, v := range power {
		if x := runcheck.Num(v); !land[k] && x > best {
			known, best = k, x
		}
	}
	// the colour of a value on the report's scale over the column's sea cells
	colourOf := func(col []any, k int) [3]int {
		lo, hi, palette := viridisScale(col, land)
		return colourAt(palette, lo, hi, runcheck.Num(col[k]))
	}

	ctx, cancel := headlessChrome(t, chrome, 1400, 900)
	defer cancel()
	var mu sync.Mutex
	var consoleErrs, requests []string
	chromedp.ListenTarget(ctx, func(ev any) {
		mu.Lock()
		defer mu.Unlock()
		switch e := ev.(type) {
		case *runtime.EventConsoleAPICalled:
			if e.Type == runtime.APITypeError || e.Type == runtime.APITypeWarning {
				var args []string
				for _, a := range e.Args {
					args = append(args, string(a.Value)+a.Description)
				}
				consoleErrs = append(consoleErrs, fmt.Sprintf("console %s: %s", e.Type, strings.Join(args, " ")))
			}
		case *runtime.EventExceptionThrown:
			consoleErrs = append(consoleErrs, "exception: "+e.ExceptionDetails.Text)
		case *network.EventRequestWillBeSent:
			requests = append(requests, e.Request.URL)
		case *network.EventLoadingFailed:
			consoleErrs = append(consoleErrs, "loading failed: "+e.ErrorText)
		}
	})
	shoot := func(name string) (image.Image, string) {
		var buf []byte
		if err := chromedp.Run(ctx, chromedp.Screenshot("#map", &buf, chromedp.ByID)); err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(shotDir, name)
		os.WriteFile(path, buf, 0o644)
		img, err := png.Decode(bytes.NewReader(buf))
		if err != nil {
			t.Fatalf("screenshot %s: %v", name, err)
		}
		return img, path
	}
	var px [2]float64
	pixel := func() {
		if err := chromedp.Run(ctx, chromedp.Evaluate(fmt.Sprintf("swellgrid.pixelOfCell(%d)", known), &px)); err != nil {
			t.Fatal(err)
		}
	}
	near := func(img image.Image, want [3]int, what string) {
		t.Helper()
		r, g, b, _ := img.At(int(px[0]), int(px[1])).RGBA()
		got := [3]int{int(r >> 8), int(g >> 8), int(b >> 8)}
		for c := range got {
			if d := got[c] - want[c]; d < -3 || d > 3 {
				t.Errorf("%s: pixel of cell %d at %v is %v, want the viridis colour %v of its value", what, known, px, got, want)
				return
			}
		}
	}

	if err := chromedp.Run(ctx, network.Enable(), chromedp.Navigate(ts.URL+"/"),
		chromedp.Poll(`window.swellgrid && window.swellgrid.ready`, nil, chromedp.WithPollingTimeout(60*time.Second))); err != nil {
		t.Fatalf("the map did not render: %v", err)
	}
	pixel()
	img1, shot1 := shoot("serve_map_power.png")
	var win []byte
	shotWin := filepath.Join(shotDir, "serve_atlas.png")
	if err := chromedp.Run(ctx, chromedp.CaptureScreenshot(&win)); err == nil {
		os.WriteFile(shotWin, win, 0o644)
	}
	// not blank: many colours, most pixels not the background
	b := img1.Bounds()
	colours, bg := map[[3]uint32]bool{}, 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img1.At(x, y).RGBA()
			colours[[3]uint32{r >> 8, g >> 8, bl >> 8}] = true
			if r>>8 == 0xee && g>>8 == 0xf3 && bl>>8 == 0xf7 {
				bg++
			}
		}
	}
	total := b.Dx() * b.Dy()
	if len(colours) < 40 || bg > total/2 {
		t.Errorf("the map looks blank: %d colours, %d of %d pixels background", len(colours), bg, total)
	}
	near(img1, colourOf(power, known), "mean power layer")

	// switch the layer through the page's own control
	if err := chromedp.Run(ctx, chromedp.SetValue("#layer", p90name, chromedp.ByID),
		chromedp.Evaluate(`document.getElementById('layer').dispatchEvent(new Event('change')); true`, nil),
		chromedp.Poll(fmt.Sprintf(`swellgrid.ready && swellgrid.renders >= 2 && swellgrid.layer.column === %q`, p90name), nil, chromedp.WithPollingTimeout(30*time.Second))); err != nil {
		t.Fatalf("switching the layer: %v", err)
	}
	img2, shot2 := shoot("serve_map_hm0_p90.png")
	diff := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r1, g1, b1, _ := img1.At(x, y).RGBA()
			r2, g2, b2, _ := img2.At(x, y).RGBA()
			if max(absDiff(r1, r2), absDiff(g1, g2), absDiff(b1, b2)) > 8<<8 {
				diff++
			}
		}
	}
	if diff < total/20 {
		t.Errorf("switching from %s to %s changed %d of %d pixels, want at least 5%%", contract.ColPowerMean, p90name, diff, total)
	}
	near(img2, colourOf(p90, known), "Hm0 p90 layer")
	var legend string
	chromedp.Run(ctx, chromedp.Text("#legend .title", &legend, chromedp.ByQuery))
	if !strings.Contains(legend, "(m)") {
		t.Errorf("the legend of %s gives no unit: %q", p90name, legend)
	}

	// a contour layer switched on draws the features of its file
	iso := "run/contours/" + contract.ColPowerMean + ".geojson"
	var fc struct{ Features []json.RawMessage }
	if b, err := os.ReadFile(filepath.Join(run, filepath.FromSlash(strings.TrimPrefix(iso, "run/")))); err != nil {
		t.Fatal(err)
	} else if err := json.Unmarshal(b, &fc); err != nil || len(fc.Features) == 0 {
		t.Fatalf("%s: %v, %d features", iso, err, len(fc.Features))
	}
	var drawn int
	if err := chromedp.Run(ctx, chromedp.Click(fmt.Sprintf(`input[data-file=%q]`, iso), chromedp.ByQuery),
		chromedp.Poll(fmt.Sprintf(`(() => { const l = swellgrid.contours.find(l => l.get('file') === %q); return l.getVisible() && l.getSource().getFeatures().length > 0; })()`, iso), nil, chromedp.WithPollingTimeout(20*time.Second)),
		chromedp.Evaluate(fmt.Sprintf(`swellgrid.contours.find(l => l.get('file') === %q).getSource().getFeatures().length`, iso), &drawn)); err != nil {
		t.Fatalf("contour layer %s: %v", iso, err)
	}
	if drawn != len(fc.Features) {
		t.Errorf("contour layer %s: %d features on the map, the file has %d", iso, drawn, len(fc.Features))
	}

	// hover, then click the known cell
	var rect struct{ Left, Top float64 }
	if err := chromedp.Run(ctx, chromedp.Evaluate(`(() => { const r = document.getElementById('map').getBoundingClientRect(); return {left: r.left, top: r.top}; })()`, &rect)); err != nil {
		t.Fatal(err)
	}
	x, y := rect.Left+px[0], rect.Top+px[1]
	var hover string
	if err := chromedp.Run(ctx, chromedp.MouseEvent(input.MouseMoved, x, y),
		chromedp.Poll(`document.getElementById('hover').style.display === 'block'`, nil, chromedp.WithPollingTimeout(10*time.Second)),
		chromedp.Text("#hover", &hover, chromedp.ByID)); err != nil {
		t.Fatalf("hover: %v", err)
	}
	if want := fmt.Sprintf("cell %d ", known); !strings.Contains(hover, want) {
		t.Errorf("hover text %q does not name %q", hover, want)
	} else if _, v, ok := strings.Cut(hover, p90name+" = "); !ok || !sameText(strings.TrimSuffix(v, " m"), p90[known]) {
		t.Errorf("hover text %q: want %s = %v", hover, p90name, p90[known])
	}
	var rows [][]string
	var h1 string
	if err := chromedp.Run(ctx, chromedp.MouseClickXY(x, y),
		chromedp.Poll(`(() => { const d = document.getElementById('cellpage').contentDocument;
			return !!(d && d.readyState === 'complete' && d.querySelector('h1') && d.images.length > 0 &&
				Array.from(d.images).every(i => i.complete && i.naturalWidth > 0)); })()`, nil, chromedp.WithPollingTimeout(60*time.Second)),
		chromedp.Evaluate(`document.getElementById('cellpage').contentDocument.querySelector('h1').textContent`, &h1),
		chromedp.Evaluate(`Array.from(Array.from(document.getElementById('cellpage').contentDocument.querySelectorAll('table')).pop().rows).slice(1).map(r => Array.from(r.cells).map(c => c.textContent))`, &rows)); err != nil {
		t.Fatalf("clicking cell %d: %v", known, err)
	}
	if want := fmt.Sprintf("cell %d", known); !strings.HasSuffix(strings.TrimSpace(h1), want) {
		t.Errorf("the page opened by the click is %q, want the page of %s", h1, want)
	}
	var full []byte
	shotPanel := filepath.Join(shotDir, "serve_map_with_cell_page.png")
	if err := chromedp.Run(ctx, chromedp.CaptureScreenshot(&full)); err == nil {
		os.WriteFile(shotPanel, full, 0o644)
	}
	compareNumbers(t, cells, known, rows)

	// search by lon/lat: the nearest sea cell with a result by great-circle
	// distance (haversine, R = 6371.0088 km: Moritz 2000), found here from
	// cells.parquet
	slon, slat := -34.3, 45.9
	lons, lats := cells[contract.ColLon], cells[contract.ColLat]
	want, wd := -1, math.Inf(1)
	for k := range lons {
		if land[k] || power[k] == nil {
			continue
		}
		p1, p2 := slat*math.Pi/180, runcheck.Num(lats[k])*math.Pi/180
		dl := (runcheck.Num(lons[k]) - slon) * math.Pi / 180
		a := math.Pow(math.Sin((p2-p1)/2), 2) + math.Cos(p1)*math.Cos(p2)*math.Pow(math.Sin(dl/2), 2)
		if d := 2 * 6371.0088 * math.Asin(math.Sqrt(a)); d < wd {
			want, wd = k, d
		}
	}
	var found string
	var h1s string
	if err := chromedp.Run(ctx, chromedp.SetValue("#lon", fmt.Sprint(slon), chromedp.ByID), chromedp.SetValue("#lat", fmt.Sprint(slat), chromedp.ByID),
		chromedp.Click(`#search button`, chromedp.ByQuery),
		chromedp.Poll(fmt.Sprintf(`swellgrid.selected === %d && document.getElementById('found').textContent !== ''`, want), nil, chromedp.WithPollingTimeout(20*time.Second)),
		chromedp.Text("#found", &found, chromedp.ByID),
		chromedp.Poll(fmt.Sprintf(`(() => { const d = document.getElementById('cellpage').contentDocument; return !!(d && d.querySelector('h1') && d.querySelector('h1').textContent.endsWith('cell %d')); })()`, want), nil, chromedp.WithPollingTimeout(30*time.Second)),
		chromedp.Evaluate(`document.getElementById('cellpage').contentDocument.querySelector('h1').textContent`, &h1s)); err != nil {
		t.Fatalf("search for %g, %g (want cell %d): %v", slon, slat, want, err)
	}
	if !strings.Contains(found, fmt.Sprintf("cell %d: ", want)) && !strings.Contains(found, fmt.Sprintf(": %d at", want)) {
		t.Errorf("search for %g, %g: %q, want cell %d (%.2f km away)", slon, slat, found, want, wd)
	}

	// what the map page said and asked for, before another tab opens (a
	// hidden tab's map has no size, and OpenLayers warns of it)
	mu.Lock()
	for _, e := range consoleErrs {
		// OpenLayers warns when its container has no size for a moment,
		// which a screenshot's change of the viewport can cause; the
		// pixels above prove the map was drawn
		if strings.Contains(e, "map container's width or height are 0") {
			continue
		}
		t.Errorf("chromium: %s", e)
	}
	for _, u := range requests {
		if !strings.HasPrefix(u, ts.URL+"/") && !strings.HasPrefix(u, "data:") && !strings.HasPrefix(u, "blob:") {
			t.Errorf("the map asked another server for %s", u)
		}
	}
	nreq := len(requests)
	mu.Unlock()
	// the cell page alone, in a tab of its own
	var page []byte
	shotPage := filepath.Join(shotDir, "serve_cell_page.png")
	tab, cancelTab := chromedp.NewContext(ctx)
	defer cancelTab()
	if err := chromedp.Run(tab, chromedp.Navigate(fmt.Sprintf("%s/cell/%d/", ts.URL, known)),
		chromedp.Poll(`document.images.length > 0 && Array.from(document.images).every(i => i.complete && i.naturalWidth > 0)`, nil, chromedp.WithPollingTimeout(60*time.Second)),
		chromedp.FullScreenshot(&page, 100)); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(shotPage, page, 0o644)

	t.Logf("screenshots: %s, %s, %s, %s, %s (cell %d; %d requests, all to the local server)", shotWin, shot1, shot2, shotPanel, shotPage, known, nreq)
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}

// sameText reports whether text shows the value v as the report prints
// numbers: an integer exactly, a float to 4 significant digits (so within
// half a unit of the 4th digit), null as a dash.
func sameText(text string, v any) bool {
	text = strings.TrimSpace(text)
	switch x := v.(type) {
	case nil:
		return text == "–"
	case int64:
		return text == strconv.FormatInt(x, 10)
	case float64:
		if math.IsNaN(x) {
			return text == "–"
		}
		got, err := strconv.ParseFloat(text, 64)
		return err == nil && math.Abs(got-x) <= 5e-4*math.Abs(x)+1e-300
	case bool:
		return text == strconv.FormatBool(x)
	case string:
		return text == x
	}
	return false
}

// compareNumbers checks the table of a cell page (column, value, unit,
// meaning) against cells.parquet's row of the cell: every column but the
// geometry, each value equal.
func compareNumbers(t *testing.T, cells map[string][]any, cell int, rows [][]string) {
	t.Helper()
	seen := map[string]bool{}
	for _, r := range rows {
		if len(r) < 2 {
			t.Errorf("cell page: a row of the numbers table has %d cells", len(r))
			continue
		}
		col, ok := cells[r[0]]
		if !ok {
			t.Errorf("cell page shows %q, not a column of cells.parquet", r[0])
			continue
		}
		seen[r[0]] = true
		if !sameText(r[1], col[cell]) {
			t.Errorf("cell page: %s = %q, cells.parquet has %v", r[0], r[1], col[cell])
		}
	}
	for name := range cells {
		if name != contract.ColGeometry && !seen[name] {
			t.Errorf("cell page lacks the column %s", name)
		}
	}
	if len(seen) < 20 {
		t.Errorf("cell page shows %d columns", len(seen))
	}
}

// serve proves the run at start: a contour layer changed after the run
// (a file rundir.Open itself does not read) is refused before serving,
// naming the file (its SHA-256 no longer matches the manifest's).
func TestServeRefusesDamagedRun(t *testing.T) {
	dir, _ := demoRun(t)
	cp := filepath.Join(t.TempDir(), "atlas-grid")
	if err := os.CopyFS(cp, os.DirFS(filepath.Join(dir, "atlas-grid"))); err != nil {
		t.Fatal(err)
	}
	s, err := serve.New(cp)
	if err != nil {
		t.Fatalf("the copied run: %v", err)
	}
	s.Close()
	layer := filepath.Join(cp, "contours", contract.ColPowerMean+".geojson")
	b, err := os.ReadFile(layer)
	if err != nil {
		t.Fatal(err)
	}
	b[len(b)/2] ^= 1
	os.WriteFile(layer, b, 0o644)
	_, err = serve.New(cp)
	if err == nil || !strings.Contains(err.Error(), contract.ColPowerMean+".geojson") || !strings.Contains(err.Error(), "SHA-256") {
		t.Errorf("serve.New on a run with a changed contour layer: %v, want a refusal naming the file", err)
	}
}

// serveRun serves the run directory run (swellgrid serve's handler) behind
// a local test server, both closed when the test ends.
func serveRun(t *testing.T, run string) *httptest.Server {
	t.Helper()
	srv, err := serve.New(run)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { srv.Close() })
	ts := httptest.NewServer(srv.Handler())
	t.Cleanup(ts.Close)
	return ts
}

// seaMask is true for the cells whose qc_flags say masked (land), from
// cells.parquet read independently (cellsOf).
func seaMask(cells map[string][]any) []bool {
	land := make([]bool, len(cells[contract.ColQCFlags]))
	for k, f := range cells[contract.ColQCFlags] {
		s, _ := f.(string)
		land[k] = runcheck.HasFlag(s, contract.QCFlagMasked)
	}
	return land
}

// viridisScale is the report's colour scale of column col (report.MapScale)
// over its finite sea values: their range and the scale's colours as RGB.
func viridisScale(col []any, land []bool) (lo, hi float64, palette [][3]int) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for k, v := range col {
		if x := runcheck.Num(v); !land[k] && !math.IsNaN(x) {
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	scale := report.MapScale(lo, hi)
	palette = make([][3]int, len(scale.Colours))
	for k, h := range scale.Colours {
		fmt.Sscanf(h, "#%02x%02x%02x", &palette[k][0], &palette[k][1], &palette[k][2])
	}
	return lo, hi, palette
}

// colourAt is the colour of value v: entry floor((v - lo) / (hi - lo) * 256)
// of the 256-entry table (as matplotlib's ListedColormap indexes it; the
// table itself is checked against matplotlib by TestViridisMatchesMatplotlib).
func colourAt(palette [][3]int, lo, hi, v float64) [3]int {
	return palette[min(max(int(math.Floor((v-lo)/(hi-lo)*256)), 0), 255)]
}
