package export

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// canary is a file outside the run directory whose bytes and modification
// time must not change.
type canary struct {
	path string
	body []byte
	mod  time.Time
}

func newCanary(t *testing.T, dir string) canary {
	t.Helper()
	p := filepath.Join(dir, "canary.txt")
	body := []byte("outside the run directory\n")
	if err := os.WriteFile(p, body, 0o644); err != nil {
		t.Fatal(err)
	}
	old := time.Date(2001, 2, 3, 4, 5, 6, 0, time.UTC)
	if err := os.Chtimes(p, old, old); err != nil {
		t.Fatal(err)
	}
	return canary{p, body, old}
}

// intact fails unless the canary's folder holds only the canary, unchanged.
func (c canary) intact(t *testing.T) {
	t.Helper()
	ents, _ := os.ReadDir(filepath.Dir(c.path))
	var names []string
	for _, e := range ents {
		names = append(names, e.Name())
	}
	if len(names) != 1 || names[0] != filepath.Base(c.path) {
		t.Errorf("the folder outside the run directory holds %v, want only %s", names, filepath.Base(c.path))
	}
	b, err := os.ReadFile(c.path)
	st, serr := os.Stat(c.path)
	if err != nil || serr != nil || !bytes.Equal(b, c.body) || !st.ModTime().Equal(c.mod) {
		t.Errorf("canary changed: %q (%v), modified %v", b, err, st.ModTime())
	}
}

// A symbolic link planted where the tool makes a folder (contours/, the
// state folder and one of its sub-folders) is refused by MakeDir with a
// LinkError naming it (exit 2 through pipelines/fault), and nothing is
// written through it; the run directory itself may be a link.
func TestMakeDirRefusesLinks(t *testing.T) {
	tmp := t.TempDir()
	outside := filepath.Join(tmp, "outside")
	os.Mkdir(outside, 0o755)
	c := newCanary(t, outside)
	real := filepath.Join(tmp, "real")
	os.Mkdir(real, 0o755)
	root := filepath.Join(tmp, "out") // --out as a link: the user's choice
	if err := os.Symlink(real, root); err != nil {
		t.Fatal(err)
	}
	for _, rel := range []string{ContourDir, ".swellgrid", ".swellgrid/slurm"} {
		t.Run(rel, func(t *testing.T) {
			os.RemoveAll(filepath.Join(real, ".swellgrid"))
			os.RemoveAll(filepath.Join(real, ContourDir))
			if strings.Contains(rel, "/") {
				os.Mkdir(filepath.Join(real, filepath.Dir(rel)), 0o755)
			}
			link := filepath.Join(root, rel)
			if err := os.Symlink(outside, link); err != nil {
				t.Fatal(err)
			}
			if err := CheckDirs(root, rel); !IsLink(err) {
				t.Errorf("CheckDirs: %v, want a LinkError", err)
			}
			_, err := MakeDir(root, rel)
			if !IsLink(err) || !strings.Contains(err.Error(), link) || !strings.Contains(err.Error(), "symbolic link") {
				t.Fatalf("MakeDir(%s): %v, want a LinkError naming %s", rel, err, link)
			}
			c.intact(t)
			os.Remove(link)
			// without the link the folder is made, inside the run directory
			p, err := MakeDir(root, rel)
			if err != nil {
				t.Fatal(err)
			}
			st, err := os.Lstat(filepath.Join(real, rel))
			if err != nil || !st.IsDir() || p != filepath.Join(root, rel) {
				t.Fatalf("MakeDir made %s (%v), want a folder %s", p, err, filepath.Join(real, rel))
			}
		})
	}
	// a file written over a final name that is a link is refused; the
	// link's target is untouched and no temporary file is left
	final := filepath.Join(root, "manifest.json")
	if err := os.Symlink(c.path, final); err != nil {
		t.Fatal(err)
	}
	err := WriteFileAtomic(final, func(w io.Writer) error { _, err := io.WriteString(w, "{}"); return err })
	if !IsLink(err) {
		t.Fatalf("WriteFileAtomic over a link: %v, want a LinkError", err)
	}
	if m, _ := filepath.Glob(filepath.Join(real, PartialGlob)); len(m) > 0 {
		t.Errorf("temporary files left: %v", m)
	}
	c.intact(t)
}

// Two writers of the same final name at once each write their own
// temporary file: neither clobbers the other's, the final file is exactly
// one writer's bytes (never a mix) and no temporary file is left. With a
// fixed temporary name, the second writer's create truncates the first's
// file while it is written.
func TestConcurrentWritersOwnTemps(t *testing.T) {
	dir := t.TempDir()
	final := filepath.Join(dir, "cells.parquet")
	bodies := [][]byte{bytes.Repeat([]byte("A"), 1<<20), bytes.Repeat([]byte("B"), 1<<20+7)}
	// both writers hold their temporary file open together before either
	// commits
	a, err := CreateAtomic(final)
	if err != nil {
		t.Fatal(err)
	}
	b, err := CreateAtomic(final)
	if err != nil {
		t.Fatal(err)
	}
	if a.tmp == b.tmp {
		t.Fatalf("both writers got the temporary name %s", a.tmp)
	}
	var wg sync.WaitGroup
	for i, f := range []*AtomicFile{a, b} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := 0; k < len(bodies[i]); k += 4096 {
				f.Write(bodies[i][k:min(k+4096, len(bodies[i]))])
			}
		}()
	}
	wg.Wait()
	if err := a.Commit(); err != nil {
		t.Fatal(err)
	}
	got, _ := os.ReadFile(final)
	if !bytes.Equal(got, bodies[0]) {
		t.Fatalf("after the first commit the file is %d bytes, want writer A's %d", len(got), len(bodies[0]))
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	got, _ = os.ReadFile(final)
	if !bytes.Equal(got, bodies[1]) {
		t.Fatalf("after the second commit the file is %d bytes, want writer B's %d", len(got), len(bodies[1]))
	}
	// many at once through WriteFileAtomic: the result is one whole body
	var wg2 sync.WaitGroup
	for i := 0; i < 8; i++ {
		wg2.Add(1)
		go func() {
			defer wg2.Done()
			body := bytes.Repeat([]byte(fmt.Sprint(i)), 1<<18+i)
			if err := WriteFileAtomic(final, func(w io.Writer) error { _, err := w.Write(body); return err }); err != nil {
				t.Error(err)
			}
		}()
	}
	wg2.Wait()
	got, _ = os.ReadFile(final)
	n := len(got) - 1<<18
	if n < 0 || n >= 8 || !bytes.Equal(got, bytes.Repeat([]byte(fmt.Sprint(n)), 1<<18+n)) {
		t.Fatalf("after 8 concurrent writers the file (%d bytes) is no single writer's body", len(got))
	}
	if m, _ := filepath.Glob(filepath.Join(dir, PartialGlob)); len(m) > 0 {
		t.Errorf("temporary files left: %v", m)
	}
}

// PartialDir gives each library-written file (atlas.nc, atlas.gpkg) its own
// private folder matched by PartialGlob; RenameInto refuses a final name
// that is a link and removes the temporary file.
func TestPartialDirAndRenameInto(t *testing.T) {
	dir := t.TempDir()
	outside := t.TempDir()
	c := newCanary(t, outside)
	p1, clean1, err := PartialDir(dir, "atlas.nc")
	if err != nil {
		t.Fatal(err)
	}
	p2, clean2, err := PartialDir(dir, "atlas.nc")
	if err != nil {
		t.Fatal(err)
	}
	if p1 == p2 || filepath.Base(p1) != "atlas.nc" {
		t.Fatalf("temporary paths %s and %s", p1, p2)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, PartialGlob)); len(m) != 2 {
		t.Fatalf("PartialGlob finds %v, want the 2 temporary folders", m)
	}
	os.WriteFile(p1, []byte("one"), 0o644)
	os.WriteFile(p2, []byte("two"), 0o644)
	final := filepath.Join(dir, "atlas.nc")
	if err := os.Symlink(c.path, final); err != nil {
		t.Fatal(err)
	}
	if err := RenameInto(p1, final); !IsLink(err) {
		t.Fatalf("RenameInto over a link: %v", err)
	}
	c.intact(t)
	os.Remove(final)
	if err := RenameInto(p2, final); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(final); string(b) != "two" {
		t.Fatalf("atlas.nc is %q", b)
	}
	clean1()
	clean2()
	if m, _ := filepath.Glob(filepath.Join(dir, PartialGlob)); len(m) != 0 {
		t.Fatalf("left: %v", m)
	}
}
