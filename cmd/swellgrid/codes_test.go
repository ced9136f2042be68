package main

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"swellgrid/internal/corpus"
	"swellgrid/pipelines/fault"
)

// codeOf runs the command line in this process through the one exit-code
// mapper and returns the code and what it wrote to stderr.
func codeOf(args ...string) (int, string) {
	var se bytes.Buffer
	crashDir = ""
	return mainCode(args, &se), se.String()
}

// Every refusal of the bad-input corpus maps to its documented exit code
// through the one mapper (in process: the error's kind, not the binary's
// wiring), and no corpus case is an internal error (exit code 1).
func TestCorpusExitCodes(t *testing.T) {
	root := t.TempDir()
	for _, c := range corpus.Cases() {
		t.Run(c.Name, func(t *testing.T) {
			if c.Outcome == corpus.Refused && (c.Exit == 0 || c.Exit == 1) {
				t.Fatalf("case %s: a refusal must have the exit code of its condition (2 bad input or spec), has %d", c.Name, c.Exit)
			}
			if c.Outcome == corpus.Flagged && c.Exit != 0 {
				t.Fatalf("case %s: a processed case must have exit code 0, has %d", c.Name, c.Exit)
			}
			if c.Outcome != corpus.Refused {
				return // processed cases run the whole job: TestCorpus checks them
			}
			s, err := c.Build(filepath.Join(root, c.Name))
			if err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(root, c.Name, "out")
			args := []string{"run", "--input", s.Input, "--out", out, "--workers", "1"}
			if s.Spec != "" {
				args = append(args, "--spec", s.Spec)
			}
			code, stderr := codeOf(append(args, s.Args...)...)
			if code != c.Exit {
				t.Fatalf("exit code %d, want %d: %s", code, c.Exit, stderr)
			}
			// What the catalog or the spec check finds is found before the
			// output directory is created; what the read finds (a variable
			// without data) removes the directory the run created.
			if c.Stage == "catalog" || c.Stage == "spec" || c.Stage == "read" {
				if _, err := os.Stat(out); err == nil {
					t.Errorf("the refusal (stage %s) created the output directory %s", c.Stage, out)
				}
			}
		})
	}
}

// Refusals outside the corpus: usage, spec, state and lock conditions, each
// with its exit code.
func TestExitCodeTable(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
	spec := func(name, body string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(body), 0o644)
		return p
	}
	os.WriteFile(filepath.Join(dir, "m.csv"), []byte("hm0_m\\te_s,5,7\n0.5,5,9\n1.5,40,70\n"), 0o644)
	locked := filepath.Join(dir, "locked")
	os.MkdirAll(filepath.Join(locked, ".swellgrid"), 0o755)
	os.WriteFile(filepath.Join(locked, ".swellgrid", "lock"), []byte(`{"host":"node-elsewhere","pid":7,"taken":"2031-01-01T00:00:00Z"}`), 0o644)
	for _, c := range []struct {
		name string
		args []string
		code int
		want string
	}{
		{"unknown command", []string{"frobnicate"}, 2, "unknown command"},
		{"unknown flag", []string{"run", "--frobnicate"}, 2, "unknown flag"},
		{"stray argument", []string{"run", "extra"}, 2, "unknown command"},
		{"merge without --out", []string{"merge", "x"}, 2, "--out"},
		{"bad --shard", []string{"run", "--input", in, "--out", filepath.Join(dir, "o1"), "--shard", "3/2"}, 2, "--shard"},
		{"spec syntax", []string{"run", "--spec", spec("bad.toml", "[input\n")}, 2, "bad.toml"},
		{"negative seed", []string{"run", "--input", in, "--out", filepath.Join(dir, "o2"), "--spec", spec("seed.toml", "[extremes]\nseed = -1\n")}, 2, "extremes.seed"},
		{"capital device", []string{"run", "--input", in, "--out", filepath.Join(dir, "o3"), "--spec", spec("dev.toml", "[[device]]\nname = \"WEC\"\npower_matrix = \"m.csv\"\n")}, 2, "device[0].name"},
		{"device /dev/zero", []string{"run", "--input", in, "--out", filepath.Join(dir, "o4"), "--spec", spec("zero.toml", "[[device]]\nname = \"wec\"\npower_matrix = \"/dev/zero\"\n")}, 2, "not a regular file"},
		{"update and restart", []string{"run", "--input", in, "--update", filepath.Join(dir, "o5"), "--restart"}, 2, "exclude each other"},
		{"locked by another host", []string{"run", "--input", in, "--out", locked}, 4, "node-elsewhere"},
		{"unlock of an unlocked dir", []string{"unlock", dir}, 2, "not locked"},
	} {
		code, stderr := codeOf(c.args...)
		if code != c.code || !strings.Contains(stderr, c.want) {
			t.Errorf("%s: exit %d, want %d with %q: %s", c.name, code, c.code, c.want, stderr)
		}
	}
}

// The kinds of the pipeline's errors map to the documented codes.
func TestKindsMapToCodes(t *testing.T) {
	base := errors.New("x")
	for _, c := range []struct {
		err  error
		code int
	}{
		{nil, 0},
		{base, 1},
		{&fault.Error{Kind: fault.BadInput, Err: base}, 2},
		{&fault.Error{Kind: fault.Interrupted, Err: base}, 3},
		{&fault.Error{Kind: fault.OutputUnusable, Err: base}, 4},
		{&fault.Error{Kind: fault.Internal, Err: base}, 1},
		{errors.Join(errors.New("wrapped"), &fault.Error{Kind: fault.BadInput, Err: base}), 2},
	} {
		if got := exitCode(c.err); got != c.code {
			t.Errorf("%v: exit code %d, want %d", c.err, got, c.code)
		}
	}
}

// A panic is an internal error: exit code 1, "internal error" on stderr and
// the stack in the output directory, not the runtime's exit code 2.
func TestPanicIsInternalError(t *testing.T) {
	out := t.TempDir()
	var se bytes.Buffer
	crashDir = out
	code := reportInternal(&se, errors.New("internal error: boom"), []byte("goroutine 1 [running]:\nmain.f()\n"))
	if code != 1 || !strings.Contains(se.String(), "internal error: boom") || !strings.Contains(se.String(), crashLog) {
		t.Fatalf("exit %d: %s", code, se.String())
	}
	b, err := os.ReadFile(filepath.Join(out, crashLog))
	if err != nil || !strings.Contains(string(b), "main.f()") {
		t.Fatalf("stack file: %v %q", err, b)
	}
	// Through the binary: a panic in a worker goroutine of the fit stage.
	dir := t.TempDir()
	cmd := exec.Command(binary(t), "run", "--input", filepath.Join("..", "..", "testdata", "points_bulk.nc"), "--out", dir, "--workers", "2")
	cmd.Env = append(os.Environ(), "SWELLGRID_TEST_PANIC=fit")
	var so bytes.Buffer
	cmd.Stderr = &so
	err = cmd.Run()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 1 || !strings.Contains(so.String(), "internal error") {
		t.Fatalf("panic in a worker: %v: %s", err, tail(so.String(), 1500))
	}
	if b, err := os.ReadFile(filepath.Join(dir, crashLog)); err != nil || !strings.Contains(string(b), "goroutine") {
		t.Fatalf("the worker's stack is not in %s: %v", crashLog, err)
	}
}

// SIGINT and SIGTERM stop each stage (catalog, stream, fit, export) within
// 2 seconds with exit code 3 and a message; the same command then finishes
// with the tables of an uninterrupted run.
func TestSignalsAtEachStage(t *testing.T) {
	bin := binary(t)
	root := t.TempDir()
	args := func(out string) []string {
		return []string{"run", "--input", fixture, "--out", out, "--workers", "2", "--checkpoint-every", "0"}
	}
	ref := filepath.Join(root, "ref")
	if r := run(t, args(ref)...); r.code != 0 {
		t.Fatalf("reference run: exit %d: %s", r.code, r.stderr)
	}
	want := resultFiles(t, ref)
	for i, stage := range []string{"catalog", "stream", "fit", "export"} {
		sig := []syscall.Signal{syscall.SIGINT, syscall.SIGTERM}[i%2]
		out := filepath.Join(root, stage)
		cmd := exec.Command(bin, args(out)...)
		cmd.Env = append(os.Environ(), "SWELLGRID_TEST_HOLD="+stage)
		pr, pw := io.Pipe()
		cmd.Stderr = pw
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		var rest bytes.Buffer
		held := make(chan bool, 1)
		go func() {
			sc := bufio.NewScanner(pr)
			ok := false
			for sc.Scan() {
				rest.WriteString(sc.Text() + "\n")
				if !ok && strings.Contains(sc.Text(), "test hold in stage "+stage) {
					ok = true
					held <- true
				}
			}
			if !ok {
				held <- false
			}
		}()
		select {
		case ok := <-held:
			if !ok {
				cmd.Wait()
				t.Fatalf("%s: the run ended before the stage: %s", stage, rest.String())
			}
		case <-time.After(60 * time.Second):
			cmd.Process.Kill()
			t.Fatalf("%s: the stage was not reached in 60 s", stage)
		}
		t0 := time.Now()
		cmd.Process.Signal(sig)
		err := cmd.Wait()
		took := time.Since(t0)
		pw.Close()
		var ee *exec.ExitError
		if !errors.As(err, &ee) || ee.ExitCode() != 3 {
			t.Fatalf("%s (%v): %v, want exit code 3: %s", stage, sig, err, tail(rest.String(), 1500))
		}
		if took > 2*time.Second {
			t.Errorf("%s (%v): stopped after %s, want within 2 s", stage, sig, took)
		}
		if !strings.Contains(rest.String(), "interrupted") || !strings.Contains(rest.String(), "rerun the same command") {
			t.Errorf("%s: no interruption message: %s", stage, tail(rest.String(), 800))
		}
		if stage == "stream" || stage == "fit" {
			if m, _ := filepath.Glob(filepath.Join(out, ".swellgrid", "pass-*.ckpt")); len(m) == 0 {
				t.Errorf("%s: no checkpoint left to resume from", stage)
			}
		}
		r := run(t, args(out)...)
		if r.code != 0 {
			t.Fatalf("%s: rerun exit %d: %s", stage, r.code, tail(r.stderr, 800))
		}
		if stage != "catalog" && !strings.Contains(r.stderr, "resuming") {
			t.Errorf("%s: the rerun did not resume: %s", stage, tail(r.stderr, 800))
		}
		sameResults(t, stage, want, resultFiles(t, out))
	}
}
