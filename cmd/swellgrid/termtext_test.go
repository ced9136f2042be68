package main

import (
	"bytes"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/testtool"
)

// hostileCDL is a 2 x 2 bulk file (invented values, synthetic) whose global
// and variable attributes carry terminal control sequences: ESC ] 0 ; ...
// BEL sets a terminal's title, ESC [ 2 J clears its screen (ECMA-48). HSNAME
// is the standard_name of hs.
const hostileCDL = `netcdf hostile {
dimensions:
  time = 3 ; lat = 2 ; lon = 2 ;
variables:
  double time(time) ; time:units = "hours since 2031-01-01" ; time:calendar = "standard" ; time:standard_name = "time" ;
  float lat(lat) ; lat:standard_name = "latitude" ; lat:units = "degrees_north" ;
  float lon(lon) ; lon:standard_name = "longitude" ; lon:units = "degrees_east" ;
  float hs(time, lat, lon) ; hs:standard_name = "HSNAME" ; hs:units = "m" ; hs:long_name = "\033[2J\007wave height\033]0;owned\007" ;
  float tp(time, lat, lon) ; tp:standard_name = "sea_surface_wave_period_at_variance_spectral_density_maximum" ; tp:units = "s" ; tp:long_name = "\033]0;peak\007" ;
// global attributes:
  :synthetic = "yes" ; :comment = "invented values for a test of terminal-safe text" ; :title = "\033]0;owned\007\033[2J" ;
data:
  time = 0, 1, 2 ;
  lat = 50, 51 ;
  lon = 1, 2 ;
  hs = 1,2,3,4, 1,2,3,4, 1,2,3,4 ;
  tp = 8,8,8,8, 9,9,9,9, 10,10,10,10 ;
}
`

// hostileName is a file name that would retitle the terminal and ring its
// bell if printed raw.
const hostileName = "h\x1b]0;owned\x07\x1b[2J.nc"

func writeHostile(t *testing.T, dir, base, hsName string) string {
	t.Helper()
	testtool.Need(t, "ncgen", "netcdf-bin")
	src, nc := filepath.Join(dir, base+".cdl"), filepath.Join(dir, base+".nc")
	if err := os.WriteFile(src, []byte(strings.ReplaceAll(hostileCDL, "HSNAME", hsName)), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command("ncgen", "-o", nc, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v: %s", err, b)
	}
	return nc
}

// withStdout runs f with os.Stdout sent to a pipe and returns what f wrote.
func withStdout(t *testing.T, f func()) string {
	t.Helper()
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	old := os.Stdout
	os.Stdout = w
	got := make(chan []byte)
	go func() { b, _ := io.ReadAll(r); got <- b }()
	f()
	os.Stdout = old
	w.Close()
	return string(<-got)
}

// rawControl reports the first C0/C1 control byte in s other than the line
// break (ECMA-48's control sets: what a terminal acts on).
func rawControl(s string) (rune, bool) {
	for _, r := range s {
		if r != '\n' && (r < 0x20 || r == 0x7f || r >= 0x80 && r < 0xa0) {
			return r, true
		}
	}
	return 0, false
}

// No control character from an input reaches the terminal: a file name, a
// global attribute and variable attributes holding ESC and BEL, and a site
// name, are printed by inspect (text) and by refusals with the controls
// escaped as \x1b and \x07 (ingest.TermText), and the rest of the text kept.
func TestNoControlBytesOnTheTerminal(t *testing.T) {
	dir := t.TempDir()
	ok := filepath.Join(dir, hostileName)
	if err := os.Rename(writeHostile(t, dir, "ok", "sea_surface_wave_significant_height"), ok); err != nil {
		t.Fatal(err)
	}
	norole := filepath.Join(dir, "r"+hostileName)
	if err := os.Rename(writeHostile(t, dir, "norole", "not_a_standard_name"), norole); err != nil {
		t.Fatal(err)
	}
	spec := filepath.Join(dir, "site.toml")
	if err := os.WriteFile(spec, []byte("[[site]]\nname = \"mooring\\u001b]0;owned\\u0007\"\nlon = 1\nlat = 100\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	escaped := `h\x1b]0;owned\x07\x1b[2J.nc`
	for _, c := range []struct {
		name     string
		args     []string
		code     int
		inStdout string
		inStderr []string
	}{
		{"inspect, file name", []string{"inspect", ok}, 0, escaped, nil},
		{"inspect --json, file name", []string{"inspect", "--json", ok}, 0, `h\u001b]0;owned\u0007\u001b[2J.nc`, nil},
		{"refusal, file name and variable attributes", []string{"inspect", norole}, 2, "", []string{"r" + escaped, `\x1b[2J\x07wave height\x1b]0;owned\x07`, `\x1b]0;peak\x07`}},
		{"run refusal, file name", []string{"run", "--input", norole, "--out", filepath.Join(dir, "out")}, 2, "", []string{"r" + escaped}},
		{"spec refusal, site name", []string{"run", "--input", ok, "--out", filepath.Join(dir, "out"), "--spec", spec}, 2, "", []string{`mooring\x1b]0;owned\a`}}, // %q writes BEL as \a
	} {
		t.Run(c.name, func(t *testing.T) {
			var code int
			var stderr string
			stdout := withStdout(t, func() { code, stderr = codeOf(c.args...) })
			if code != c.code {
				t.Fatalf("exit %d, want %d: %s", code, c.code, stderr)
			}
			for what, s := range map[string]string{"stdout": stdout, "stderr": stderr} {
				if r, bad := rawControl(s); bad {
					t.Errorf("%s holds the raw control character %U: %q", what, r, s)
				}
			}
			if !strings.Contains(stdout, c.inStdout) {
				t.Errorf("stdout lacks %q: %q", c.inStdout, stdout)
			}
			for _, w := range c.inStderr {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr lacks %q: %q", w, stderr)
				}
			}
		})
	}
	if bytes.Contains([]byte(hostileName), []byte{0x1b}) == false {
		t.Fatal("the test's file name lost its ESC")
	}
}
