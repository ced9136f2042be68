package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// Every list of a spec is limited to 64 entries, as the README says (exit
// 2 naming the key, the count and the limit, before anything is computed
// or the output directory is made): sites (3,000 sites on a small grid
// used to run for minutes), input paths, a scenario's exclude, within and
// distance lists and validation's observation paths. The limit is a rule
// of this tool (README), not of the trade.
func TestListLimits(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
	abs, _ := filepath.Abs(in)
	n := func(k int, f func(i int) string) string {
		var b strings.Builder
		for i := 0; i < k; i++ {
			b.WriteString(f(i))
		}
		return b.String()
	}
	quoted := func(k int, s string) string {
		var q []string
		for i := 0; i < k; i++ {
			q = append(q, fmt.Sprintf("%q", s))
		}
		return "[" + strings.Join(q, ", ") + "]"
	}
	layer := filepath.Join(dir, "zone.geojson")
	os.WriteFile(layer, []byte(`{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},"geometry":{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,0]]]}}]}`), 0o644)
	scen := "[[screening.layer]]\nname = \"zone\"\nfile = " + fmt.Sprintf("%q", layer) + "\n[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"
	for _, c := range []struct {
		name, spec, key string
		count           int
	}{
		{"3000 sites", n(3000, func(i int) string { return fmt.Sprintf("[[site]]\nname = \"s%d\"\nlon = 1\nlat = 50\n", i) }), "site", 3000},
		{"65 sites", n(65, func(i int) string { return fmt.Sprintf("[[site]]\nname = \"s%d\"\nlon = 1\nlat = 50\n", i) }), "site", 65},
		{"65 input paths", "[input]\npaths = " + quoted(65, abs) + "\n", "input.paths", 65},
		{"65 exclude", scen + "exclude = " + quoted(65, "zone") + "\n", "screening.scenario[0].exclude", 65},
		{"65 within", scen + "within = " + quoted(65, "zone") + "\n", "screening.scenario[0].within", 65},
		{"65 distance rules", scen + n(65, func(int) string { return "[[screening.scenario.distance]]\nlayer = \"zone\"\nmin_km = 1\n" }), "screening.scenario[0].distance", 65},
		{"65 observation paths", "[validation]\nobservations = " + quoted(65, "x.csv") + "\n", "validation.observations", 65},
	} {
		t.Run(c.name, func(t *testing.T) {
			spec := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".toml")
			os.WriteFile(spec, []byte(c.spec), 0o644)
			out := filepath.Join(dir, "out-"+strings.ReplaceAll(c.name, " ", "_"))
			args := []string{"run", "--out", out, "--spec", spec, "--workers", "1"}
			if c.key != "input.paths" { // --input replaces the spec's paths
				args = append(args, "--input", in)
			}
			code, stderr := codeWithin(t, 30*time.Second, args...)
			want := fmt.Sprintf("%s has %d entries; at most 64", c.key, c.count)
			if code != 2 || !strings.Contains(stderr, want) {
				t.Fatalf("exit %d, want 2 and %q: %.400s", code, want, stderr)
			}
			if _, err := os.Stat(out); err == nil {
				t.Error("the refusal created the output directory")
			}
		})
	}
	// 64 sites pass their check: a later check (run.memory_limit) refuses.
	spec := filepath.Join(dir, "edge.toml")
	os.WriteFile(spec, []byte(n(64, func(i int) string { return fmt.Sprintf("[[site]]\nname = \"s%d\"\nlon = 1\nlat = 50\n", i) })+"[run]\nmemory_limit = \"lots\"\n"), 0o644)
	if code, stderr := codeOf("run", "--input", in, "--out", filepath.Join(dir, "edge"), "--spec", spec); code != 2 || !strings.Contains(stderr, "run.memory_limit") {
		t.Errorf("64 sites: exit %d, want the later check (run.memory_limit) to refuse: %s", code, stderr)
	}
}

// A station CSV value is at most 256 bytes: a station name or a time field
// of 10^6 characters is refused by validate with exit 2 naming the file,
// the line and the column, quoting a short prefix (the message stays short;
// a 1 MB time field used to be quoted whole), before anything is written.
func TestStationCSVLongFields(t *testing.T) {
	run := copyRun(t, provedRuns(t)[0])
	long := strings.Repeat("x", 1_000_000)
	for _, c := range []struct{ name, row, col string }{
		{"station name", "2001-01-01T00:00:00Z," + long + ",1,50,1.0\n", "station"},
		{"time", long + ",ST,1,50,1.0\n", "time"},
	} {
		t.Run(c.name, func(t *testing.T) {
			csv := filepath.Join(t.TempDir(), "obs.csv")
			os.WriteFile(csv, []byte("# comment: invented, synthetic\ntime,station,lon,lat,hm0_m\n"+c.row), 0o644)
			code, stderr := codeWithin(t, 30*time.Second, "validate", "--run", run, "--obs", csv)
			if code != 2 || !strings.Contains(stderr, csv+":3") || !strings.Contains(stderr, fmt.Sprintf("column %q", c.col)) || !strings.Contains(stderr, "1000000 bytes") {
				t.Fatalf("exit %d, want 2 naming %s:3 column %s: %.400s", code, csv, c.col, stderr)
			}
			if len(stderr) > 800 {
				t.Errorf("a message of %d bytes quotes too much", len(stderr))
			}
			if _, err := os.Stat(filepath.Join(run, "validation.json")); err == nil {
				t.Error("validate wrote validation.json")
			}
		})
	}
}
