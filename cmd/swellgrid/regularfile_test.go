package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// codeWithin is codeOf with a deadline: a command that blocks (on a named
// pipe nobody writes to) fails the test after d instead of hanging it.
func codeWithin(t *testing.T, d time.Duration, args ...string) (int, string) {
	t.Helper()
	type res struct {
		code   int
		stderr string
	}
	ch := make(chan res, 1)
	go func() {
		c, s := codeOf(args...)
		ch <- res{c, s}
	}()
	select {
	case r := <-ch:
		return r.code, r.stderr
	case <-time.After(d):
		t.Fatalf("%v: still running after %s (blocked on a special file?)", args, d)
		return 0, ""
	}
}

// Every file a spec or a flag names is refused unless it is a regular file,
// before any computation: a named pipe (FIFO) with no writer as the power
// matrix, the bathymetry (spec and inspect's flag), a screening layer and
// the hindcast input each give exit 2 naming the key or flag and the file,
// within a deadline (an open or a read of the pipe would block for ever),
// and the output directory is not created. The README says only regular
// files are opened ("what is refused").
func TestSpecialFilesRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
	spec := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	for _, c := range []struct {
		name string
		args []string
		want []string
	}{
		{"power matrix", []string{"--spec", spec("dev.toml", "[[device]]\nname = \"wec\"\npower_matrix = \""+fifo+"\"\n")},
			[]string{"device[0].power_matrix", fifo, "not a regular file (a named pipe (FIFO))"}},
		{"bathymetry", []string{"--spec", spec("bathy.toml", "[depth]\nsource = \"bathymetry\"\nbathymetry_file = \""+fifo+"\"\n")},
			[]string{"depth.bathymetry_file", fifo, "not a regular file (a named pipe (FIFO))"}},
		{"screening layer", []string{"--spec", spec("layer.toml", "[[screening.layer]]\nname = \"parks\"\nfile = \""+fifo+"\"\n\n"+
			"[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 15\"]\nexclude = [\"parks\"]\n")},
			[]string{"screening.layer[0].file", fifo, "not a regular file (a named pipe (FIFO))"}},
		{"input", []string{"--input", fifo},
			[]string{fifo, "not a regular file (a named pipe (FIFO))"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(c.name, " ", "-"))
			args := []string{"run", "--out", out, "--workers", "1"}
			if c.args[0] != "--input" {
				args = append(args, "--input", in)
			}
			code, stderr := codeWithin(t, 20*time.Second, append(args, c.args...)...)
			if code != 2 {
				t.Fatalf("exit %d, want 2: %s", code, stderr)
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("message lacks %q: %s", w, stderr)
				}
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("the refusal created the output directory %s", out)
			}
		})
	}
	t.Run("inspect --bathymetry", func(t *testing.T) {
		code, stderr := codeWithin(t, 20*time.Second, "inspect", "--bathymetry", fifo, in)
		if code != 2 || !strings.Contains(stderr, fifo) || !strings.Contains(stderr, "not a regular file (a named pipe (FIFO))") {
			t.Fatalf("exit %d, want 2 naming %s as a named pipe: %s", code, fifo, stderr)
		}
	})
}
