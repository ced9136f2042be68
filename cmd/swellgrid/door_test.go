package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// outsideDir is a folder outside the run directory holding one canary file
// whose bytes and modification time must survive every refused command.
func outsideDir(t *testing.T) (dir string, intact func(t *testing.T)) {
	t.Helper()
	dir = t.TempDir()
	p := filepath.Join(dir, "canary.txt")
	body := []byte("not swellgrid's\n")
	os.WriteFile(p, body, 0o644)
	old := time.Date(2001, 2, 3, 4, 5, 6, 0, time.UTC)
	os.Chtimes(p, old, old)
	return dir, func(t *testing.T) {
		t.Helper()
		ents, _ := os.ReadDir(dir)
		if len(ents) != 1 {
			var names []string
			for _, e := range ents {
				names = append(names, e.Name())
			}
			t.Errorf("written outside the run directory: %s holds %v", dir, names)
		}
		b, _ := os.ReadFile(p)
		st, err := os.Stat(p)
		if err != nil || !bytes.Equal(b, body) || !st.ModTime().Equal(old) {
			t.Errorf("the canary outside the run directory changed: %q", b)
		}
	}
}

// A symbolic link planted in an existing output directory where the run
// makes one of its folders (contours/, the state folder .swellgrid/, the
// report's folder) is refused with exit 2 naming it, before anything is
// computed (no cells.parquet), and nothing is written through it; an --out
// that is itself a link works through it (the user's choice).
func TestPlantedLinksRefused(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
	for _, rel := range []string{"contours", ".swellgrid", "report"} {
		t.Run(rel, func(t *testing.T) {
			outside, intact := outsideDir(t)
			out := filepath.Join(t.TempDir(), "out")
			os.Mkdir(out, 0o755)
			link := filepath.Join(out, rel)
			if err := os.Symlink(outside, link); err != nil {
				t.Fatal(err)
			}
			code, stderr := codeWithin(t, 60*time.Second, "run", "--input", in, "--out", out, "--workers", "1")
			if code != 2 || !strings.Contains(stderr, link) || !strings.Contains(stderr, "symbolic link") {
				t.Fatalf("exit %d, want 2 naming %s: %s", code, link, stderr)
			}
			if _, err := os.Stat(filepath.Join(out, "cells.parquet")); err == nil {
				t.Error("the run computed before refusing the link")
			}
			intact(t)
		})
	}
	t.Run("out is a link", func(t *testing.T) {
		real := filepath.Join(t.TempDir(), "real")
		os.Mkdir(real, 0o755)
		out := filepath.Join(t.TempDir(), "out")
		os.Symlink(real, out)
		if code, stderr := codeWithin(t, 60*time.Second, "run", "--input", in, "--out", out, "--workers", "1"); code != 0 {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		for _, f := range []string{"cells.parquet", "manifest.json", "contours/power_mean_kw_m.geojson", "report/index.html"} {
			if st, err := os.Lstat(filepath.Join(real, f)); err != nil || !st.Mode().IsRegular() || st.Size() == 0 {
				t.Errorf("%s not written through the --out link: %v", f, err)
			}
		}
		if m, _ := filepath.Glob(filepath.Join(real, ".*.partial-*")); len(m) > 0 {
			t.Errorf("temporary files left: %v", m)
		}
		// report on the finished run with a link planted at report/: refused,
		// the earlier report left alone
		outside, intact := outsideDir(t)
		os.RemoveAll(filepath.Join(real, "report"))
		link := filepath.Join(out, "report")
		os.Symlink(outside, link)
		code, stderr := codeWithin(t, 60*time.Second, "report", out)
		if code != 2 || !strings.Contains(stderr, link) {
			t.Fatalf("report: exit %d, want 2 naming %s: %s", code, link, stderr)
		}
		intact(t)
	})
}
