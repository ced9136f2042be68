package ingest

import (
	"math"
	"os/exec"
	"path/filepath"
	"testing"

	"swellgrid/internal/testtool"
)

// Files chunked one time step per chunk are read without a chunk cache
// (readOnceCache) and give the same values as the same record chunked a
// month per chunk: the bulk fixture rechunked by python3-netcdf4
// (testdata/stepchunk/rechunk.py), read both ways, compared value by value
// (NaN where NaN).
func TestStepChunkedReadOnce(t *testing.T) {
	py := testtool.NeedPython(t, "netCDF4")
	src, err := filepath.Glob(filepath.Join("..", "testdata", "bulk_monthly", "*.nc"))
	if err != nil || len(src) < 2 {
		t.Fatalf("fixture files: %v %v", src, err)
	}
	src = src[:2]
	dir := t.TempDir()
	args := append(append([]string{filepath.Join("..", "testdata", "stepchunk", "rechunk.py")}, src...), dir)
	if out, err := exec.Command(py, args...).CombinedOutput(); err != nil {
		t.Fatalf("rechunk.py: %v\n%s", err, out)
	}
	var step []string
	for _, f := range src {
		step = append(step, filepath.Join(dir, filepath.Base(f)))
	}
	_, want := readAll(t, src, Options{})
	cat, got := readAll(t, step, Options{})
	for _, r := range Roles {
		if cat.Vars[r] == nil || r == Depth {
			continue
		}
		w, g := flat(want, r), flat(got, r)
		if len(w) != len(g) || len(w) == 0 {
			t.Fatalf("%v: %d values read from the step-chunked copy, %d from the original", r, len(g), len(w))
		}
		for i := range w {
			if math.Float64bits(w[i]) != math.Float64bits(g[i]) && !(w[i] != w[i] && g[i] != g[i]) {
				t.Fatalf("%v: value %d is %v from the step-chunked copy, %v from the original", r, i, g[i], w[i])
			}
		}
	}
	// The cache: off for the step-chunked variable, left for the month-chunked one.
	for _, c := range []struct {
		path string
		off  bool
	}{{step[0], true}, {src[0], false}} {
		f, err := openNC(c.path)
		if err != nil {
			t.Fatal(err)
		}
		vi := cat.Files[0].vars[Hm0]
		v := f.find(vi.Name)
		_, _, shape, err := v.chunkBytes()
		if err != nil {
			t.Fatal(err)
		}
		ncMu.Lock()
		err = readOnceCache(v, shape, vi.axes)
		ncMu.Unlock()
		if err != nil {
			t.Fatal(err)
		}
		size, err := varChunkCache(v)
		f.close()
		if err != nil {
			t.Fatal(err)
		}
		if (size == 0) != c.off {
			t.Errorf("%s: chunk cache %d bytes after readOnceCache (chunks %v), want it off: %v", c.path, size, shape, c.off)
		}
	}
}
