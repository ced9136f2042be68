package engine

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/grid"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/runspec"
)

// meshPair writes, with testdata/ugrid/make_ugrid.py (Debian's
// python3-netcdf4), a regular grid file and the same nodes and values as a
// triangulated UGRID file (nodes shuffled, start_index 1) into a temporary
// directory, once per test binary.
func meshPair(t *testing.T) (gridFile, meshFile string) {
	t.Helper()
	py := testtool.NeedPython(t, "numpy", "netCDF4")
	pairOnce.Do(func() {
		dir, err := os.MkdirTemp("", "swellgrid-ugrid-pair-")
		if err != nil {
			pairErr = err
			return
		}
		cmd := exec.Command(py, "testdata/ugrid/make_ugrid.py", "--pair", dir)
		cmd.Dir = "../.."
		if out, err := cmd.CombinedOutput(); err != nil {
			pairErr = fmt.Errorf("make_ugrid.py --pair: %v\n%s", err, out)
			return
		}
		pairDir = dir
	})
	if pairErr != nil {
		t.Fatal(pairErr)
	}
	return filepath.Join(pairDir, "grid.nc"), filepath.Join(pairDir, "mesh.nc")
}

// cellsByPosition reads every column of cells.parquet keyed by (lon, lat).
func cellsByPosition(t *testing.T, path string) (map[[2]float64]map[string]any, []string) {
	t.Helper()
	cols, err := parquetread.Columns(path)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for n := range cols {
		names = append(names, n)
	}
	sort.Strings(names)
	out := map[[2]float64]map[string]any{}
	for i, lo := range cols["lon"] {
		row := map[string]any{}
		for _, n := range names {
			row[n] = cols[n][i]
		}
		out[[2]float64{lo.(float64), cols["lat"][i].(float64)}] = row
	}
	return out, names
}

// isolineLengths sums the isoline lengths of a contour layer per level
// (in degrees, the layer's lon/lat plane).
func isolineLengths(t *testing.T, path string) map[float64]float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	fc, err := geojson.UnmarshalFeatureCollection(b)
	if err != nil {
		t.Fatal(err)
	}
	out := map[float64]float64{}
	for _, f := range fc.Features {
		lvl := f.Properties["level"].(float64)
		var mls orb.MultiLineString
		switch g := f.Geometry.(type) {
		case orb.MultiLineString:
			mls = g
		case orb.LineString:
			mls = orb.MultiLineString{g}
		}
		for _, l := range mls {
			for k := 1; k < len(l); k++ {
				out[lvl] += math.Hypot(l[k][0]-l[k-1][0], l[k][1]-l[k-1][1])
			}
		}
	}
	return out
}

// TestMeshMatchesGrid: a regular grid triangulated into a UGRID file gives
// per-node statistics identical to the grid run's (every column of
// cells.parquet, bit for bit, joined by position; the computation per cell
// does not depend on the grid), and isolines of the same total length per
// level within 1% (marching triangles on two triangles per quad against
// marching squares on the quad: both interpolate linearly along the edges;
// they differ inside the cells).
func TestMeshMatchesGrid(t *testing.T) {
	gf, mf := meshPair(t)
	tmp := t.TempDir()
	gdir, mdir := filepath.Join(tmp, "grid"), filepath.Join(tmp, "mesh")
	clRun(t, clSpec([]string{gf}, gdir), Options{})
	clRun(t, clSpec([]string{mf}, mdir), Options{})
	g, names := cellsByPosition(t, filepath.Join(gdir, "cells.parquet"))
	m, mnames := cellsByPosition(t, filepath.Join(mdir, "cells.parquet"))
	if len(g) != 108 || len(m) != 108 || len(names) != len(mnames) {
		t.Fatalf("grid run %d cells, %d columns; mesh run %d cells, %d columns", len(g), len(names), len(m), len(mnames))
	}
	compared, nonNull := 0, 0
	for pos, grow := range g {
		mrow := m[pos]
		if mrow == nil {
			t.Fatalf("node at %v is in the grid run only", pos)
		}
		for _, n := range names {
			if n == "cell_id" || n == "geometry" {
				continue // the cell order differs (rows vs Hilbert curve)
			}
			a, b := grow[n], mrow[n]
			same := fmt.Sprintf("%T %v", a, a) == fmt.Sprintf("%T %v", b, b)
			if fa, ok := a.(float64); ok {
				fb, ok2 := b.(float64)
				same = ok2 && math.Float64bits(fa) == math.Float64bits(fb)
			}
			if !same {
				t.Errorf("node %v column %s: grid %v, mesh %v", pos, n, a, b)
			}
			compared++
			if a != nil {
				nonNull++
			}
		}
	}
	t.Logf("compared %d values (%d not null) of %d columns at 108 nodes: identical", compared, nonNull, len(names)-2)
	if nonNull < 108*20 {
		t.Errorf("only %d non-null values compared", nonNull)
	}
	// atlas.nc read by xarray (check_atlas.py checks the mesh against the
	// input itself): every per-node variable equals cells.parquet at the
	// node's position.
	at := checkAtlas(t, filepath.Join(mdir, "atlas.nc"), mf)
	if at.Location != "node" || len(at.Values) < 20 {
		t.Fatalf("atlas.nc: data on %q, %d variables", at.Location, len(at.Values))
	}
	checked := 0
	for name, vals := range at.Values {
		for i, x := range vals {
			pos := [2]float64{at.NodeLon[i], at.NodeLat[i]}
			want, _ := m[pos][name].(float64)
			if iv, ok := m[pos][name].(int64); ok {
				want = float64(iv)
			}
			if m[pos][name] == nil {
				if x != nil {
					t.Errorf("atlas.nc %s node %d: %v where cells.parquet is null", name, i, *x)
				}
				continue
			}
			if x == nil || *x != want {
				t.Errorf("atlas.nc %s node %d: %v, cells.parquet %v", name, i, x, want)
			}
			checked++
		}
	}
	t.Logf("atlas.nc (xarray): %d variables on %d nodes, %d values equal to cells.parquet", len(at.Values), len(at.NodeLon), checked)
	for _, col := range []string{"power_mean_kw_m", "hm0_mean_m"} {
		gl := isolineLengths(t, filepath.Join(gdir, "contours", col+".geojson"))
		ml := isolineLengths(t, filepath.Join(mdir, "contours", col+".geojson"))
		if len(gl) < 3 || len(gl) != len(ml) {
			t.Fatalf("%s: %d grid levels, %d mesh levels", col, len(gl), len(ml))
		}
		var gs, ms float64
		for lvl, l := range gl {
			gs += l
			ms += ml[lvl]
		}
		rel := math.Abs(ms-gs) / gs
		t.Logf("%s: total isoline length over %d levels: grid %.5f deg, mesh %.5f deg, relative difference %.3f%%", col, len(gl), gs, ms, 100*rel)
		if rel > 0.01 {
			t.Errorf("%s: mesh isolines total %.5f vs grid %.5f (%.2f%% > 1%%)", col, ms, gs, 100*rel)
		}
	}
}

// TestMeshShardsMerge: 4 shards of a mesh (ranges of the Hilbert order)
// merged give the same bytes as one run.
func TestMeshShardsMerge(t *testing.T) {
	_, mf := meshPair(t)
	tmp := t.TempDir()
	single := filepath.Join(tmp, "single")
	clRun(t, clSpec([]string{mf}, single), Options{})
	want := runcheck.RunOutputs(t, single)
	dirs := runShards(t, []string{mf}, tmp, 4)
	merged := filepath.Join(tmp, "merged")
	if _, err := Merge(context.Background(), merged, dirs, Options{Version: "test", Workers: 2}); err != nil {
		t.Fatal(err)
	}
	runcheck.SameOutputs(t, "merge of 4 mesh shards", want, runcheck.RunOutputs(t, merged))
}

var (
	pairOnce sync.Once
	pairDir  string
	pairErr  error
)

// atlasCheck is what check_atlas.py prints.
type atlasCheck struct {
	Location         string                `json:"location"`
	Values           map[string][]*float64 `json:"values"`
	NodeLon, NodeLat []float64
	FaceLon, FaceLat []float64
}

// checkAtlas runs testdata/ugrid/check_atlas.py (Debian python3-xarray and
// python3-netcdf4) on a UGRID atlas.nc and its input mesh.
func checkAtlas(t *testing.T, atlas, input string) *atlasCheck {
	t.Helper()
	py := testtool.NeedPython(t, "numpy", "netCDF4", "xarray")
	abs, _ := filepath.Abs(input)
	cmd := exec.Command(py, "testdata/ugrid/check_atlas.py", atlas, abs)
	cmd.Dir = "../.."
	out, err := cmd.Output()
	if err != nil {
		msg := ""
		if ee, ok := err.(*exec.ExitError); ok {
			msg = string(ee.Stderr)
		}
		t.Fatalf("check_atlas.py %s: %v\n%s", atlas, err, msg)
	}
	var raw struct {
		atlasCheck
		NodeLon []float64 `json:"node_lon"`
		NodeLat []float64 `json:"node_lat"`
		FaceLon []float64 `json:"face_lon"`
		FaceLat []float64 `json:"face_lat"`
	}
	if err := json.Unmarshal(out, &raw); err != nil {
		t.Fatalf("check_atlas.py output: %v\n%s", err, out)
	}
	c := raw.atlasCheck
	c.NodeLon, c.NodeLat, c.FaceLon, c.FaceLat = raw.NodeLon, raw.NodeLat, raw.FaceLon, raw.FaceLat
	return &c
}

// TestMeshFacesEndToEnd: data on faces (faces1.nc: connectivity transposed,
// start_index 1, fill 999999) run end to end: the mean Hm0 of face f is the
// mean of its series 2 + 0.01 f + 0.001 k, k = 0..47 (make_ugrid.py), i.e.
// 2.0235 + 0.01 f, in cells.parquet (at the face's position), and atlas.nc
// (read by xarray, in the file's face order) holds the same value; no
// contours.
func TestMeshFacesEndToEnd(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "faces")
	in, _ := filepath.Abs("../../testdata/ugrid/faces1.nc")
	res := clRun(t, clSpec([]string{in}, dir), Options{})
	cells, _ := cellsByPosition(t, filepath.Join(dir, "cells.parquet"))
	at := checkAtlas(t, filepath.Join(dir, "atlas.nc"), in)
	if at.Location != "face" || len(at.FaceLon) != 4 || len(cells) != 4 {
		t.Fatalf("atlas.nc: data on %q, %d faces; cells.parquet %d cells", at.Location, len(at.FaceLon), len(cells))
	}
	for f := 0; f < 4; f++ {
		want := 2.0235 + 0.01*float64(f)
		got := cells[[2]float64{at.FaceLon[f], at.FaceLat[f]}]["hm0_mean_m"]
		// within 1e-6 m: the mean is summed from values quantised at the
		// histogram resolution (manifest histogram_resolution).
		if g, ok := got.(float64); !ok || math.Abs(g-want) > 1e-6 {
			t.Errorf("face %d: cells.parquet hm0_mean_m %v, want %v", f, got, want)
		}
		if x := at.Values["hm0_mean_m"][f]; x == nil || *x != got {
			t.Errorf("face %d: atlas.nc hm0_mean_m %v, cells.parquet %v", f, x, got)
		}
	}
	warned := false
	for _, w := range res.Warnings {
		warned = warned || strings.Contains(w, "data are on the mesh's faces")
	}
	if _, err := os.Stat(filepath.Join(dir, "contours")); err == nil || !warned {
		t.Errorf("face data: contours written or no warning (warnings %v)", res.Warnings)
	}
}

// TestMeshScreenedByArea: a node-centred mesh is screened by area, each node
// taking its median dual cell (grid.MeshOutlines). With every node passing,
// the scenario's area is the area of the mesh (the triangulated rectangle of
// meshPair) as pyproj's geodesic polygon area gives it
// (testdata/ugrid/hull_area.py, Debian's python3-pyproj; 1e-6 relative),
// the rows' area_km2 sum to it, and the mean power is weighted by them.
func TestMeshScreenedByArea(t *testing.T) {
	_, mf := meshPair(t)
	py := testtool.NeedPython(t, "numpy", "netCDF4", "pyproj")
	out, err := exec.Command(py, "../../testdata/ugrid/hull_area.py", mf).Output()
	if err != nil {
		t.Fatalf("hull_area.py: %v", err)
	}
	want, err := strconv.ParseFloat(strings.TrimSpace(string(out)), 64)
	if err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "mesh")
	s := clSpec([]string{mf}, dir)
	s.Output.Report, s.Output.NetCDF = false, false
	s.Screening = &runspec.ScreeningSpec{Scenarios: []runspec.ScenarioSpec{{Name: "all", Criteria: []string{"hm0_mean_m > 0"}}}}
	clRun(t, s, Options{})
	b, err := os.ReadFile(filepath.Join(dir, "screening.json"))
	if err != nil {
		t.Fatal(err)
	}
	var sum struct {
		Scenarios []struct {
			Cells        int      `json:"cells_passing"`
			AreaKm2      *float64 `json:"area_km2"`
			PowerMeanKWm *float64 `json:"power_mean_kw_m"`
		} `json:"scenarios"`
	}
	if err := json.Unmarshal(b, &sum); err != nil || len(sum.Scenarios) != 1 {
		t.Fatalf("screening.json: %v\n%s", err, b)
	}
	sc := sum.Scenarios[0]
	if sc.Cells != 108 || sc.AreaKm2 == nil {
		t.Fatalf("%d cells passing, area %v: the mesh is not screened by area", sc.Cells, sc.AreaKm2)
	}
	if rel := math.Abs(*sc.AreaKm2-want) / want; rel > 1e-6 {
		t.Errorf("area %.6f km2, pyproj %.6f km2 (relative %.2g)", *sc.AreaKm2, want, rel)
	}
	rows, err := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	cells, err := parquetread.Columns(filepath.Join(dir, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	tot, wp := 0.0, 0.0
	for k, a := range rows["area_km2"] {
		id := rows["cell_id"][k].(int64)
		tot += a.(float64)
		wp += a.(float64) * cells["power_mean_kw_m"][id].(float64)
	}
	if math.Abs(tot-*sc.AreaKm2) > 1e-9**sc.AreaKm2 {
		t.Errorf("rows' areas sum to %.9g, the scenario's %.9g", tot, *sc.AreaKm2)
	}
	if sc.PowerMeanKWm == nil || math.Abs(*sc.PowerMeanKWm-wp/tot) > 1e-9*wp/tot {
		t.Errorf("mean power %v, area-weighted %.9g", sc.PowerMeanKWm, wp/tot)
	}
	// the passing area's outline: the union of the dual cells, the mesh's
	// rectangle, its area (grid.MultiPolygonAreaM2) the scenario's
	b, err = os.ReadFile(filepath.Join(dir, "contours", "screening_all.geojson"))
	if err != nil {
		t.Fatalf("no outline of the mesh's passing area: %v", err)
	}
	fc, err := geojson.UnmarshalFeatureCollection(b)
	if err != nil || len(fc.Features) != 1 {
		t.Fatalf("outline: %v", err)
	}
	mp, ok := fc.Features[0].Geometry.(orb.MultiPolygon)
	if !ok || len(mp) != 1 || len(mp[0]) != 1 {
		t.Fatalf("outline is not one polygon without holes: %v", fc.Features[0].Geometry)
	}
	if a := grid.MultiPolygonAreaM2(mp) / 1e6; math.Abs(a-want)/want > 1e-6 {
		t.Errorf("outline area %.6f km2, pyproj %.6f", a, want)
	}
	t.Logf("mesh screened: %d nodes, %.3f km2 (pyproj %.3f), mean power %.4f kW/m", sc.Cells, *sc.AreaKm2, want, *sc.PowerMeanKWm)
}
