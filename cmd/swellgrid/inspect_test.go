package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A set without standard names: inspect refuses (exit 2), lists every data
// variable with its dimensions, units and long_name, and prints a [roles]
// table guessed from long_name and units; with those roles it reads the set
// (exit 0). Files written by python3-netcdf4 (testdata/layouts/make_layouts.py).
func TestInspectGuidedFirstRun(t *testing.T) {
	in := "../../testdata/layouts/shortnames"
	r := run(t, "inspect", in)
	if r.code != 2 {
		t.Fatalf("exit %d, want 2; stderr:\n%s", r.code, r.stderr)
	}
	for _, want := range []string{
		"hsig  (valid_time, latitude, longitude)", "Mean wave period based on inverse moment of frequency", "degree true",
		"A GUESS", "[roles]", `hm0 = "hsig"`, `te = "tm10"`, `dir = "thm"`, "[units]", `dir = "degree"`,
		"--role hm0=hsig --role te=tm10 --role dir=thm",
	} {
		if !strings.Contains(r.stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, r.stderr)
		}
	}
	ok := run(t, "inspect", "--role", "hm0=hsig", "--role", "te=tm10", "--role", "dir=thm", "--units", "dir=degree", "--deep-water", in)
	if ok.code != 0 {
		t.Fatalf("with the guessed roles: exit %d\n%s", ok.code, ok.stderr)
	}
	// Per-file packing: one grouped line per variable, in a stable order.
	var lines []string
	for _, l := range strings.Split(ok.stdout, "\n") {
		if strings.Contains(l, "packed differently") {
			lines = append(lines, l)
		}
	}
	if len(lines) != 3 || !strings.Contains(lines[0], `"hsig"`) || !strings.Contains(lines[1], `"thm"`) || !strings.Contains(lines[2], `"tm10"`) ||
		!strings.Contains(lines[0], "in 2 files") || !strings.Contains(lines[0], "from scale 0.00036 offset 0 to scale 0.00042 offset 0") {
		t.Errorf("packing warnings:\n%s", strings.Join(lines, "\n"))
	}
	again := run(t, "inspect", "--role", "hm0=hsig", "--role", "te=tm10", "--role", "dir=thm", "--units", "dir=degree", "--deep-water", in)
	if again.stdout != ok.stdout {
		t.Error("inspect output differs between two runs")
	}
	if bad := run(t, "inspect", "--role", "hm0", in); bad.code != 2 || !strings.Contains(bad.stderr, "ROLE=VALUE") {
		t.Errorf("--role without =: exit %d %s", bad.code, bad.stderr)
	}
}

// xarray's default _FillValue = NaN: inspect
// --json exits 0 with valid JSON and counts the all-missing land cell as
// masked.
func TestInspectJSONWithNaNFill(t *testing.T) {
	r := run(t, "inspect", "--json", "../../testdata/layouts/combined")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var v struct {
		Roles map[string]struct {
			Fill []*float64 `json:"fill_values"`
		} `json:"roles"`
		Masked int `json:"masked_cells"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &v); err != nil {
		t.Fatalf("not JSON: %v\n%.400s", err, r.stdout)
	}
	if _, ok := v.Roles["hm0"]; !ok {
		t.Error("no hm0 role in the JSON")
	}
	if v.Masked != 1 {
		t.Errorf("masked_cells %d, want 1 (the all-missing land cell)", v.Masked)
	}
}

// A spec names the inputs and the roles; paths on the command line are not
// needed.
func TestInspectSpec(t *testing.T) {
	dir := t.TempDir()
	spec := dir + "/s.toml"
	writeFile(t, spec, "[input]\npaths = [\""+abs(t, "../../testdata/layouts/tidal_grid")+"\"]\n[roles]\ndepth = \"bed_elev\"\n")
	r := run(t, "inspect", "--spec", spec)
	if r.code != 0 || !strings.Contains(r.stdout, `positive = "up" converted`) || !strings.Contains(r.stdout, "varying in time") {
		t.Errorf("exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
}

func writeFile(t *testing.T, path, s string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
}

func abs(t *testing.T, p string) string {
	t.Helper()
	a, err := filepath.Abs(p)
	if err != nil {
		t.Fatal(err)
	}
	return a
}
