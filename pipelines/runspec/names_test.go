package runspec

import (
	"strings"
	"testing"

	atlasreport "swellgrid/export/report"
)

// Station names (from CSV or NetCDF station files) become validation page
// names: two that differ only in case and punctuation ("ST-1", "st 1") are
// refused naming both files instead of one page silently replacing the
// other; a name of 10^6 characters is refused by its length with a message
// that quotes a short prefix; distinct names of up to 200 bytes pass, and
// their longest file name stays within 255 bytes.
func TestStationNamesAsFileNames(t *testing.T) {
	files := []string{"a.csv", "b.nc", "c.csv"}
	key := func(i int) string { return "validate: " + files[i] }
	for _, c := range []struct {
		names []string
		want  []string
	}{
		{[]string{"ST-1", "buoy", "st 1"}, []string{"c.csv", `"st 1"`, `"st_1"`, "a.csv", `"ST-1"`, "share a page"}},
		{[]string{"buoy", strings.Repeat("x", 1_000_000), "b"}, []string{"b.nc", "1000000 bytes", "at most 200"}},
		{[]string{"--", "b", "c"}, []string{"a.csv", "no letter or digit"}},
	} {
		err := CheckFileNames("station", c.names, key, atlasreport.StationNameOverhead)
		if err == nil {
			t.Errorf("%.20q: accepted", c.names)
			continue
		}
		if len(err.Error()) > 600 {
			t.Errorf("message of %d bytes", len(err.Error()))
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%.40q: message lacks %q: %.300s", c.names, w, err)
			}
		}
	}
	long := strings.Repeat("y", maxNameLen)
	if err := CheckFileNames("station", []string{long, "ST-1", "st-2"}, key, atlasreport.StationNameOverhead); err != nil {
		t.Errorf("distinct names refused: %v", err)
	}
	if n := len("validation_" + atlasreport.Slug(long) + "_scatter.png"); n > maxFileName {
		t.Errorf("the longest station file name is %d bytes", n)
	}
	if n := len("site_" + atlasreport.Slug(long) + "_design_contours_hm0_te.svg"); n > maxFileName {
		t.Errorf("the longest site file name is %d bytes", n)
	}
}
