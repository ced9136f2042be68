package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/testtool"
)

// overflowCDL is a 2 x 2 bulk file (invented values, synthetic) whose time
// units put its reference date in the year 300000000000.
const overflowCDL = `netcdf overflow {
dimensions:
  time = 3 ; lat = 2 ; lon = 2 ;
variables:
  double time(time) ; time:units = "hours since 300000000000-01-01" ; time:calendar = "standard" ; time:standard_name = "time" ;
  float lat(lat) ; lat:standard_name = "latitude" ; lat:units = "degrees_north" ;
  float lon(lon) ; lon:standard_name = "longitude" ; lon:units = "degrees_east" ;
  float hs(time, lat, lon) ; hs:standard_name = "sea_surface_wave_significant_height" ; hs:units = "m" ;
  float tp(time, lat, lon) ; tp:standard_name = "sea_surface_wave_period_at_variance_spectral_density_maximum" ; tp:units = "s" ;
// global attributes:
  :synthetic = "yes" ; :comment = "invented values for a test of the time range" ;
data:
  time = 0, 1, 2 ;
  lat = 50, 51 ;
  lon = 1, 2 ;
  hs = 1,2,3,4, 1,2,3,4, 1,2,3,4 ;
  tp = 8,8,8,8, 9,9,9,9, 10,10,10,10 ;
}
`

// A time reference far outside the calendar ("hours since
// 300000000000-01-01", which wrapped to the year -284548206255 with exit 0)
// is refused by `run` and `inspect` with exit 2 naming the file, the time
// variable and its units, before the output directory is created.
func TestOverflowTimeUnitsRefused(t *testing.T) {
	testtool.Need(t, "ncgen", "netcdf-bin")
	dir := t.TempDir()
	src, in := filepath.Join(dir, "overflow.cdl"), filepath.Join(dir, "overflow.nc")
	if err := os.WriteFile(src, []byte(overflowCDL), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command("ncgen", "-o", in, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v: %s", err, b)
	}
	out := filepath.Join(dir, "out")
	for _, args := range [][]string{{"run", "--input", in, "--out", out, "--workers", "1"}, {"inspect", in}} {
		code, stderr := codeOf(args...)
		if code != 2 {
			t.Fatalf("%s: exit %d, want 2: %s", args[0], code, stderr)
		}
		for _, w := range []string{in, `variable "time"`, "hours since 300000000000-01-01", "outside the years 1-9999"} {
			if !strings.Contains(stderr, w) {
				t.Errorf("%s: message lacks %q: %s", args[0], w, stderr)
			}
		}
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("the refusal created the output directory %s", out)
	}
}
