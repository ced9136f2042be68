// Package lock guards a run directory: one process at a time holds the
// lock file in its state folder (.swellgrid), with a liveness check of the
// holder and a way to break a stale lock. It knows nothing of runs, specs
// or tables.
package lock

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/pipelines/fault"
	"syscall"
	"time"
)

// The run directory's lock is the file .swellgrid/lock, created exclusively.
// It records who holds it: host, pid, the process's start (boot id and
// start time in clock ticks, from /proc) and the wall-clock time it was
// taken. Another run refuses the directory while the holder lives:
//
//   - a lock of another host is refused naming that host (its pid cannot be
//     checked from here);
//   - on this host, a pid that answers the liveness check, even with
//     "permission denied" (another user's process), is alive;
//   - a live pid whose start differs from the recorded one is not the run
//     that took the lock (the pid was reused): refused with the command that
//     breaks the lock, `swellgrid unlock DIR`;
//   - a dead pid's lock is stale and taken over.

// lockInfo is the content of a lock file.
type lockInfo struct {
	Host       string `json:"host"`
	PID        int    `json:"pid"`
	BootID     string `json:"boot_id,omitempty"`
	StartTicks uint64 `json:"start_ticks,omitempty"`
	Taken      string `json:"taken"`
	Software   string `json:"software"`
}

// Hooks of the lock, replaced by tests to act as another user or host.
var (
	// signalPID is kill(pid, 0): nil or EPERM for a live process.
	signalPID = func(pid int) error { return syscall.Kill(pid, 0) }
	hostName  = os.Hostname
	// procStart is the boot id and start time (clock ticks since boot) of a
	// process, from /proc.
	procStart = readProcStart
)

func lockPath(out string) string { return filepath.Join(out, StateDir, "lock") }

// pidAlive reports whether a process with this pid exists: kill(pid, 0)
// answered either nothing or EPERM ("permission denied": it exists and
// belongs to another user).
func pidAlive(pid int) bool {
	err := signalPID(pid)
	return err == nil || errors.Is(err, syscall.EPERM)
}

func readProcStart(pid int) (string, uint64, error) {
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", pid))
	if err != nil {
		return "", 0, err
	}
	// The command name (field 2) is in parentheses and may hold spaces.
	s := string(b)
	i := strings.LastIndexByte(s, ')')
	if i < 0 {
		return "", 0, fmt.Errorf("/proc/%d/stat: unexpected format", pid)
	}
	f := strings.Fields(s[i+1:])
	if len(f) < 20 {
		return "", 0, fmt.Errorf("/proc/%d/stat: unexpected format", pid)
	}
	ticks, err := strconv.ParseUint(f[19], 10, 64) // field 22, starttime
	if err != nil {
		return "", 0, err
	}
	boot, _ := os.ReadFile("/proc/sys/kernel/random/boot_id")
	return strings.TrimSpace(string(boot)), ticks, nil
}

func myLock() lockInfo {
	h, _ := hostName()
	li := lockInfo{Host: h, PID: os.Getpid(), Taken: time.Now().UTC().Format(time.RFC3339), Software: "swellgrid"}
	li.BootID, li.StartTicks, _ = procStart(li.PID)
	return li
}

// readLock reads a lock file; a lock of an earlier version holds only the pid.
func readLock(path string) (*lockInfo, error) {
	st, err := os.Lstat(path)
	if err != nil {
		return nil, err
	}
	if !st.Mode().IsRegular() || st.Size() > 4096 { // a link, a named pipe: never followed or opened
		return nil, fmt.Errorf("the lock %s is not a swellgrid lock (not a regular file of at most 4096 bytes)", path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var li lockInfo
	if json.Unmarshal(b, &li) == nil && li.PID > 0 {
		return &li, nil
	}
	if pid, err := strconv.Atoi(strings.TrimSpace(string(b))); err == nil && pid > 0 {
		h, _ := hostName()
		return &lockInfo{Host: h, PID: pid}, nil
	}
	return nil, fmt.Errorf("the lock %s is not a swellgrid lock", path)
}

func (li *lockInfo) String() string {
	s := fmt.Sprintf("pid %d on host %s", li.PID, li.Host)
	if li.Taken != "" {
		s += ", since " + li.Taken
	}
	return s
}

// holder says who holds a lock as seen from this process: "" when the lock
// is stale (its process is gone), else why the directory is in use.
func (li *lockInfo) holder(out string) (why string, live bool) {
	h, _ := hostName()
	if li.Host != h {
		return fmt.Sprintf("output directory %s is locked by a run on host %s (%s); its process cannot be checked from host %s: wait for it, or if it is gone break the lock with `swellgrid unlock %s`", out, li.Host, li, h, out), true
	}
	if !pidAlive(li.PID) {
		return "", false
	}
	reused := false
	if li.StartTicks != 0 {
		boot, ticks, err := procStart(li.PID)
		reused = err == nil && (ticks != li.StartTicks || boot != li.BootID)
	} else if comm, err := os.ReadFile(fmt.Sprintf("/proc/%d/comm", li.PID)); err == nil {
		// A lock without the start time (an earlier version): judge by the
		// process name.
		reused = !strings.Contains(string(comm), "swellgrid") && !strings.HasSuffix(strings.TrimSpace(string(comm)), ".test")
	}
	if reused {
		return fmt.Sprintf("output directory %s is locked by %s, but that process is not the swellgrid run that took the lock (the pid was reused); if no run uses the directory, break the lock with `swellgrid unlock %s`", out, li, out), false
	}
	return fmt.Sprintf("output directory %s is in use by another run (%s, lock %s); wait for it or choose another --out", out, li, lockPath(out)), true
}

// Dir takes the run directory's lock. A lock whose process is gone is
// taken over; see the comment at the top of this file.
//
// While the lock is held, the run directory is the door of every write
// below it (export.OpenDoor): files and folders are created through its
// handle, never through a link planted in it. The returned release closes
// the door and removes the lock.
func Dir(out string) (func(), error) {
	closeDoor, err := export.OpenDoor(out)
	if err != nil {
		return nil, fault.Output(fmt.Errorf("output directory %s: %w", out, err))
	}
	release, err := take(out)
	if err != nil {
		closeDoor()
		return nil, err
	}
	return func() { release(); closeDoor() }, nil
}

func take(out string) (func(), error) {
	if _, err := export.MakeDir(out, StateDir); err != nil {
		return nil, fault.Output(fmt.Errorf("output directory %s: %w", out, err)) // a planted link: bad input (export.LinkError)
	}
	path := lockPath(out)
	if err := export.CheckTarget(path, false); err != nil {
		return nil, fault.Input(err)
	}
	me := myLock()
	body, _ := json.Marshal(me)
	for attempt := 0; attempt < 2; attempt++ {
		f, err := export.CreateExclusive(path)
		if err == nil {
			_, werr := f.Write(append(body, '\n'))
			if cerr := f.Close(); werr == nil {
				werr = cerr
			}
			if werr != nil {
				export.RemoveFile(path)
				return nil, fault.Output(fmt.Errorf("output directory %s: cannot write the lock %s: %w", out, path, werr))
			}
			return func() { export.RemoveFile(path) }, nil
		}
		if !os.IsExist(err) {
			return nil, fault.Output(fmt.Errorf("output directory %s: cannot create the lock: %w", out, err))
		}
		li, err := readLock(path)
		if err != nil {
			return nil, fault.Output(fmt.Errorf("output directory %s: %w; if no run uses the directory, break the lock with `swellgrid unlock %s`", out, err, out))
		}
		if why, _ := li.holder(out); why != "" {
			return nil, fault.Output(errors.New(why))
		}
		if err := export.RemoveFile(path); err != nil { // stale: its process is gone; removed through the door
			return nil, fault.Input(fmt.Errorf("output directory %s: cannot remove the stale lock: %w", out, err))
		}
	}
	return nil, fault.Output(fmt.Errorf("output directory %s: cannot take the lock %s", out, path))
}

// Unlock breaks the lock of the run directory dir and says whose lock it
// was. It refuses while the run that took the lock is alive on this host
// (exit code 4); a lock of another host is broken on request, since this
// host cannot check it.
func Unlock(dir string) (string, error) {
	closeDoor, err := export.OpenDoor(dir) // the lock is removed through the run directory's handle
	if err != nil {
		return "", fault.Output(fmt.Errorf("%s: %w", dir, err))
	}
	defer closeDoor()
	path := lockPath(dir)
	li, err := readLock(path)
	if errors.Is(err, os.ErrNotExist) {
		return "", fault.Input(fmt.Errorf("%s is not locked (no %s)", dir, path))
	}
	what := "an unreadable lock"
	if err == nil {
		if why, live := li.holder(dir); live && why != "" {
			h, _ := hostName()
			if li.Host == h {
				return "", fault.Output(fmt.Errorf("%s is locked by a live swellgrid run (%s); stop that run instead of breaking its lock", dir, li))
			}
		}
		what = "the lock of " + li.String()
	}
	if err := export.RemoveFile(path); err != nil {
		if export.IsLink(err) {
			return "", fault.Input(fmt.Errorf("removing the lock %s: %w", path, err))
		}
		return "", fault.Output(fmt.Errorf("removing the lock %s: %w", path, err))
	}
	return fmt.Sprintf("removed %s (%s)", path, what), nil
}

// StateDir is the run directory's folder for checkpoints and the lock
// (export/contract).
const StateDir = contract.StateDir
