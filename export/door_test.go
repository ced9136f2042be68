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

// NewPartial gives each library-written file (atlas.nc, atlas.gpkg) its own
// private folder matched by PartialGlob, written through its handle;
// CommitFile refuses a final name that is a link; Close removes the rest.
func TestPartialAndCommitFile(t *testing.T) {
	dir := t.TempDir()
	outside := t.TempDir()
	c := newCanary(t, outside)
	p1, err := NewPartial(dir, "atlas.nc")
	if err != nil {
		t.Fatal(err)
	}
	p2, err := NewPartial(dir, "atlas.nc")
	if err != nil {
		t.Fatal(err)
	}
	if p1.File() == p2.File() || filepath.Base(p1.File()) != "atlas.nc" {
		t.Fatalf("temporary paths %s and %s", p1.File(), p2.File())
	}
	m, _ := filepath.Glob(filepath.Join(dir, PartialGlob))
	if len(m) != 2 {
		t.Fatalf("PartialGlob finds %v, want the 2 temporary folders", m)
	}
	for _, f := range m {
		if st, err := os.Stat(f); err != nil || st.Mode().Perm() != 0o700 {
			t.Errorf("%s is not a private folder: %v", f, st.Mode())
		}
	}
	os.WriteFile(p1.File(), []byte("one"), 0o644)
	os.WriteFile(p2.File(), []byte("two"), 0o644)
	// the folder of p2 renamed away and a link to the outside planted at its
	// name: the write through the handle still lands in p2's own folder
	if _, err := os.Stat("/proc/self/fd"); err == nil && !strings.HasPrefix(p2.Dir, "/proc/self/fd/") {
		t.Errorf("/proc is mounted but the partial folder is reached by name: %s", p2.Dir)
	}
	if strings.HasPrefix(p2.Dir, "/proc/self/fd/") {
		moved := filepath.Join(dir, "moved")
		var p2dir string
		for _, f := range m {
			if _, err := os.Stat(filepath.Join(f, "atlas.nc")); err == nil {
				if b, _ := os.ReadFile(filepath.Join(f, "atlas.nc")); string(b) == "two" {
					p2dir = f
				}
			}
		}
		if err := os.Rename(p2dir, moved); err != nil {
			t.Fatal(err)
		}
		os.Symlink(outside, p2dir)
		os.WriteFile(p2.File(), []byte("two!"), 0o644)
		if b, _ := os.ReadFile(filepath.Join(moved, "atlas.nc")); string(b) != "two!" {
			t.Errorf("the write by path did not reach the partial folder's handle: %q", b)
		}
		c.intact(t)
		os.Remove(p2dir)
		os.Rename(moved, p2dir)
	}
	final := filepath.Join(dir, "atlas.nc")
	if err := os.Symlink(c.path, final); err != nil {
		t.Fatal(err)
	}
	if err := p1.CommitFile(final); !IsLink(err) {
		t.Fatalf("CommitFile over a link: %v", err)
	}
	c.intact(t)
	os.Remove(final)
	if err := p2.CommitFile(final); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(final); string(b) != "two!" && string(b) != "two" {
		t.Fatalf("atlas.nc is %q", b)
	}
	p1.Close()
	p2.Close()
	if m, _ := filepath.Glob(filepath.Join(dir, PartialGlob)); len(m) != 0 {
		t.Fatalf("left: %v", m)
	}
}

// A link re-planted between the checks and the write (BeforeWrite swaps a
// folder of the run directory for a link to the outside at the moment of
// the write) cannot lead any write out: the file, the temporary file, the
// folder, the private partial folder, the lock file and the hard link are
// all made through the run directory's handle (os.Root), which refuses the
// link; the refusal names it (a *LinkError) and the outside is untouched.
func TestReplantedLinkCannotLeadOut(t *testing.T) {
	for _, c := range []struct {
		name  string
		write func(out string) error
	}{
		{"atomic file", func(out string) error {
			return WriteFileAtomic(filepath.Join(out, ContourDir, "a.geojson"), func(w io.Writer) error { _, err := w.Write([]byte("{}")); return err })
		}},
		{"folder", func(out string) error { _, err := MakeDir(out, ContourDir+"/sub"); return err }},
		{"partial folder", func(out string) error {
			p, err := NewPartial(filepath.Join(out, ContourDir), "atlas.nc")
			if err == nil {
				p.Close()
			}
			return err
		}},
		{"library file committed", func(out string) error {
			p, err := NewPartial(out, "atlas.nc")
			if err != nil {
				return err
			}
			defer p.Close()
			os.WriteFile(p.File(), []byte("CDF"), 0o644)
			return p.CommitFile(filepath.Join(out, ContourDir, "atlas.nc"))
		}},
		{"exclusive file", func(out string) error {
			f, err := CreateExclusive(filepath.Join(out, ContourDir, "lock"))
			if err == nil {
				f.Close()
			}
			return err
		}},
		{"hard link", func(out string) error {
			src := filepath.Join(out, "src.bin")
			os.WriteFile(src, []byte("state"), 0o644)
			return LinkInto(src, filepath.Join(out, ContourDir, "pass.ckpt"))
		}},
	} {
		t.Run(c.name, func(t *testing.T) {
			tmp := t.TempDir()
			outside := filepath.Join(tmp, "outside")
			os.Mkdir(outside, 0o755)
			canary := newCanary(t, outside)
			out := filepath.Join(tmp, "out")
			os.Mkdir(out, 0o755)
			os.Mkdir(filepath.Join(out, ContourDir), 0o755)
			closeDoor, err := OpenDoor(out)
			if err != nil {
				t.Fatal(err)
			}
			defer closeDoor()
			link := filepath.Join(out, ContourDir)
			planted := false
			BeforeWrite = func(path string) {
				if !planted && strings.HasPrefix(path, link+string(filepath.Separator)) {
					planted = true
					os.RemoveAll(link)
					if err := os.Symlink(outside, link); err != nil {
						t.Error(err)
					}
				}
			}
			defer func() { BeforeWrite = nil }()
			err = c.write(out)
			if !planted {
				t.Fatal("the hook was not called before the write")
			}
			if !IsLink(err) || !strings.Contains(err.Error(), link) {
				t.Errorf("want a LinkError naming %s, got %v", link, err)
			}
			canary.intact(t)
		})
	}
}
