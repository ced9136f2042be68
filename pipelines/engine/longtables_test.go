package engine

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// output.long_tables (issue 29: a spec setting that limits the long tables
// for very large grids): the chosen tables are written byte for byte as in a
// run of all of them, the others not at all, the manifest lists the columns
// of the written ones only, the report is still built; an unknown name is
// refused naming the key. The choice is the spec's own: no reference value.
func TestLongTablesChosen(t *testing.T) {
	full := t.TempDir()
	mustRun(t, testSpec(t, "testdata/points_bulk.nc", full))
	some := t.TempDir()
	s := testSpec(t, "testdata/points_bulk.nc", some)
	s.Output.LongTables = []string{"monthly", "extremes"}
	res := mustRun(t, s)
	for _, name := range runspec.LongTableNames {
		f := name + ".parquet"
		_, err := os.Stat(filepath.Join(some, f))
		chosen := slices.Contains(s.Output.LongTables, name)
		switch {
		case chosen && err != nil:
			t.Errorf("%s was chosen but not written: %v", f, err)
		case !chosen && err == nil:
			t.Errorf("%s was not chosen but written", f)
		case chosen:
			a, _ := os.ReadFile(filepath.Join(full, f))
			b, _ := os.ReadFile(filepath.Join(some, f))
			if len(a) == 0 || !bytes.Equal(a, b) {
				t.Errorf("%s differs from the run of all tables (%d against %d bytes)", f, len(b), len(a))
			}
		}
		if !chosen && slices.Contains(res.Files, f) {
			t.Errorf("the result lists %s, which was not written", f)
		}
	}
	a, _ := os.ReadFile(filepath.Join(full, "cells.parquet"))
	b, _ := os.ReadFile(filepath.Join(some, "cells.parquet"))
	if !bytes.Equal(a, b) {
		t.Error("cells.parquet depends on output.long_tables")
	}
	var m struct {
		Columns map[string]json.RawMessage `json:"columns"`
		Outputs []string                   `json:"outputs"`
	}
	mb, err := os.ReadFile(filepath.Join(some, "manifest.json"))
	if err != nil || json.Unmarshal(mb, &m) != nil {
		t.Fatalf("manifest: %v", err)
	}
	var files []string
	for f := range m.Columns {
		files = append(files, f)
	}
	slices.Sort(files)
	if want := []string{"cells.parquet", "extremes.parquet", "monthly.parquet"}; !slices.Equal(files, want) {
		t.Errorf("the manifest's columns are of %v, want %v", files, want)
	}
	if !slices.Contains(m.Outputs, "report/index.html") {
		t.Errorf("no report among the outputs %v", m.Outputs)
	}

	bad := testSpec(t, "testdata/points_bulk.nc", t.TempDir())
	bad.Output.LongTables = []string{"monthly", "hourly"}
	if _, err := Run(t.Context(), bad, Options{}); fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "output.long_tables[1]") {
		t.Errorf("an unknown long table: %v (exit %d), want exit 2 naming output.long_tables[1]", err, fault.ExitCode(err))
	}
}

// runspec.LongTableNames, which the spec checks output.long_tables against,
// are the engine's long tables.
func TestLongTableNamesAreTheSchemas(t *testing.T) {
	var names []string
	for _, l := range longSchemas {
		names = append(names, l.tableName())
	}
	slices.Sort(names)
	if !slices.Equal(names, runspec.LongTableNames) {
		t.Errorf("the engine's long tables %v, the spec's list %v", names, runspec.LongTableNames)
	}
}
