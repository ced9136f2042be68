package pipelines

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"sync"
	"testing"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/export/parquetread"
	"swellgrid/internal/testtool"
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
		cmd.Dir = ".."
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
	want := clOutputs(t, single)
	dirs := runShards(t, []string{mf}, tmp, 4)
	merged := filepath.Join(tmp, "merged")
	if _, err := Merge(context.Background(), merged, dirs, Options{Version: "test", Workers: 2}); err != nil {
		t.Fatal(err)
	}
	clSame(t, "merge of 4 mesh shards", want, clOutputs(t, merged))
}

var (
	pairOnce sync.Once
	pairDir  string
	pairErr  error
)
