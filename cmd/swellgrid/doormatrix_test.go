package main

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"swellgrid/export"
)

var (
	matrixOnce sync.Once
	matrixRuns struct{ grid, bulk, shard1, shard2 string }
	matrixErr  error
)

// matrixRunsOf makes, once, the finished runs the planted-link matrix
// writes into (copies of them): a raster run (regular_packed.nc), a run the
// synthetic station matches (bulk_monthly, for validate), and the two
// shards of the raster run (for merge). Removed by TestMain (provedRoot).
func matrixRunsOf(t *testing.T) (grid, bulk, shard1, shard2 string) {
	t.Helper()
	provedRuns(t) // makes provedRoot
	matrixOnce.Do(func() {
		root := filepath.Join(provedRoot, "matrix")
		in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
		m := &matrixRuns
		m.grid, m.bulk = filepath.Join(root, "grid"), filepath.Join(root, "bulk")
		m.shard1, m.shard2 = filepath.Join(root, "s1"), filepath.Join(root, "s2")
		for _, args := range [][]string{
			{"run", "--input", in, "--out", m.grid, "--workers", "1"},
			{"run", "--input", filepath.Join("..", "..", "testdata", "bulk_monthly", "sgfx_bulk_2001-0[1-4].nc"), "--out", m.bulk, "--workers", "1"},
			{"run", "--input", in, "--out", m.shard1, "--shard", "1/2", "--workers", "1"},
			{"run", "--input", in, "--out", m.shard2, "--shard", "2/2", "--workers", "1"},
		} {
			if code, stderr := codeOf(args...); code != 0 {
				matrixErr = errors.New(stderr)
				return
			}
		}
	})
	if matrixErr != nil {
		t.Fatal(matrixErr)
	}
	return matrixRuns.grid, matrixRuns.bulk, matrixRuns.shard1, matrixRuns.shard2
}

// Every command that writes refuses a symbolic link planted at each folder
// and fixed name it creates in a run directory: exit 2 naming the link,
// before anything is computed (run, merge and --update write no
// manifest; report, screen and validate no product), nothing written
// outside the run directory (a canary's bytes and modification time), and
// the link left as it was.
func TestPlantedLinkMatrix(t *testing.T) {
	grid, bulk, s1, s2 := matrixRunsOf(t)
	in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
	obs := filepath.Join("..", "..", "testdata", "validate", "station_synth.csv")
	spec := filepath.Join(t.TempDir(), "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	type cmdCase struct {
		cmd   string
		from  string // a finished run copied first ("" = a new directory)
		args  func(dir string) []string
		names []string // folders end in "/"
		fresh string   // a file whose absence proves nothing was computed
	}
	runNames := []string{"contours/", "report/", ".swellgrid/", "manifest.json", "cells.parquet", "monthly.parquet", "atlas.nc", "atlas.gpkg", ".swellgrid/lock", ".swellgrid/manifest.sha256"}
	for _, c := range []cmdCase{
		{"run", "", func(d string) []string { return []string{"run", "--input", in, "--out", d, "--workers", "1"} }, runNames, "manifest.json"},
		{"update", grid, func(d string) []string { return []string{"run", "--input", in, "--update", d, "--workers", "1"} },
			[]string{"contours/", "report/", "cells.parquet", "atlas.nc", ".swellgrid/lock", ".swellgrid/manifest.sha256"}, ""},
		{"merge", "", func(d string) []string { return []string{"merge", "--out", d, "--workers", "1", s1, s2} }, runNames, "manifest.json"},
		{"report", grid, func(d string) []string { return []string{"report", "--atlas", d} },
			[]string{"report/", "atlas.nc", "atlas.gpkg", ".swellgrid/", ".swellgrid/lock", ".swellgrid/manifest.sha256"}, "report/index.html"},
		{"screen", grid, func(d string) []string { return []string{"screen", d, "--spec", spec} },
			[]string{"contours/", "report/", "screening.parquet", "screening.json", "atlas.nc", ".swellgrid/lock", ".swellgrid/manifest.sha256"}, "screening.parquet"},
		{"validate", bulk, func(d string) []string { return []string{"validate", "--run", d, "--obs", obs} },
			[]string{"validation.json", "validation.parquet", "validation_qq.parquet", "validation_pairs.parquet", ".swellgrid/lock", ".swellgrid/manifest.sha256"}, "validation.parquet"},
	} {
		for _, name := range c.names {
			t.Run(c.cmd+"/"+name, func(t *testing.T) {
				outside, intact := outsideDir(t)
				dir := filepath.Join(t.TempDir(), "run")
				if c.from != "" {
					dir = copyRun(t, c.from)
				} else {
					os.Mkdir(dir, 0o755)
				}
				rel := strings.TrimSuffix(name, "/")
				link := filepath.Join(dir, filepath.FromSlash(rel))
				os.RemoveAll(link)
				os.MkdirAll(filepath.Dir(link), 0o755)
				target := outside
				if !strings.HasSuffix(name, "/") {
					target = filepath.Join(outside, "canary.txt")
				}
				if c.fresh != "" && c.from != "" {
					os.RemoveAll(filepath.Join(dir, filepath.FromSlash(c.fresh)))
				}
				if err := os.Symlink(target, link); err != nil {
					t.Fatal(err)
				}
				code, stderr := codeWithin(t, 90*time.Second, c.args(dir)...)
				if code != 2 || !strings.Contains(stderr, link) {
					t.Fatalf("exit %d, want 2 naming %s: %.600s", code, link, stderr)
				}
				if c.fresh != "" && c.fresh != name {
					if _, err := os.Stat(filepath.Join(dir, filepath.FromSlash(c.fresh))); err == nil {
						t.Errorf("%s written before the link was refused", c.fresh)
					}
				}
				if st, err := os.Lstat(link); err != nil || st.Mode()&os.ModeSymlink == 0 {
					t.Errorf("the planted link was replaced or removed")
				}
				intact(t)
			})
		}
	}
}

// A link re-planted between the checks and the write (the hook
// export.BeforeWrite swaps a folder of the run directory for a link to the
// outside at the moment the tool writes into it) is refused with exit 2
// naming it, and nothing is written outside: every write goes through the
// run directory's handle.
func TestReplantedLinkMatrix(t *testing.T) {
	grid, _, _, _ := matrixRunsOf(t)
	in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
	spec := filepath.Join(t.TempDir(), "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	for _, c := range []struct {
		name, folder string
		fresh        bool
		args         func(d string) []string
	}{
		{"run contours", "contours", true, func(d string) []string { return []string{"run", "--input", in, "--out", d, "--workers", "1"} }},
		{"run state", ".swellgrid", true, func(d string) []string { return []string{"run", "--input", in, "--out", d, "--workers", "1"} }},
		{"screen contours", "contours", false, func(d string) []string { return []string{"screen", d, "--spec", spec} }},
		{"report state", ".swellgrid", false, func(d string) []string { return []string{"report", d} }},
	} {
		t.Run(c.name, func(t *testing.T) {
			outside, intact := outsideDir(t)
			dir := filepath.Join(t.TempDir(), "run")
			if c.fresh {
				os.Mkdir(dir, 0o755)
			} else {
				dir = copyRun(t, grid)
			}
			folder := filepath.Join(dir, c.folder)
			planted := false
			export.BeforeWrite = func(path string) {
				if !planted && strings.HasPrefix(path, folder+string(filepath.Separator)) && !strings.HasSuffix(path, "/lock") {
					if _, err := os.Stat(folder); err != nil {
						return
					}
					planted = true
					aside := filepath.Join(dir, "aside-"+filepath.Base(folder))
					if err := os.Rename(folder, aside); err != nil {
						t.Error(err)
					}
					if err := os.Symlink(outside, folder); err != nil {
						t.Error(err)
					}
				}
			}
			defer func() { export.BeforeWrite = nil }()
			code, stderr := codeWithin(t, 90*time.Second, c.args(dir)...)
			if !planted {
				t.Fatalf("the hook planted no link (exit %d): %.300s", code, stderr)
			}
			if code != 2 || !strings.Contains(stderr, folder) {
				t.Fatalf("exit %d, want 2 naming %s: %.600s", code, folder, stderr)
			}
			intact(t)
		})
	}
}
