package ingest

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

func copyFile(t *testing.T, src, dst string) {
	t.Helper()
	b, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(dst, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// An input path that exists is taken literally, brackets and all; a named
// pipe among the inputs is refused by name without blocking.
func TestInputsLiteralAndRegular(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "brackets[2001]")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	src, _ := filepath.Glob("../testdata/bulk_monthly/*.nc")
	copyFile(t, src[0], filepath.Join(dir, "m[1].nc"))
	for _, in := range []string{dir, filepath.Join(dir, "m[1].nc")} {
		paths, err := Expand([]string{in})
		if err != nil || len(paths) != 1 || filepath.Base(paths[0]) != "m[1].nc" {
			t.Fatalf("Expand(%q) = %v, %v; want the one file m[1].nc", in, paths, err)
		}
	}
	fifo := filepath.Join(dir, "pipe.nc")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { _, err := Open([]string{dir}, Options{}); done <- err }()
	select {
	case err := <-done:
		if err == nil || !strings.Contains(err.Error(), "pipe.nc") || !strings.Contains(err.Error(), "named pipe") {
			t.Fatalf("Open with a FIFO among the inputs: %v; want it refused by name", err)
		}
	case <-time.After(20 * time.Second):
		t.Fatal("Open blocked on a FIFO among the inputs")
	}
}

// The catalog's stamp finds a file rewritten in place with the same size and
// modification time (its status change time moves), and a same-size
// replacement with the old modification time (its inode changes).
func TestChangedInputFound(t *testing.T) {
	src, _ := filepath.Glob("../testdata/bulk_monthly/*.nc")
	dir := t.TempDir()
	p := filepath.Join(dir, "a.nc")
	copyFile(t, src[0], p)
	cat, err := Open([]string{p}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := cat.Unchanged(0); err != nil {
		t.Fatalf("unchanged file reported changed: %v", err)
	}
	sum, err := cat.HashFile(context.Background(), 0)
	if err != nil || len(sum) != 64 {
		t.Fatalf("HashFile: %q, %v", sum, err)
	}
	st, _ := os.Stat(p)
	mt := st.ModTime()
	// In place: same bytes count, one byte flipped, mtime set back.
	time.Sleep(20 * time.Millisecond)
	f, err := os.OpenFile(p, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	f.WriteAt([]byte{0x55}, st.Size()-100)
	f.Close()
	os.Chtimes(p, mt, mt)
	if err := cat.Unchanged(0); err == nil || !strings.Contains(err.Error(), "changed during the run") {
		t.Fatalf("in-place rewrite with the old mtime: %v; want it found", err)
	}
	if _, err := cat.HashFile(context.Background(), 0); err == nil {
		t.Fatal("HashFile hashed a file that changed since the catalog")
	}
	// Replacement: a new file renamed over the old one, mtime preserved.
	copyFile(t, src[0], p)
	os.Chtimes(p, mt, mt)
	cat, err = Open([]string{p}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	q := filepath.Join(dir, "b.tmp")
	copyFile(t, src[0], q)
	os.Chtimes(q, mt, mt)
	if err := os.Rename(q, p); err != nil {
		t.Fatal(err)
	}
	if err := cat.Unchanged(0); err == nil || !strings.Contains(err.Error(), "inode") {
		t.Fatalf("same-size replacement with the old mtime: %v; want the inode change found", err)
	}
}

// File names that are not UTF-8 are written with \xNN escapes, names that
// are stay as they are.
func TestPathText(t *testing.T) {
	for in, want := range map[string]string{
		"data/2001-01.nc":       "data/2001-01.nc",
		"data/caf\xe9/m.nc":     `data/caf\xe9/m.nc`,
		"data/été/m\xff\xfe.nc": `data/été/m\xff\xfe.nc`,
	} {
		if got := PathText(in); got != want {
			t.Errorf("PathText(%q) = %q, want %q", in, got, want)
		}
	}
	if PathText("a\xe9") == PathText("a\xe8") {
		t.Error("two names differing in a non-UTF-8 byte give the same text")
	}
}

// A file rewritten in place after the catalog was built (during a run) is
// refused by the reader, before any of its blocks is handed on.
func TestReaderRefusesRewrittenFile(t *testing.T) {
	src, _ := filepath.Glob("../testdata/bulk_monthly/*.nc")
	dir := t.TempDir()
	p := filepath.Join(dir, "a.nc")
	copyFile(t, src[0], p)
	cat, err := Open([]string{p}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	st, _ := os.Stat(p)
	time.Sleep(20 * time.Millisecond)
	copyFile(t, src[0], p) // same bytes rewritten: the status change time moves
	os.Chtimes(p, st.ModTime(), st.ModTime())
	out := make(chan *Block, 100)
	err = cat.Read(context.Background(), ReadRange{}, out)
	close(out)
	if err == nil || !strings.Contains(err.Error(), "changed during the run") || !strings.Contains(err.Error(), "a.nc") {
		t.Fatalf("Read of a file rewritten after the catalog: %v; want it refused", err)
	}
	if n := len(out); n != 0 {
		t.Errorf("%d blocks of the rewritten file were handed on", n)
	}
}
