package ingest

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// Non-finite attribute values are written to JSON as null (JSON has no NaN;
// encoding/json refuses it).
func TestVarInfoJSONNonFinite(t *testing.T) {
	vi := &VarInfo{Role: Hm0, Name: "hs", Scale: 1, Factor: 1, Fill: []float64{math.NaN(), -999},
		ValidMin: math.NaN(), ValidMax: math.Inf(1), Offset: math.Inf(-1)}
	b, err := json.Marshal(vi)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	fill := m["fill_values"].([]any)
	if fill[0] != nil || fill[1] != -999.0 || m["valid_min"] != nil || m["add_offset"] != nil || m["scale_factor"] != 1.0 {
		t.Errorf("got %s", b)
	}
	if _, ok := m["valid_max"]; ok {
		t.Errorf("an infinite valid_max (no limit) is written: %s", b)
	}
}

// Warnings of one kind about one variable make one line with the count of
// files and the range of values, in the same order whatever the order of
// arrival.
func TestWarningsGrouped(t *testing.T) {
	var a, b warnings
	in := [][3]any{{"x", "f3.nc", 3.0}, {"y", "f1.nc", 1e-5}, {"x", "f2.nc", 0.5}, {"y", "f2.nc", 2e-4}}
	for i := range in {
		e := in[i]
		a.add("packing", e[0].(string), e[1].(string), "scale "+fmtG(e[2].(float64)), e[2].(float64), "is packed differently")
		e = in[len(in)-1-i]
		b.add("packing", e[0].(string), e[1].(string), "scale "+fmtG(e[2].(float64)), e[2].(float64), "is packed differently")
	}
	la, lb := a.lines(), b.lines()
	if strings.Join(la, "\n") != strings.Join(lb, "\n") || len(la) != 2 {
		t.Fatalf("order depends on arrival:\n%v\n%v", la, lb)
	}
	if !strings.Contains(la[0], `variable "x" is packed differently in 2 files (f2.nc .. f3.nc; 2 kinds, from scale 0.5 to scale 3)`) ||
		!strings.Contains(la[1], "from scale 0.00001 to scale 0.0002") {
		t.Errorf("lines:\n%s", strings.Join(la, "\n"))
	}
}

func fmtG(x float64) string { b, _ := json.Marshal(x); return string(b) }

// Roles are guessed from long_name and units, never from short names alone.
func TestGuessRoles(t *testing.T) {
	vars := []VarSummary{
		{Name: "a1", Units: "m", LongName: "Significant height of combined wind waves and swell"},
		{Name: "a2", Units: "s", LongName: "Mean wave period based on inverse moment of frequency"},
		{Name: "a3", Units: "s", LongName: "Peak wave period"},
		{Name: "a4", Units: "degree true", LongName: "Mean wave direction"},
		{Name: "a5", Units: "m", LongName: "Model bathymetry"},
		{Name: "hs", Units: "1", LongName: "ice fraction"},
	}
	g := Guess(vars)
	want := map[Role]string{Hm0: "a1", Te: "a2", Tp: "a3", Dir: "a4", Depth: "a5"}
	if len(g) != len(want) {
		t.Errorf("guess %v, want %v", g, want)
	}
	for r, v := range want {
		if g[r] != v {
			t.Errorf("role %s: guessed %q, want %q", r, g[r], v)
		}
	}
	if u := SuggestUnits(Dir, "degree true"); u != "degree" {
		t.Errorf("units for \"degree true\": %q", u)
	}
	if u := SuggestUnits(Hm0, "m"); u != "" {
		t.Errorf("units for \"m\": %q, want none (understood)", u)
	}
}

// Station names come from the cf_role = "timeseries_id" variable (char
// array written by python3-netcdf4, testdata/layouts/make_layouts.py), and
// point coordinates stored over (time, station) are read as fixed points.
func TestStationNamesAndTimeStationCoordinates(t *testing.T) {
	cat, err := Open([]string{"../testdata/layouts/tstation"}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"SYN-NORTH", "SYN-MID", "SYN-SOUTH"}
	if strings.Join(cat.Names, ",") != strings.Join(want, ",") {
		t.Errorf("names %q, want %q", cat.Names, want)
	}
	lon := []float64{-6.25, -6.0, -5.5}
	for i, x := range lon {
		if math.Abs(cat.Grid.Lon[i]-x) > 1e-6 {
			t.Errorf("lon[%d] = %v, want %v", i, cat.Grid.Lon[i], x)
		}
	}
}
