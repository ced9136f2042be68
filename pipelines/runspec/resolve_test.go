package runspec

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Validate reads no file; Resolve reads what the spec names, refuses a
// missing file under its key with a structured Error, and parses the memory
// limit once (IEC 80000-13 binary prefixes: 1 MiB = 2^20 bytes).
func TestResolveReadsValidateDoesNot(t *testing.T) {
	dir := t.TempDir()
	s := DefaultSpec()
	s.Input.Paths, s.Output.Dir = []string{"in"}, dir
	s.Devices = []DeviceSpec{{Name: "wec", PowerMatrix: filepath.Join(dir, "missing.csv")}}
	if err := s.Validate(); err != nil {
		t.Fatalf("Validate read a file (or refused a valid spec): %v", err)
	}
	_, err := s.Resolve()
	var se *Error
	if !errors.As(err, &se) || se.Key != "device[0].power_matrix" || !strings.Contains(se.Value, "missing.csv") {
		t.Fatalf("Resolve of a spec naming a missing matrix: %v (%#v), want an *Error under device[0].power_matrix", err, se)
	}
	if se.Err == nil || !strings.Contains(se.Why, "cannot be read") {
		t.Errorf("the refusal does not carry its cause: %#v", se)
	}
	os.WriteFile(filepath.Join(dir, "missing.csv"), []byte("hm0_m\\te_s,6,8\n1,10,20\n2,40,80\n"), 0o644)
	s.Run.MemoryLimit = "512MiB"
	r, err := s.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	if r.Exec.MemoryBytes != 512<<20 || r.Exec.MemoryText != "512MiB" {
		t.Errorf("memory limit 512MiB resolved to %d bytes (%q), want %d", r.Exec.MemoryBytes, r.Exec.MemoryText, 512<<20)
	}
	if len(r.Named) != 1 || r.Named[0].Key != "device[0].power_matrix" || len(r.Named[0].SHA256) != 64 {
		t.Errorf("named files %+v, want the matrix with its SHA-256", r.Named)
	}
}

// A refused value is an *Error with its key and value, whose text is the
// one the CLI has always printed.
func TestSpecErrorText(t *testing.T) {
	s := DefaultSpec()
	s.Input.Paths, s.Output.Dir = []string{"in"}, t.TempDir()
	s.Extremes.ThresholdRule = "median"
	err := s.Validate()
	var se *Error
	if !errors.As(err, &se) || se.Key != "extremes.threshold_rule" || se.Value != `"median"` {
		t.Fatalf("%v (%#v), want an *Error for extremes.threshold_rule", err, se)
	}
	if want := `spec: extremes.threshold_rule = "median": must be "quantile" or "peaks_per_year"`; err.Error() != want {
		t.Errorf("text %q, want %q", err.Error(), want)
	}
}
