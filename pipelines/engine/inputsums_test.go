package engine

import (
	"context"
	"encoding/binary"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/corpus"
	"swellgrid/internal/runcheck"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// rewriteLastFloat overwrites the last 4 bytes of a classic NetCDF file (the
// last value of its last record variable, a big-endian float: NetCDF classic
// format specification) with x, keeping its size and modification time.
func rewriteLastFloat(t *testing.T, path string, x float32) {
	t.Helper()
	st, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.OpenFile(path, os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	var b [4]byte
	binary.BigEndian.PutUint32(b[:], math.Float32bits(x))
	if _, err := f.WriteAt(b[:], st.Size()-4); err != nil {
		t.Fatal(err)
	}
	f.Close()
	if err := os.Chtimes(path, st.ModTime(), st.ModTime()); err != nil {
		t.Fatal(err)
	}
	if st2, _ := os.Stat(path); st2.Size() != st.Size() || !st2.ModTime().Equal(st.ModTime()) {
		t.Fatal("the rewrite changed size or mtime")
	}
}

// Resume compares content: a file the checkpoint has read, replaced by
// different bytes of the same size and modification time, is refused (it
// was taken as unchanged: tables of old data, manifest with the new SHA-256);
// the same files given by relative instead of absolute paths resume.
func TestResumeComparesContent(t *testing.T) {
	s, err := corpus.Good(filepath.Join(t.TempDir(), "good"))
	if err != nil {
		t.Fatal(err)
	}
	jan, feb := filepath.Join(s.Input, "cx_2001-01.nc"), filepath.Join(s.Input, "cx_2001-02.nc")
	cwd, _ := os.Getwd()
	relJan, err := filepath.Rel(cwd, jan)
	if err != nil {
		t.Fatal(err)
	}
	fresh := filepath.Join(t.TempDir(), "fresh")
	sp := runspec.DefaultSpec()
	sp.Input.Paths, sp.Output.Dir = []string{jan, feb}, fresh
	mustRun(t, sp)

	// Relative, then absolute: resumes, and gives the fresh run's tables.
	out := filepath.Join(t.TempDir(), "resumed")
	s1 := runspec.DefaultSpec()
	s1.Input.Paths, s1.Output.Dir = []string{relJan}, out
	mustRun(t, s1)
	s2 := runspec.DefaultSpec()
	s2.Input.Paths, s2.Output.Dir = []string{jan, feb}, out
	mustRun(t, s2)
	runcheck.SameBytes(t, "resumed over absolute paths", runcheck.ParquetFiles(t, fresh), runcheck.ParquetFiles(t, out))

	// Same size, same mtime, other bytes: refused on resume.
	out2 := filepath.Join(t.TempDir(), "replaced")
	s3 := runspec.DefaultSpec()
	s3.Input.Paths, s3.Output.Dir = []string{jan}, out2
	mustRun(t, s3)
	rewriteLastFloat(t, jan, 123.5)
	s4 := runspec.DefaultSpec()
	s4.Input.Paths, s4.Output.Dir = []string{jan, feb}, out2
	_, err = Run(context.Background(), s4, Options{})
	if err == nil || !strings.Contains(err.Error(), "changed content") || !strings.Contains(err.Error(), "cx_2001-01.nc") || !strings.Contains(err.Error(), "--restart") {
		t.Fatalf("resume over a same-size, same-mtime replacement: %v; want it refused for changed content", err)
	}
	if c := fault.ExitCode(err); c != 2 {
		t.Errorf("refusal has exit code %d, want 2 (bad input)", c)
	}
}

// hashedWant is the checkpoint header pass p of job j wants on resume: its
// inputs with their content checksums (as Run fills them in).
func hashedWant(t *testing.T, j *job, p [2]int) ckHeader {
	t.Helper()
	w := j.ckWant(p)
	w.Inputs = append([]inputID(nil), w.Inputs...)
	for i := range w.Inputs {
		h, err := j.cat.HashFile(context.Background(), i)
		if err != nil {
			t.Fatal(err)
		}
		w.Inputs[i].SHA256 = h
	}
	return w
}
