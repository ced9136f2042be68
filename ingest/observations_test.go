package ingest

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// The reference is testdata/validate/obs_expected.json: what Debian's
// python3-netcdf4 (automatic masking and scaling, num2date) and
// python3-xarray (CF decoding) read back from the station files they wrote
// (testdata/validate/make_obs.py).
func TestObservationNCAgainstNetCDF4AndXarray(t *testing.T) {
	b, err := os.ReadFile("../testdata/validate/obs_expected.json")
	if err != nil {
		t.Fatalf("run testdata/validate/make_obs.py: %v", err)
	}
	// json cannot carry NaN: the file holds NaN literals, read them as null.
	var raw map[string]any
	if err := json.Unmarshal([]byte(strings.ReplaceAll(string(b), "NaN", "null")), &raw); err != nil {
		t.Fatal(err)
	}
	files := raw["files"].(map[string]any)
	for file, sts := range files {
		got, err := ReadObservationNC(filepath.Join("../testdata/validate", file))
		if err != nil {
			t.Fatalf("%s: %v", file, err)
		}
		want := sts.([]any)
		if len(got) != len(want) {
			t.Fatalf("%s: %d stations, libraries read %d", file, len(got), len(want))
		}
		for i, w := range want {
			wm := w.(map[string]any)
			g := got[i]
			if g.Name != wm["name"] {
				t.Errorf("%s: station %d named %q, libraries read %q", file, i, g.Name, wm["name"])
			}
			if math.Abs(g.Lon-normLon(wm["lon"].(float64))) > 1e-6 || math.Abs(g.Lat-wm["lat"].(float64)) > 1e-6 {
				t.Errorf("%s %s: at (%v, %v), libraries read (%v, %v)", file, g.Name, g.Lon, g.Lat, wm["lon"], wm["lat"])
			}
			times := wm["times"].([]any)
			if len(times) != len(g.Times) {
				t.Fatalf("%s: %d times, libraries read %d", file, len(g.Times), len(times))
			}
			for k, ts := range times {
				if s := DateOf(g.Calendar, g.Times[k]).String(); s != ts.(string) {
					t.Errorf("%s: time %d = %s, libraries read %s", file, k, s, ts)
				}
			}
			checked := 0
			for key, role := range map[string]Role{"hm0": Hm0, "te": Te, "tp": Tp, "dir": Dir} {
				wv, ok := wm[key]
				if !ok {
					if g.Values[role] != nil {
						t.Errorf("%s: role %s read, but the file has none", file, role)
					}
					continue
				}
				gv := g.Values[role]
				if len(gv) != len(times) {
					t.Fatalf("%s %s: %d values of %s", file, g.Name, len(gv), role)
				}
				for k, x := range wv.([]any) {
					if x == nil {
						if !math.IsNaN(gv[k]) {
							t.Errorf("%s %s %s[%d] = %v, libraries read a missing value", file, g.Name, role, k, gv[k])
						}
						continue
					}
					checked++
					if d := math.Abs(gv[k] - x.(float64)); d > 1e-9*math.Max(1, math.Abs(x.(float64))) && !(role == Dir && math.Abs(d-360) < 1e-9) {
						t.Errorf("%s %s %s[%d] = %.12g, libraries read %.12g", file, g.Name, role, k, gv[k], x)
					}
				}
			}
			if checked == 0 {
				t.Errorf("%s: no value compared", file)
			}
		}
	}
}

// TestObservationNCRefused: bad station files are refused naming the file
// and saying what to do.
func TestObservationNCRefused(t *testing.T) {
	for file, want := range map[string]string{
		"bad_no_time.nc":    "no time coordinate",
		"bad_units.nc":      "fix the units attribute",
		"bad_feature.nc":    `featureType is "trajectory"`,
		"bad_no_feature.nc": "no global attribute featureType",
	} {
		_, err := ReadObservationNC(filepath.Join("../testdata/validate", file))
		if err == nil {
			t.Errorf("%s: read, should be refused", file)
			continue
		}
		if !strings.Contains(err.Error(), file) || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: error %q, want the file and %q", file, err, want)
		}
	}
}

const goodCSV = `# comment: invented station for tests
time,station,lon,lat,hm0_m,te_s,dir_deg
2031-01-01T00:00:00Z,S1,10.5,-40.25,1.5,7.5,350
2031-01-01T02:00:00+01:00,S1,10.5,-40.25,,8,10
2031-01-01T03:00:00Z,S2,370.5,-40,2.25,NaN,-10
2031-01-01T00:30:00Z,S1,10.5,-40.25,1.75,7.75,
`

func TestObservationCSV(t *testing.T) {
	p := filepath.Join(t.TempDir(), "obs.csv")
	os.WriteFile(p, []byte(goodCSV), 0o644)
	st, err := ReadObservationCSV(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(st) != 2 || st[0].Name != "S1" || st[1].Name != "S2" {
		t.Fatalf("stations %v", st)
	}
	s1 := st[0]
	// rows sorted by time; 02:00+01:00 is 01:00 UTC (RFC 3339)
	wantT := []string{"2031-01-01 00:00:00", "2031-01-01 00:30:00", "2031-01-01 01:00:00"}
	for k, w := range wantT {
		if got := DateOf(Standard, s1.Times[k]).String(); got != w {
			t.Errorf("S1 time %d = %s, want %s", k, got, w)
		}
	}
	h := s1.Values[Hm0]
	if h[0] != 1.5 || h[1] != 1.75 || !math.IsNaN(h[2]) {
		t.Errorf("S1 hm0 = %v, want [1.5 1.75 NaN]", h)
	}
	if d := s1.Values[Dir]; d[0] != 350 || !math.IsNaN(d[1]) || d[2] != 10 {
		t.Errorf("S1 dir = %v", d)
	}
	if s1.Values[Tp] != nil {
		t.Errorf("tp read without a tp_s column")
	}
	s2 := st[1]
	if s2.Lon != 10.5 || s2.Values[Dir][0] != 350 || !math.IsNaN(s2.Values[Te][0]) {
		t.Errorf("S2: lon %v dir %v te %v; want 10.5 (370.5 normalised), 350 (-10 wrapped), NaN", s2.Lon, s2.Values[Dir], s2.Values[Te])
	}
	if s1.Attrs["comment"] != "invented station for tests" {
		t.Errorf("comment attribute %q", s1.Attrs["comment"])
	}
}

// A comment line's colon splits off a key only when the text before it is
// one word: "(+01:00)" in free text made a bogus attribute "times ... (+01"
// (issue 33). Free text joins the comment attribute; key lines stay keys.
func TestObservationCSVCommentColons(t *testing.T) {
	p := filepath.Join(t.TempDir(), "obs.csv")
	head := "# comment: invented station for tests\n# Times were local (+01:00) before conversion\n# source_note: synthetic, at 12:00\n#\n"
	os.WriteFile(p, []byte(head+goodCSV[strings.Index(goodCSV, "time,"):]), 0o644)
	st, err := ReadObservationCSV(p)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{
		"comment":     "invented station for tests Times were local (+01:00) before conversion",
		"source_note": "synthetic, at 12:00",
	}
	for _, s := range st {
		if !reflect.DeepEqual(s.Attrs, want) {
			t.Errorf("%s: attributes %q, want %q", s.Name, s.Attrs, want)
		}
	}
}

// TestObservationCSVRefused: each bad row names the file, the line, the
// column and what to do.
func TestObservationCSVRefused(t *testing.T) {
	head := "time,station,lon,lat,hm0_m\n"
	cases := []struct{ name, text, want string }{
		{"no zone", head + "2031-01-01T00:00:00,S,1,2,1\n", `obs.csv:2: column "time": time "2031-01-01T00:00:00" has no zone`},
		{"not a time", head + "yesterday,S,1,2,1\n", `obs.csv:2: column "time"`},
		{"bad number", head + "2031-01-01T00:00:00Z,S,1,2,1,5\n", "obs.csv:2: 6 fields"},
		{"comma decimal", head + "2031-01-01T00:00:00Z,S,1,2,\"1,5\"\n", `obs.csv:2: column "hm0_m": "1,5" is not a number`},
		{"unit in cm", "time,station,lon,lat,hm0_cm\n", `column "hm0_cm": not a column swellgrid reads`},
		{"cm in a metre column", head + "2031-01-01T00:00:00Z,S,1,2,150\n", `column "hm0_m": 150 is beyond any measured sea state`},
		{"negative", head + "2031-01-01T00:00:00Z,S,1,2,-1\n", `column "hm0_m": -1 is impossible`},
		{"missing lat", "time,station,lon,hm0_m\n", `column "lat": missing from the header`},
		{"no measurement", "time,station,lon,lat\n", "no measured column"},
		{"moving", head + "2031-01-01T00:00:00Z,S,1,2,1\n2031-01-01T01:00:00Z,S,1.5,2,1\n", `obs.csv:3: column "lon": station "S" is at (1.5, 2) here but at (1, 2) on line 2`},
		{"duplicate", head + "2031-01-01T00:00:00Z,S,1,2,1\n2031-01-01T01:00:00+01:00,S,1,2,1\n", `obs.csv:3: column "time": station "S" has the time 2031-01-01 00:00:00 twice (also on line 2)`},
		{"bad lat", head + "2031-01-01T00:00:00Z,S,1,95,1\n", `column "lat": "95" is not a latitude`},
		{"no rows", head, "no data rows"},
	}
	for _, c := range cases {
		p := filepath.Join(t.TempDir(), "obs.csv")
		os.WriteFile(p, []byte(c.text), 0o644)
		_, err := ReadObservationCSV(p)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want %q", c.name, err, c.want)
		}
	}
}

// TestReadObservationsDir: a directory gives its CSV and NetCDF files; a
// station in two files is refused.
func TestReadObservationsDir(t *testing.T) {
	d := t.TempDir()
	os.WriteFile(filepath.Join(d, "a.csv"), []byte(goodCSV), 0o644)
	b, _ := os.ReadFile("../testdata/validate/obs_xarray.nc")
	os.WriteFile(filepath.Join(d, "b.nc"), b, 0o644)
	st, err := ReadObservations([]string{d})
	if err != nil {
		t.Fatal(err)
	}
	if len(st) != 3 || st[2].Name != "CHARLIE-3" {
		t.Fatalf("%d stations", len(st))
	}
	os.WriteFile(filepath.Join(d, "c.csv"), []byte(goodCSV), 0o644)
	if _, err := ReadObservations([]string{d}); err == nil || !strings.Contains(err.Error(), `station "S1" is also in`) {
		t.Errorf("duplicate station: %v", err)
	}
}
