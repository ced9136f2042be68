package engine

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/fhs/go-netcdf/netcdf"

	"swellgrid/export/rundir"
	"swellgrid/ingest"
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

// output.long_tables_cells = "sites" (issue 29: limit the long tables for
// very large grids): every long table holds exactly the rows that the run of
// all cells has for the cells of the spec's sites (the cell the report
// gives each site a page for, rundir.Run.NearestSeaCell on the full run),
// value for value and in order, and none for any other cell; cells.parquet
// is byte-identical; the manifest records the setting; atlas.nc leaves out
// the monthly layers (they would be blank away from the sites). The default
// is unchanged: output.long_tables_cells = "all" gives every table byte for
// byte as a spec without it. A bad value and "sites" without sites are
// refused with exit 2 naming the key. The choice is the spec's own: no
// reference value.
func TestLongTablesSitesOnly(t *testing.T) {
	full := t.TempDir()
	mustRun(t, testSpec(t, "testdata/bulk_monthly", full))
	fr, err := rundir.Open(full, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Two sites a little off the centres of two cells.
	lon, lat := fr.Lon(), fr.Lat()
	n := len(lon)
	sites := []runspec.SiteSpec{{Name: "A (invented)", Lon: lon[2] + 0.01, Lat: lat[2] - 0.01}, {Name: "B (invented)", Lon: lon[n-3] - 0.01, Lat: lat[n-3] + 0.01}}
	want := map[int64]bool{}
	for _, s := range sites {
		c, _ := fr.NearestSeaCell(s.Lon, s.Lat)
		want[int64(c)] = true
	}
	if len(want) != 2 {
		t.Fatalf("the sites fall on cells %v, want two", want)
	}

	some := t.TempDir()
	s := testSpec(t, "testdata/bulk_monthly", some)
	s.Sites = sites
	s.Output.LongTablesCells = "sites"
	mustRun(t, s)
	all := t.TempDir()
	d := testSpec(t, "testdata/bulk_monthly", all)
	d.Output.LongTablesCells = "all"
	mustRun(t, d)

	same := func(a, b []byte) bool { return len(a) > 0 && bytes.Equal(a, b) }
	a, _ := os.ReadFile(filepath.Join(full, "cells.parquet"))
	b, _ := os.ReadFile(filepath.Join(some, "cells.parquet"))
	if !same(a, b) {
		t.Error("cells.parquet depends on output.long_tables_cells")
	}
	for _, name := range runspec.LongTableNames {
		f := name + ".parquet"
		a, _ := os.ReadFile(filepath.Join(full, f))
		if _, err := os.Stat(filepath.Join(full, f)); err != nil {
			continue // a table this fixture does not write
		}
		c, _ := os.ReadFile(filepath.Join(all, f))
		if !same(a, c) {
			t.Errorf("%s: output.long_tables_cells = \"all\" differs from the default (%d against %d bytes)", f, len(c), len(a))
		}
		ft, err := rundir.ReadTable(filepath.Join(full, f))
		if err != nil {
			t.Fatal(err)
		}
		st, err := rundir.ReadTable(filepath.Join(some, f))
		if err != nil {
			t.Fatal(err)
		}
		var rows []int // the full table's rows of the sites' cells
		for i, id := range ft.Col("cell_id").Int {
			if want[id] {
				rows = append(rows, i)
			}
		}
		if st.Rows != len(rows) || len(st.Columns) != len(ft.Columns) {
			t.Errorf("%s: %d rows and %d columns, want the full run's %d rows of the sites' cells and %d columns", f, st.Rows, len(st.Columns), len(rows), len(ft.Columns))
			continue
		}
		if len(rows) == 0 && ft.Rows > 0 {
			t.Errorf("%s: the sites' cells have no rows in the full run", f)
		}
		for k, fc := range ft.Columns {
			sc := st.Columns[k]
			for j, i := range rows {
				if fc.Name != sc.Name || !sameCell(fc, i, sc, j) {
					t.Errorf("%s: column %s row %d differs from the full run's row %d", f, fc.Name, j, i)
					break
				}
			}
		}
	}
	var m struct {
		Parameters struct {
			Output struct {
				LongTablesCells string `json:"long_tables_cells"`
			} `json:"output"`
		} `json:"parameters"`
	}
	mb, err := os.ReadFile(filepath.Join(some, "manifest.json"))
	if err != nil || json.Unmarshal(mb, &m) != nil {
		t.Fatalf("manifest: %v", err)
	}
	if m.Parameters.Output.LongTablesCells != "sites" {
		t.Errorf("the manifest records output.long_tables_cells = %q, want \"sites\"", m.Parameters.Output.LongTablesCells)
	}
	for dir, wantLayer := range map[string]bool{full: true, some: false} {
		if got := ncHasVar(t, filepath.Join(dir, "atlas.nc"), "power_monthly_mean_kw_m"); got != wantLayer {
			t.Errorf("%s: atlas.nc has the monthly layer: %v, want %v", dir, got, wantLayer)
		}
	}

	for _, c := range []struct {
		v     string
		sites []runspec.SiteSpec
	}{{"cells", sites}, {"sites", nil}} {
		bad := testSpec(t, "testdata/bulk_monthly", t.TempDir())
		bad.Output.LongTablesCells, bad.Sites = c.v, c.sites
		if _, err := Run(t.Context(), bad, Options{}); fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "output.long_tables_cells") {
			t.Errorf("long_tables_cells %q with %d sites: %v (exit %d), want exit 2 naming output.long_tables_cells", c.v, len(c.sites), err, fault.ExitCode(err))
		}
	}
}

// sameCell reports whether row i of a and row j of b hold the same value
// (nulls equal, NaN equal to NaN).
func sameCell(a *rundir.Column, i int, b *rundir.Column, j int) bool {
	if a.Kind != b.Kind || (a.Valid == nil) != (b.Valid == nil) {
		return false
	}
	if a.Valid != nil && (a.Valid[i] != b.Valid[j] || !a.Valid[i]) {
		return a.Valid[i] == b.Valid[j]
	}
	switch {
	case a.Float != nil:
		x, y := a.Float[i], b.Float[j]
		return x == y || (math.IsNaN(x) && math.IsNaN(y))
	case a.Int != nil:
		return a.Int[i] == b.Int[j]
	case a.Str != nil:
		return a.Str[i] == b.Str[j]
	default:
		return a.Bool[i] == b.Bool[j]
	}
}

// ncHasVar reports whether the NetCDF file at path has the variable name.
func ncHasVar(t *testing.T, path, name string) bool {
	t.Helper()
	var has bool
	err := ingest.WithNetCDF(func() error {
		ds, err := netcdf.OpenFile(path, netcdf.NOWRITE)
		if err != nil {
			return err
		}
		defer ds.Close()
		_, err = ds.Var(name)
		has = err == nil
		return nil
	})
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return has
}
