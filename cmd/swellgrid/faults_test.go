package main

import (
	"encoding/json"
	"swellgrid/internal/testtool"

	"bytes"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// soak reports whether the long series were asked for (make soak).
func soak() bool { return os.Getenv("SWELLGRID_SOAK") != "" }

// resultFiles returns the bytes of the result tables and contour layers
// (everything a run writes except manifest.json, whose timings differ, and
// the checkpoints).
func resultFiles(t *testing.T, out string) map[string][]byte {
	t.Helper()
	got := map[string][]byte{}
	for _, pat := range []string{"*.parquet", "contours/*.geojson"} {
		m, _ := filepath.Glob(filepath.Join(out, pat))
		for _, p := range m {
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			rel, _ := filepath.Rel(out, p)
			got[rel] = b
		}
	}
	if len(got) == 0 {
		t.Fatalf("%s holds no results", out)
	}
	return got
}

func sameResults(t *testing.T, what string, want, got map[string][]byte) {
	t.Helper()
	var names []string
	for k := range want {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		if g, ok := got[k]; !ok {
			t.Errorf("%s: %s missing", what, k)
		} else if !bytes.Equal(g, want[k]) {
			t.Errorf("%s: %s differs from the uninterrupted run (%d vs %d bytes)", what, k, len(g), len(want[k]))
		}
	}
	for k := range got {
		if _, ok := want[k]; !ok {
			t.Errorf("%s: unexpected %s", what, k)
		}
	}
}

// partials lists temporary files left in a run directory.
func partials(out string) []string {
	var left []string
	filepath.Walk(out, func(p string, info os.FileInfo, err error) error {
		if err == nil && strings.Contains(filepath.Base(p), ".partial-") {
			left = append(left, p)
		}
		return nil
	})
	return left
}

// TestKillResume kills the run with SIGKILL at seeded points (after a random
// delay spanning catalog, reading, fits and export, or just after a checkpoint
// appears), reruns the same command and requires outputs byte-identical to an
// uninterrupted run (DESIGN.md: deterministic whatever the interruption
// history). 4 points in `make test`, 24 under SWELLGRID_SOAK=1.
func TestKillResume(t *testing.T) {
	bin := binary(t)
	root := t.TempDir()
	ref := filepath.Join(root, "ref")
	// --checkpoint-every 0: a checkpoint after every file, so kills land between checkpoints.
	args := func(out string) []string {
		return []string{"run", "--input", fixture, "--out", out, "--workers", "2", "--checkpoint-every", "0"}
	}
	t0 := time.Now()
	if r := run(t, args(ref)...); r.code != 0 {
		t.Fatalf("reference run: exit %d: %s", r.code, r.stderr)
	}
	wall := time.Since(t0)
	want := resultFiles(t, ref)
	points := 4
	if soak() {
		points = 24
	}
	rng := rand.New(rand.NewPCG(10, 2026))
	killedMidway := 0
	for k := 0; k < points; k++ {
		out := filepath.Join(root, "kill", string(rune('a'+k%26))+string(rune('0'+k/26)))
		cmd := exec.Command(bin, args(out)...)
		cmd.Stdout, cmd.Stderr = nil, nil
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		how := ""
		if k%2 == 0 {
			d := time.Duration(rng.Float64() * 1.1 * float64(wall))
			time.Sleep(d)
			how = "after " + d.Round(time.Millisecond).String()
		} else {
			// Watch for the first checkpoint, then kill at once or a
			// little later (mid-read, fits, export).
			ck := filepath.Join(out, ".swellgrid")
			extra := time.Duration(rng.Float64() * 0.3 * float64(wall))
			deadline := time.Now().Add(10 * wall)
			for time.Now().Before(deadline) {
				if m, _ := filepath.Glob(filepath.Join(ck, "pass-*.ckpt")); len(m) > 0 {
					break
				}
				time.Sleep(200 * time.Microsecond)
			}
			time.Sleep(extra)
			how = "checkpoint + " + extra.Round(time.Millisecond).String()
		}
		cmd.Process.Signal(syscall.SIGKILL)
		err := cmd.Wait()
		if err != nil {
			killedMidway++
		}
		r := run(t, args(out)...)
		if r.code != 0 {
			t.Errorf("point %d (%s): rerun exit %d: %s", k, how, r.code, tail(r.stderr, 800))
			continue
		}
		sameResults(t, "point "+how, want, resultFiles(t, out))
		if left := partials(out); len(left) > 0 {
			t.Logf("point %d (%s): temporary files of the killed run remain: %v", k, how, left)
		}
	}
	t.Logf("%d of %d runs were killed before they finished (the rest had finished)", killedMidway, points)
	if killedMidway == 0 {
		t.Errorf("no run was killed midway: the kill points miss the run")
	}
}

// mountTmpfs mounts a tmpfs of size bytes at dir (root only); the test is
// skipped where mounting is not permitted.
func mountTmpfs(t *testing.T, dir string, size int64) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := syscall.Mount("tmpfs", dir, "tmpfs", 0, "size="+strconv.FormatInt(size, 10)); err != nil {
		testtool.Unavailable(t, "cannot mount a tmpfs here (%v); this fault needs root in a mount namespace", err)
	}
	t.Cleanup(func() { syscall.Unmount(dir, syscall.MNT_DETACH) })
}

func treeSize(t *testing.T, dir string) int64 {
	var n int64
	filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err == nil && !info.IsDir() {
			n += (info.Size() + 4095) / 4096 * 4096
		}
		return nil
	})
	return n
}

// halfFixture copies the first year of the fixture: a different hindcast whose
// atlas plays yesterday's output.
func halfFixture(t *testing.T, dst string) {
	t.Helper()
	m, _ := filepath.Glob(filepath.Join(fixture, "*.nc"))
	sort.Strings(m)
	if err := os.MkdirAll(dst, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, p := range m[:12] {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dst, filepath.Base(p)), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// certifiesComplete: the manifest in out is a new one (the run writes it
// before the products, so that a run whose products fail is still a finished
// run directory) that lists only files which are their complete new version.
func certifiesComplete(t *testing.T, out string, after, newFiles map[string]string) bool {
	t.Helper()
	var m struct {
		Outputs []string `json:"outputs"`
	}
	b, err := os.ReadFile(filepath.Join(out, "manifest.json"))
	if err != nil || json.Unmarshal(b, &m) != nil || len(m.Outputs) == 0 {
		return false
	}
	for _, o := range m.Outputs {
		if o != "manifest.json" && (after[o] == "" || after[o] != newFiles[o]) {
			t.Logf("manifest.json lists %s, which is not its complete new version", o)
			return false
		}
	}
	return true
}

// TestFullDisk runs into an output directory on a tmpfs that fills up:
// first with too little room for the checkpoint, then with the disk filled by
// another writer once the last checkpoint is written (the export stage). The
// run must stop with exit code 4 and a message naming the path and the full
// disk, leave no temporary files, and every previous file must be either
// untouched or already the complete new version (each file is replaced
// atomically).
func TestFullDisk(t *testing.T) {
	bin := binary(t)
	root := t.TempDir()
	year1 := filepath.Join(root, "year1")
	halfFixture(t, year1)
	// Bootstrap intervals (GPD only here: two annual maxima give no GEV levels)
	// make the fit stage long enough to fill the disk
	// between the last checkpoint and the export (4000 resamples since the
	// faster fits: with 1000 the disk filled only once the tables were written).
	spec := filepath.Join(root, "boot.toml")
	os.WriteFile(spec, []byte("[extremes]\nbootstrap = 4000\n"), 0o644)
	old := filepath.Join(root, "old")
	if r := run(t, "run", "--input", year1, "--out", old, "--spec", spec); r.code != 0 {
		t.Fatalf("old run: %d %s", r.code, r.stderr)
	}
	ref := filepath.Join(root, "ref")
	if r := run(t, "run", "--input", fixture, "--out", ref, "--spec", spec); r.code != 0 {
		t.Fatalf("ref run: %d %s", r.code, r.stderr)
	}
	newFiles := hashTree(t, ref, func(rel string) bool { return rel == ".swellgrid" })
	check := func(what, out string, before map[string]string, code int, stderr string) {
		t.Helper()
		noPanic(t, stderr)
		if code != 4 {
			t.Errorf("%s: exit %d, want 4 (output not writable)\n%s", what, code, tail(stderr, 800))
			return
		}
		if !containsFold(stderr, "no space left on device") || !containsFold(stderr, out) {
			t.Errorf("%s: message should name the output path and the full disk:\n%s", what, errorLines(stderr))
		}
		after := hashTree(t, out, nil)
		for k, v := range before {
			if strings.HasPrefix(k, ".swellgrid") {
				continue // the checkpoint of a --restart run is the new run's
			}
			if a := after[k]; a != v && a != newFiles[k] && !(k == "manifest.json" && certifiesComplete(t, out, after, newFiles)) {
				t.Errorf("%s: %s is neither the old file nor the complete new one", what, k)
			}
		}
		if left := partials(out); len(left) > 0 {
			t.Errorf("%s: temporary files left: %v", what, left)
		}
		t.Logf("%s: %s", what, errorLines(stderr))
	}
	// 1: no room for the checkpoint.
	disk := filepath.Join(root, "disk1")
	mountTmpfs(t, disk, treeSize(t, old)+16<<10)
	out := filepath.Join(disk, "out")
	copyTree(t, old, out)
	before := hashTree(t, out, nil)
	r := run(t, "run", "--input", fixture, "--out", out, "--restart", "--spec", spec)
	check("checkpoint stage", out, before, r.code, r.stderr)

	// 2: the disk fills during the fits; the export must fail cleanly.
	disk = filepath.Join(root, "disk2")
	mountTmpfs(t, disk, treeSize(t, old)+4<<20)
	out = filepath.Join(disk, "out")
	copyTree(t, old, out)
	before = hashTree(t, out, nil)
	cmd := exec.Command(bin, "run", "--input", fixture, "--out", out, "--restart", "--spec", spec)
	var se bytes.Buffer
	cmd.Stderr = &se
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	ckp := filepath.Join(out, ".swellgrid", "pass-0-30.ckpt")
	deadline := time.Now().Add(20 * time.Second)
	filled := false
	for time.Now().Before(deadline) && !filled {
		if b, err := os.ReadFile(ckp); err == nil && bytes.Contains(b[:min(len(b), 64<<10)], []byte(`"next_file":24`)) {
			var st syscall.Statfs_t
			if err := syscall.Statfs(disk, &st); err != nil {
				t.Fatal(err)
			}
			free := int64(st.Bavail) * st.Bsize
			os.WriteFile(filepath.Join(disk, "filler"), make([]byte, max(0, free-8<<10)), 0o644)
			filled = true
		}
		time.Sleep(time.Millisecond)
	}
	err := cmd.Wait()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	}
	if !filled {
		t.Fatalf("the final checkpoint never appeared (exit %d): %s", code, tail(se.String(), 500))
	}
	check("export stage", out, before, code, se.String())

	// 3: a finished run on a full disk: rebuilding atlas.nc, whose library
	// reports only "HDF error", must still say that the disk is full.
	disk = filepath.Join(root, "disk3")
	mountTmpfs(t, disk, treeSize(t, ref)+4<<20)
	out = filepath.Join(disk, "out")
	copyTree(t, ref, out)
	before = hashTree(t, out, nil)
	var st syscall.Statfs_t
	if err := syscall.Statfs(disk, &st); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(disk, "filler"), make([]byte, max(0, int64(st.Bavail)*st.Bsize-8<<10)), 0o644)
	r = run(t, "report", "--atlas", out)
	check("atlas.nc rebuilt", out, before, r.code, r.stderr)
}

// TestReadOnlyOutput: a previous output directory on a read-only file system
// must give exit code 4 and stay as it was; an output path below a plain file
// too.
func TestReadOnlyOutput(t *testing.T) {
	root := t.TempDir()
	prev := previousOutput(t)
	plain := filepath.Join(root, "plain")
	os.WriteFile(plain, []byte("x"), 0o644)
	r := run(t, "run", "--input", fixture, "--out", filepath.Join(plain, "out"))
	if r.code != 4 || !containsFold(r.stderr, "not a directory") {
		t.Errorf("output below a file: exit %d, want 4 with \"not a directory\":\n%s", r.code, errorLines(r.stderr))
	}
	disk := filepath.Join(root, "ro")
	mountTmpfs(t, disk, treeSize(t, prev)+(1<<20))
	out := filepath.Join(disk, "out")
	copyTree(t, prev, out)
	if err := syscall.Mount("", disk, "", syscall.MS_REMOUNT|syscall.MS_RDONLY, ""); err != nil {
		testtool.Unavailable(t, "cannot remount read-only: %v", err)
	}
	before := hashTree(t, out, nil)
	for _, extra := range [][]string{nil, {"--restart"}} {
		r := run(t, append([]string{"run", "--input", fixture, "--out", out}, extra...)...)
		if r.code != 4 {
			t.Errorf("%v: exit %d, want 4:\n%s", extra, r.code, tail(r.stderr, 800))
		}
		if !containsFold(r.stderr, "read-only file system") || !containsFold(r.stderr, out) {
			t.Errorf("%v: message should name the directory and say it is read-only:\n%s", extra, errorLines(r.stderr))
		}
	}
	sameTree(t, "read-only", before, hashTree(t, out, nil))
}

// TestInputDeletedMidRun deletes the last input file while the run reads the
// first ones: exit code 2 naming the file, and the previous results intact.
func TestInputDeletedMidRun(t *testing.T) {
	bin := binary(t)
	root := t.TempDir()
	in := filepath.Join(root, "in")
	copyTree(t, fixture, in)
	m, _ := filepath.Glob(filepath.Join(in, "*.nc"))
	sort.Strings(m)
	victim := m[len(m)-1]
	out := filepath.Join(root, "out")
	copyTree(t, previousOutput(t), out)
	skipCk := func(rel string) bool { return rel == ".swellgrid" }
	before := hashTree(t, out, skipCk)
	spec := filepath.Join(root, "slow.toml")
	// One step per block makes the read slow enough to delete a file during it.
	os.WriteFile(spec, []byte("[run]\nblock_steps = 1\ncheckpoint_every_s = 0\n"), 0o644)
	ck, _ := filepath.Glob(filepath.Join(out, ".swellgrid", "pass-*.ckpt"))
	var ck0 time.Time
	if len(ck) == 1 {
		st, _ := os.Stat(ck[0])
		ck0 = st.ModTime()
	}
	cmd := exec.Command(bin, "run", "--input", in, "--out", out, "--spec", spec, "--restart", "--workers", "2")
	var se bytes.Buffer
	cmd.Stderr = &se
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(20 * time.Second)
	for time.Now().Before(deadline) {
		if c, _ := filepath.Glob(filepath.Join(out, ".swellgrid", "pass-*.ckpt")); len(c) == 1 {
			if st, err := os.Stat(c[0]); err == nil && st.ModTime() != ck0 {
				break // the first file is done
			}
		}
		time.Sleep(200 * time.Microsecond)
	}
	if err := os.Remove(victim); err != nil {
		t.Fatal(err)
	}
	err := cmd.Wait()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	}
	noPanic(t, se.String())
	if code != 2 {
		t.Fatalf("exit %d, want 2 (bad input):\n%s", code, tail(se.String(), 800))
	}
	if !containsFold(se.String(), filepath.Base(victim)) {
		t.Errorf("message should name the deleted file %s:\n%s", victim, errorLines(se.String()))
	}
	sameTree(t, "input deleted", before, hashTree(t, out, skipCk))
	t.Logf("%s", errorLines(se.String()))
}
