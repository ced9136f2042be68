package grid

// Checks against GDAL (Debian gdal-bin / python3-gdal): gdal_contour on the same
// field must give isolines of the same total length per level within 1%, and
// GEOS (through OGR's Geometry.IsValid) must find every band polygon valid.
// The tests skip with a message when the tools are absent.

import (
	"swellgrid/internal/testtool"

	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"
)

// writeASC writes a regular field (lon = x ascending, lat = y ascending, equal
// spacing) as an ESRI ASCII grid, which GDAL reads with its AAIGrid driver; GDAL
// treats pixel centres as the contouring nodes, so the centre of pixel (i, j)
// is placed on node (i, j).
func writeASC(t *testing.T, path string, f *Field) {
	t.Helper()
	h := f.Lon[1] - f.Lon[0]
	var b bytes.Buffer
	fmt.Fprintf(&b, "ncols %d\nnrows %d\nxllcorner %.17g\nyllcorner %.17g\ncellsize %.17g\nNODATA_value -9999\n",
		f.NX, f.NY, f.Lon[0]-h/2, f.Lat[0]-h/2, h)
	for j := f.NY - 1; j >= 0; j-- {
		for i := 0; i < f.NX; i++ {
			k := j*f.NX + i
			v := f.Value[k]
			if math.IsNaN(v) || (f.Mask != nil && f.Mask[k]) {
				b.WriteString("-9999")
			} else {
				b.WriteString(strconv.FormatFloat(v, 'g', 17, 64))
			}
			if i+1 < f.NX {
				b.WriteByte(' ')
			}
		}
		b.WriteByte('\n')
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
}

func gdalLengths(t *testing.T, f *Field, levels []float64) map[float64]float64 {
	t.Helper()
	testtool.Need(t, "gdal_contour", "gdal-bin")
	dir := t.TempDir()
	asc := filepath.Join(dir, "field.asc")
	out := filepath.Join(dir, "contours.geojson")
	writeASC(t, asc, f)
	args := []string{"-q", "-a", "level", "-f", "GeoJSON", "-fl"}
	for _, l := range levels {
		args = append(args, strconv.FormatFloat(l, 'g', 17, 64))
	}
	args = append(args, asc, out)
	if msg, err := exec.Command("gdal_contour", args...).CombinedOutput(); err != nil {
		t.Fatalf("gdal_contour %v: %v\n%s", args, err, msg)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	fc, err := geojson.UnmarshalFeatureCollection(data)
	if err != nil {
		t.Fatal(err)
	}
	// gdal_contour carries lines on half a pixel past the outermost valid
	// nodes, to the edge of the pixels (raster border and nodata pixels); our
	// domain ends at the nodes. Count only GDAL's segments whose midpoint lies
	// in a cell with four valid nodes, i.e. in our domain.
	h := f.Lon[1] - f.Lon[0]
	inDomain := func(a, b orb.Point) bool {
		mx, my := (a[0]+b[0])/2, (a[1]+b[1])/2
		i := int(math.Floor((mx - f.Lon[0]) / h))
		j := int(math.Floor((my - f.Lat[0]) / h))
		if i < 0 || j < 0 || i >= f.NX-1 || j >= f.NY-1 {
			return false
		}
		for _, k := range []int{j*f.NX + i, j*f.NX + i + 1, (j+1)*f.NX + i, (j+1)*f.NX + i + 1} {
			if math.IsNaN(f.Value[k]) || (f.Mask != nil && f.Mask[k]) {
				return false
			}
		}
		return true
	}
	length := func(m orb.MultiLineString) float64 {
		s := 0.0
		for _, l := range m {
			for k := 1; k < len(l); k++ {
				if inDomain(l[k-1], l[k]) {
					s += math.Hypot(l[k][0]-l[k-1][0], l[k][1]-l[k-1][1])
				}
			}
		}
		return s
	}
	lengths := map[float64]float64{}
	for _, ft := range fc.Features {
		lvl, ok := ft.Properties["level"].(float64)
		if !ok {
			t.Fatalf("gdal_contour feature without numeric level: %v", ft.Properties)
		}
		switch g := ft.Geometry.(type) {
		case orb.LineString:
			lengths[lvl] += length(orb.MultiLineString{g})
		case orb.MultiLineString:
			lengths[lvl] += length(g)
		default:
			t.Fatalf("gdal_contour geometry %T", g)
		}
	}
	return lengths
}

func compareWithGDAL(t *testing.T, name string, f *Field, levels []float64) {
	t.Helper()
	ref := gdalLengths(t, f, levels)
	ours, err := Isolines(f, levels)
	if err != nil {
		t.Fatal(err)
	}
	for k, l := range levels {
		got, want := mlsLength(ours[k]), ref[l]
		if want == 0 {
			t.Errorf("%s level %v: gdal_contour gave no line", name, l)
			continue
		}
		rel := math.Abs(got-want) / want
		t.Logf("%s level %v: ours %.6f, gdal_contour %.6f, rel diff %.2g", name, l, got, want, rel)
		if rel > 0.01 {
			t.Errorf("%s level %v: total length %.6f differs from gdal_contour's %.6f by %.2g (> 1%%)", name, l, got, want, rel)
		}
	}
}

func TestIsolinesAgainstGDAL(t *testing.T) {
	// Cone: closed circles.
	compareWithGDAL(t, "cone", regularField(121, 121, -1, 1, -1, 1, cone), []float64{0.2, 0.5, 0.9})
	// Many saddles and lines ending on the boundary.
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	compareWithGDAL(t, "saddles", regularField(151, 116, 0, 3, 0, 2.3, fn), []float64{-0.8, -0.3, 0.1, 0.25, 0.7})
	// Masked nodes (nodata in GDAL): a disc of nodes removed from the cone.
	m := regularField(121, 121, -1, 1, -1, 1, cone)
	m.Mask = make([]bool, len(m.Value))
	for k := range m.Mask {
		m.Mask[k] = math.Hypot(m.Lon[k]-0.4, m.Lat[k]-0.1) < 0.25
	}
	compareWithGDAL(t, "masked cone", m, []float64{0.3, 0.5, 0.8})
}

// TestBandsValidGEOS writes band layers as GeoJSON and asks GEOS, through
// GDAL's Python bindings (Debian python3-gdal), whether each MultiPolygon is
// valid (OGC simple-features rules: no self-crossing rings, holes inside
// exteriors) and what its area is; the area must match ours.
func TestBandsValidGEOS(t *testing.T) {
	py := "/usr/bin/python3"
	if _, err := os.Stat(py); err != nil {
		py = "python3"
	}
	script := filepath.Join("..", "testdata", "export", "check_valid.py")
	fn := func(x, y float64) float64 { return math.Sin(3*x)*math.Cos(2*y) + 0.3*math.Sin(5*(x+y)) }
	quant := func(x, y float64) float64 { return math.Round(fn(x, y)*10) / 10 }
	masked := regularField(61, 47, 0, 3, 0, 2.3, fn)
	masked.Mask = make([]bool, len(masked.Value))
	for k := range masked.Mask {
		// a checkerboard of masked nodes in one corner makes pinch points
		i, j := k%masked.NX, k/masked.NX
		masked.Mask[k] = i < 12 && j < 12 && (i+j)%3 == 0
	}
	fields := map[string]*Field{
		"saddles":   regularField(61, 47, 0, 3, 0, 2.3, fn),
		"quantised": regularField(61, 47, 0, 3, 0, 2.3, quant),
		"masked":    masked,
	}
	edges := []float64{math.Inf(-1), -0.8, -0.3, 0, 0.2, 0.7, math.Inf(1)}
	dir := t.TempDir()
	var paths []string
	want := map[string]float64{}
	for name, f := range fields {
		bands, err := Bands(f, edges)
		if err != nil {
			t.Fatal(err)
		}
		fc := geojson.NewFeatureCollection()
		for b, mp := range bands {
			fc.Append(geojson.NewFeature(mp))
			want[fmt.Sprintf("%s %d", name, b)] = mpArea(mp)
		}
		data, err := json.Marshal(fc)
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, name+".geojson")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	out, err := exec.Command(py, append([]string{script}, paths...)...).CombinedOutput()
	if strings.Contains(string(out), "NO-OSGEO") {
		testtool.Unavailable(t, "python3 cannot import osgeo (Debian package python3-gdal); the GEOS validity check needs it")
	}
	if err != nil {
		t.Fatalf("%s: %v\n%s", script, err, out)
	}
	n := 0
	sc := bufio.NewScanner(bytes.NewReader(out))
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) != 5 {
			continue
		}
		name := strings.TrimSuffix(filepath.Base(fs[0]), ".geojson")
		key := name + " " + fs[1]
		n++
		if fs[3] != "1" {
			t.Errorf("%s: GEOS says the %s is not valid", key, fs[2])
		}
		area, _ := strconv.ParseFloat(fs[4], 64)
		if w := want[key]; math.Abs(area-w) > 1e-9*math.Max(1, w) {
			t.Errorf("%s: GEOS area %v, ours %v", key, area, w)
		}
	}
	if n != len(want) {
		t.Errorf("GEOS checked %d features, want %d:\n%s", n, len(want), out)
	}
}
