package lock

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"swellgrid/pipelines/fault"
	"syscall"
	"testing"
)

// withLockHooks replaces the lock's view of the system for one test.
func withLockHooks(t *testing.T, sig func(int) error, host string, start func(int) (string, uint64, error)) {
	t.Helper()
	s0, h0, p0 := signalPID, hostName, procStart
	t.Cleanup(func() { signalPID, hostName, procStart = s0, h0, p0 })
	if sig != nil {
		signalPID = sig
	}
	if host != "" {
		hostName = func() (string, error) { return host, nil }
	}
	if start != nil {
		procStart = start
	}
}

func writeLock(t *testing.T, out string, li lockInfo) {
	t.Helper()
	os.MkdirAll(filepath.Join(out, StateDir), 0o755)
	b := []byte(`{"host":"` + li.Host + `","pid":` + strconv.Itoa(li.PID) + `,"boot_id":"` + li.BootID + `","start_ticks":` + strconv.Itoa(int(li.StartTicks)) + `,"taken":"2031-01-01T00:00:00Z","software":"swellgrid"}`)
	if err := os.WriteFile(filepath.Join(out, StateDir, "lock"), b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// The lock holds against a run of another user (the pid check answers
// "permission denied"), a run on another host, and a pid that was reused;
// it is taken over when its process is gone; unlock breaks it unless its
// run is alive here.
func TestLock(t *testing.T) {
	const pid = 4242
	same := func(int) (string, uint64, error) { return "boot-a", 777, nil }
	other := func(int) (string, uint64, error) { return "boot-a", 999, nil }
	eperm := func(int) error { return syscall.EPERM }
	esrch := func(int) error { return syscall.ESRCH }
	alive := func(int) error { return nil }
	holder := lockInfo{Host: "node-a", PID: pid, BootID: "boot-a", StartTicks: 777}

	t.Run("another user", func(t *testing.T) {
		withLockHooks(t, eperm, "node-a", same)
		out := t.TempDir()
		writeLock(t, out, holder)
		_, err := Dir(out)
		if fault.KindOf(err) != fault.OutputUnusable || !strings.Contains(err.Error(), "in use by another run") || !strings.Contains(err.Error(), "pid 4242") {
			t.Fatalf("lock of a live run of another user: %v", err)
		}
		if _, err := Unlock(out); fault.KindOf(err) != fault.OutputUnusable {
			t.Fatalf("unlock of a live run: %v", err)
		}
	})
	t.Run("another host", func(t *testing.T) {
		withLockHooks(t, esrch, "node-a", same)
		out := t.TempDir()
		h := holder
		h.Host = "node-b"
		writeLock(t, out, h)
		_, err := Dir(out)
		if fault.KindOf(err) != fault.OutputUnusable || !strings.Contains(err.Error(), "host node-b") || !strings.Contains(err.Error(), "swellgrid unlock "+out) {
			t.Fatalf("lock of another host: %v", err)
		}
		msg, err := Unlock(out)
		if err != nil || !strings.Contains(msg, "node-b") {
			t.Fatalf("unlock of another host's lock: %q %v", msg, err)
		}
		release, err := Dir(out)
		if err != nil {
			t.Fatalf("after unlock: %v", err)
		}
		release()
	})
	t.Run("pid reused", func(t *testing.T) {
		withLockHooks(t, alive, "node-a", other)
		out := t.TempDir()
		writeLock(t, out, holder)
		_, err := Dir(out)
		if fault.KindOf(err) != fault.OutputUnusable || !strings.Contains(err.Error(), "not the swellgrid run") || !strings.Contains(err.Error(), "swellgrid unlock "+out) {
			t.Fatalf("lock of a reused pid: %v", err)
		}
		if _, err := Unlock(out); err != nil {
			t.Fatalf("unlock of a reused pid's lock: %v", err)
		}
		if _, err := os.Stat(filepath.Join(out, StateDir, "lock")); !os.IsNotExist(err) {
			t.Fatalf("unlock left the lock: %v", err)
		}
	})
	t.Run("stale", func(t *testing.T) {
		withLockHooks(t, esrch, "node-a", same)
		out := t.TempDir()
		writeLock(t, out, holder)
		release, err := Dir(out)
		if err != nil {
			t.Fatalf("a dead pid's lock is not taken over: %v", err)
		}
		li, err := readLock(filepath.Join(out, StateDir, "lock"))
		if err != nil || li.PID != os.Getpid() || li.Host != "node-a" {
			t.Fatalf("the new lock: %+v %v", li, err)
		}
		release()
	})
}
