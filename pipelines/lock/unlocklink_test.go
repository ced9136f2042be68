package lock

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"swellgrid/pipelines/fault"
)

// A run directory whose .swellgrid folder is a link planted to a folder
// elsewhere that holds a stale lock: `swellgrid unlock` refuses with exit 2
// naming the link, and the lock outside (a canary: its bytes and
// modification time) is left as it was; a lock that is itself a link or a
// named pipe is never followed or opened (the link is removed, its target
// kept). Taking the lock through such a folder is refused too.
func TestUnlockNeverRemovesOutside(t *testing.T) {
	dir, outside := filepath.Join(t.TempDir(), "run"), t.TempDir()
	os.Mkdir(dir, 0o755)
	stale := []byte(`{"host":"elsewhere","pid":2147483646,"taken":"2026-01-01T00:00:00Z","software":"swellgrid"}` + "\n")
	canary := filepath.Join(outside, "lock")
	os.WriteFile(canary, stale, 0o644)
	old := time.Date(2020, 1, 1, 0, 0, 0, 0, time.UTC)
	os.Chtimes(canary, old, old)
	intact := func() {
		t.Helper()
		b, err := os.ReadFile(canary)
		st, _ := os.Stat(canary)
		if err != nil || !bytes.Equal(b, stale) || !st.ModTime().Equal(old) {
			t.Fatalf("the file outside the run directory was changed or removed (%v)", err)
		}
	}
	link := filepath.Join(dir, StateDir)
	os.Symlink(outside, link)
	_, err := Unlock(dir)
	if fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), link) {
		t.Fatalf("unlock through a planted .swellgrid link: %v (exit %d), want exit 2 naming %s", err, fault.ExitCode(err), link)
	}
	intact()
	if _, err := Dir(dir); err == nil || !strings.Contains(err.Error(), link) {
		t.Fatalf("taking the lock through a planted link: %v, want a refusal naming %s", err, link)
	}
	intact()
	// the lock itself a link to the file outside: the link goes, the file stays
	os.Remove(link)
	os.Mkdir(link, 0o755)
	lockLink := filepath.Join(link, "lock")
	os.Symlink(canary, lockLink)
	if _, err := Unlock(dir); err != nil {
		t.Fatalf("unlock of a lock that is a link: %v", err)
	}
	if _, err := os.Lstat(lockLink); err == nil {
		t.Error("the link at the lock's name was not removed")
	}
	intact()
	// a named pipe at the lock's name is not opened (no hang)
	fifo := filepath.Join(link, "lock")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { _, err := Unlock(dir); done <- err }()
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("unlock of a named pipe at the lock's name: %v", err)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("unlock hangs on a named pipe at the lock's name")
	}
}
