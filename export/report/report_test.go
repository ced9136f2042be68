package report

import (
	"bytes"
	"encoding/csv"
	"image"
	"image/color"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/plot/vg"
)

// The colour map against matplotlib's viridis (Debian python3-matplotlib
// 3.6.3, cm.viridis(x, bytes=True)); values made by testdata/report/viridis.py.
func TestViridisMatchesMatplotlib(t *testing.T) {
	f, err := os.Open("../../testdata/report/viridis_ref.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	v := NewViridis(0, 1)
	for _, r := range rows[1:] {
		x, _ := strconv.ParseFloat(r[0], 64)
		c, err := v.At(x)
		if err != nil {
			t.Fatalf("At(%v): %v", x, err)
		}
		got := c.(color.NRGBA)
		for k, ch := range []uint8{got.R, got.G, got.B} {
			want, _ := strconv.Atoi(r[1+k])
			if int(ch) != want {
				t.Errorf("viridis(%v) channel %d = %d, matplotlib %d", x, k, ch, want)
			}
		}
	}
	// scaled: the same colour at the same relative position
	a, _ := NewViridis(10, 30).At(20)
	b, _ := v.At(0.5)
	if a != b {
		t.Errorf("viridis on [10, 30] at 20 = %v, on [0, 1] at 0.5 = %v", a, b)
	}
	if _, err := v.At(1.5); err == nil {
		t.Error("a value above the range got a colour")
	}
}

// analyticField is f(lon, lat) = lon (or lat) on a regular 0.5-degree grid
// lon 0..10, lat 40..45, with a land block at lon >= 8.5, lat >= 43.5.
func analyticField(byLat bool) *Field {
	nx, ny := 21, 11
	f := &Field{NX: nx, NY: ny, Lon: make([]float64, nx*ny), Lat: make([]float64, nx*ny), Value: make([]float64, nx*ny), Land: make([]bool, nx*ny), Name: "f", Unit: "1"}
	for j := 0; j < ny; j++ {
		for i := 0; i < nx; i++ {
			k := j*nx + i
			f.Lon[k], f.Lat[k] = 0.5*float64(i), 40+0.5*float64(j)
			f.Value[k] = f.Lon[k]
			if byLat {
				f.Value[k] = f.Lat[k]
			}
			if f.Lon[k] >= 8.5 && f.Lat[k] >= 43.5 {
				f.Land[k], f.Value[k] = true, math.NaN()
			}
		}
	}
	return f
}

func renderPNG(t *testing.T, fig *figure) image.Image {
	t.Helper()
	dir := t.TempDir()
	names, err := save(dir, fig)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, names[0]))
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	return img
}

func lum(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	return 0.2126*float64(r>>8) + 0.7152*float64(g>>8) + 0.0722*float64(b>>8)
}

// isLine: a pixel clearly darker than the cells 3 px either side across the line.
func isLine(img image.Image, x, y, dx, dy int) bool {
	l := lum(img.At(x, y))
	return l < math.Min(lum(img.At(x-3*dx, y-3*dy)), lum(img.At(x+3*dx, y+3*dy)))-25
}

// Plots: isolines of an analytic field drawn where they must be. With
// f = lon, marching squares interpolates linearly along cell edges, so the
// isoline of level L is the meridian lon = L exactly (common practice: a
// linear field is reproduced exactly by linear interpolation); with f = lat
// it is the parallel lat = L. The test finds the line pixels on a row (a
// column) of the PNG and compares their position with the axis transform of
// the data area; it also checks the colour of a cell against viridis and
// that land is drawn as land with no isoline through it.
func TestMapIsolinesOfAnalyticField(t *testing.T) {
	scale := float64(DPI) / 72
	for _, byLat := range []bool{false, true} {
		f := analyticField(byLat)
		f.Levels = []float64{2.5, 5, 7.5}
		if byLat {
			f.Levels = []float64{41, 42.25, 44}
		}
		fig, info, err := Map("map_f", "analytic", f)
		if err != nil {
			t.Fatal(err)
		}
		img := renderPNG(t, fig)
		H := img.Bounds().Dy()
		a := info.DataArea
		// data (lon, lat) -> PNG pixel; the data area spans the cell outlines
		x0, x1, y0, y1 := -0.25, 10.25, 39.75, 45.25
		px := func(lon float64) int {
			return int(math.Round(float64(a.Min.X+(a.Max.X-a.Min.X)*vgl((lon-x0)/(x1-x0))) * scale))
		}
		py := func(lat float64) int {
			return H - int(math.Round(float64(a.Min.Y+(a.Max.Y-a.Min.Y)*vgl((lat-y0)/(y1-y0)))*scale))
		}
		if !byLat {
			row := py(40.6) // below the labels, which sit mid-line
			var xs []int
			for x := px(0) + 3; x < px(10)-3; x++ {
				if isLine(img, x, row, 1, 0) {
					xs = append(xs, x)
				}
			}
			groups := group(xs)
			if len(groups) != 3 {
				saveDebug(img)
				t.Fatalf("f = lon: line pixels on row %d at %v, want 3 isolines at %d %d %d", row, xs, px(2.5), px(5), px(7.5))
			}
			for k, g := range groups {
				if want := px(f.Levels[k]); math.Abs(g-float64(want)) > 1.5 {
					t.Errorf("f = lon: isoline %g at x = %.1f px, want %d (lon %g)", f.Levels[k], g, want, f.Levels[k])
				}
			}
			// the cell at lon 1, lat 41 has f = 1: its centre pixel is viridis(1) on [0, 10]
			want, _ := NewViridis(0, 10).At(1)
			got := color.NRGBAModel.Convert(img.At(px(1), py(41))).(color.NRGBA)
			w := want.(color.NRGBA)
			if absd(got.R, w.R) > 2 || absd(got.G, w.G) > 2 || absd(got.B, w.B) > 2 {
				t.Errorf("cell f = 1 drawn %v, viridis gives %v", got, w)
			}
			if info.Min != 0 || info.Max != 10 {
				t.Errorf("colour bar range %g..%g, want the field's 0..10 over sea cells", info.Min, info.Max)
			}
		} else {
			col := px(1.6)
			var ys []int
			for y := py(45) + 3; y < py(40)-3; y++ {
				if isLine(img, col, y, 0, 1) {
					ys = append(ys, y)
				}
			}
			groups := group(ys)
			if len(groups) != 3 {
				t.Fatalf("f = lat: line pixels on column %d at %v, want 3 isolines", col, ys)
			}
			for k, g := range groups {
				want := py(f.Levels[len(f.Levels)-1-k]) // top to bottom
				if math.Abs(g-float64(want)) > 1.5 {
					t.Errorf("f = lat: isoline %g at y = %.1f px, want %d", f.Levels[len(f.Levels)-1-k], g, want)
				}
			}
			// land: the block east of 8.5 and north of 43.5 is sand, with no isoline
			// (level 44 stops at the coast)
			for _, lon := range []float64{9, 9.5, 10} {
				c := color.NRGBAModel.Convert(img.At(px(lon), py(44))).(color.NRGBA)
				if c != landColor {
					t.Errorf("land cell at (%g, 44) drawn %v, want the land colour %v", lon, c, landColor)
				}
			}
		}
	}
}

func vgl(x float64) vg.Length { return vg.Length(x) }

func absd(a, b uint8) int {
	if a > b {
		return int(a - b)
	}
	return int(b - a)
}

// group merges runs of adjacent pixel positions and returns their centres.
func group(v []int) []float64 {
	var out []float64
	for i := 0; i < len(v); {
		j := i
		for j+1 < len(v) && v[j+1]-v[j] <= 1 {
			j++
		}
		out = append(out, float64(v[i]+v[j])/2)
		i = j + 1
	}
	return out
}

func saveDebug(img image.Image) {
	f, _ := os.Create("/tmp/report-debug.png")
	png.Encode(f, img)
	f.Close()
}
