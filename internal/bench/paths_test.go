package bench

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

// specPaths keeps a case's input.paths within the spec's 64 entries (the
// README's list limit): a year whose files are all listed becomes one
// glob, a year listed in part stays a list of files, in order.
func TestSpecPathsYearGlobs(t *testing.T) {
	dir := t.TempDir()
	var files []string
	for y := 2001; y <= 2002; y++ {
		for m := 1; m <= 12; m++ {
			f := filepath.Join(dir, fmt.Sprintf("sgbench_bulk_%d-%02d.nc", y, m))
			if err := os.WriteFile(f, nil, 0o644); err != nil {
				t.Fatal(err)
			}
			files = append(files, f)
		}
	}
	got, err := specPaths(files[:18])
	if err != nil {
		t.Fatal(err)
	}
	want := append([]string{filepath.Join(dir, "sgbench_bulk_2001-*.nc")}, files[12:18]...)
	if !slices.Equal(got, want) {
		t.Errorf("first 18 months: %q, want %q", got, want)
	}
	if got, err := specPaths(files); err != nil || len(got) != 2 {
		t.Errorf("24 months: %q (%v), want two year globs", got, err)
	}
	many := make([]string, 65)
	for i := range many {
		many[i] = filepath.Join(dir, fmt.Sprintf("x%02d.nc", i))
	}
	if _, err := specPaths(many); err == nil {
		t.Error("65 single files: no error")
	}
}
