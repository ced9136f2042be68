package demo

import (
	"bytes"
	"fmt"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"swellgrid/export/contract"
	"swellgrid/internal/runcheck"
)

// `swellgrid serve` draws a mesh atlas filled, each cell its median dual
// cell (rundir.Mesh.CellOutlines), not as dots: in headless Chromium, over
// the box of the cells' centres most pixels have a colour of the viridis
// scale (dots of 4 px on the demo's mesh would colour a few per cent),
// and the pixel at the known cell's centre has the viridis colour of its
// value from cells.parquet read with Arrow's reader, as does a pixel
// half-way to its nearest neighbour's centre (inside its dual cell, beyond
// a dot's radius).
func TestServeMeshInChromium(t *testing.T) {
	chrome := needTool(t, "chromium", "chromium")
	dir, _ := demoRun(t)
	run := filepath.Join(dir, "atlas-mesh")
	ts := serveRun(t, run)

	cells := cellsOf(t, run)
	power := cells[contract.ColPowerMean]
	land := seaMask(cells)
	known, best := -1, math.Inf(-1)
	for k, v := range power {
		if x := runcheck.Num(v); !land[k] && x > best {
			known, best = k, x
		}
	}
	lo, hi, palette := viridisScale(power, land)
	want := colourAt(palette, lo, hi, best)

	ctx, cancel := headlessChrome(t, chrome, 1200, 900)
	defer cancel()
	if err := chromedp.Run(ctx, chromedp.Navigate(ts.URL+"/"),
		chromedp.Poll(`window.swellgrid && window.swellgrid.ready`, nil, chromedp.WithPollingTimeout(60*time.Second))); err != nil {
		t.Fatalf("the mesh map did not render: %v", err)
	}
	// the centres' pixels, and the known cell's nearest neighbour
	var box [4]float64
	var px, half [2]float64
	if err := chromedp.Run(ctx, chromedp.Evaluate(`(() => {
		const s = swellgrid; let b = [Infinity, Infinity, -Infinity, -Infinity];
		for (let i = 0; i < s.cells; i++) { const p = s.pixelOfCell(i); if (!p || isNaN(p[0])) continue;
			b = [Math.min(b[0], p[0]), Math.min(b[1], p[1]), Math.max(b[2], p[0]), Math.max(b[3], p[1])]; }
		return b; })()`, &box),
		chromedp.Evaluate(fmt.Sprintf("swellgrid.pixelOfCell(%d)", known), &px)); err != nil {
		t.Fatal(err)
	}
	lons, lats := cells[contract.ColLon], cells[contract.ColLat]
	nb, nd := -1, math.Inf(1)
	for k := range lons {
		if k == known {
			continue
		}
		dx, dy := runcheck.Num(lons[k])-runcheck.Num(lons[known]), runcheck.Num(lats[k])-runcheck.Num(lats[known])
		if d := dx*dx + dy*dy; d < nd {
			nb, nd = k, d
		}
	}
	var pn [2]float64
	if err := chromedp.Run(ctx, chromedp.Evaluate(fmt.Sprintf("swellgrid.pixelOfCell(%d)", nb), &pn)); err != nil {
		t.Fatal(err)
	}
	// a little short of half-way: inside the known cell's median dual cell
	half = [2]float64{px[0] + 0.4*(pn[0]-px[0]), px[1] + 0.4*(pn[1]-px[1])}
	var buf []byte
	if err := chromedp.Run(ctx, chromedp.Screenshot("#map", &buf, chromedp.ByID)); err != nil {
		t.Fatal(err)
	}
	shotDir := filepath.Join(os.TempDir(), "swellgrid-test-output")
	os.MkdirAll(shotDir, 0o755)
	shot := filepath.Join(shotDir, "serve_mesh.png")
	os.WriteFile(shot, buf, 0o644)
	img, err := png.Decode(bytes.NewReader(buf))
	if err != nil {
		t.Fatal(err)
	}
	isViridis := func(x, y int) bool {
		r, g, b, _ := img.At(x, y).RGBA()
		for _, c := range palette {
			if abs(int(r>>8)-c[0]) <= 3 && abs(int(g>>8)-c[1]) <= 3 && abs(int(b>>8)-c[2]) <= 3 {
				return true
			}
		}
		return false
	}
	coloured, total := 0, 0
	for y := int(box[1]); y <= int(box[3]); y++ {
		for x := int(box[0]); x <= int(box[2]); x++ {
			total++
			if isViridis(x, y) {
				coloured++
			}
		}
	}
	share := float64(coloured) / float64(max(total, 1))
	if total < 10000 || share < 0.5 {
		t.Errorf("mesh map: %d of %d pixels (%.1f %%) over the cells' box have a viridis colour, want at least half (filled cells, not dots)", coloured, total, 100*share)
	}
	pixelIs := func(p [2]float64, what string) {
		t.Helper()
		r, g, b, _ := img.At(int(p[0]), int(p[1])).RGBA()
		got := [3]int{int(r >> 8), int(g >> 8), int(b >> 8)}
		for c := range got {
			if abs(got[c]-want[c]) > 3 {
				t.Errorf("mesh map: %s of cell %d at %v is %v, want the viridis colour %v of %g kW/m", what, known, p, got, want, best)
				return
			}
		}
	}
	pixelIs(px, "the centre pixel")
	pixelIs(half, fmt.Sprintf("the pixel 0.4 of the way to neighbour %d", nb))
	// hovering that pixel names the known cell (the outline holds it)
	var hit int
	if err := chromedp.Run(ctx, chromedp.Evaluate(fmt.Sprintf("swellgrid.cellAt(swellgrid.map.getCoordinateFromPixel([%g, %g]))", half[0], half[1]), &hit)); err != nil {
		t.Fatal(err)
	}
	if hit != known {
		t.Errorf("mesh map: the cell under %v is %d, want %d", half, hit, known)
	}
	t.Logf("mesh map: %.1f %% of %d pixels coloured; cell %d at %v, neighbour %d; screenshot %s", 100*share, total, known, px, nb, shot)
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}
