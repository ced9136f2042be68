package ingest

import (
	"strings"
	"testing"
)

// Times outside the years 1-9999 of the file's calendar are refused, naming
// the file, the time variable and its units, instead of wrapping round in
// the day arithmetic (before this check "hours since 300000000000-01-01"
// gave the year -284548206255). The calendar arithmetic behind the
// boundaries is CF 1.8 section 4.4.1 (noleap: 365 days every year).
func TestTimesOutsideYears1To9999Refused(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name, units, times string
		want               []string // "" for a file that is read
	}{
		{"huge reference year", "hours since 300000000000-01-01", "0, 3, 9",
			[]string{`variable "time"`, "hours since 300000000000-01-01", "year 300000000000 is outside the years 1-9999"}},
		{"year 0 reference", "days since 0000-01-01", "0, 3, 9",
			[]string{`variable "time"`, "days since 0000-01-01", "outside the years 1-9999"}},
		{"value past 9999", "hours since 2001-01-01", "0, 3, 1e12",
			[]string{`variable "time"`, "step 2", "time value 1e+12 hours since 2001-01-01 falls outside the years 1-9999 of the noleap calendar"}},
		{"one day past 9999", "days since 9999-12-30", "0, 1, 2",
			[]string{`variable "time"`, "step 2", "falls outside the years 1-9999"}},
		{"before year 1", "days since 0001-01-01", "-1, 0, 1",
			[]string{`variable "time"`, "step 0", "falls outside the years 1-9999"}},
		{"last day of 9999", "days since 9999-12-29", "0, 1, 2", nil},
		{"first day of year 1", "hours since 0001-01-01", "0, 3, 9", nil},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := ncgenFile(t, dir, strings.ReplaceAll(c.name, " ", "_"), cdl("TUNITS", c.units, "TIMES", c.times))
			cat, err := Open([]string{p}, Options{})
			if c.want == nil {
				if err != nil {
					t.Fatalf("refused a time inside the years 1-9999: %v", err)
				}
				if last := cat.Date(cat.Files[0].Last).Year; last < MinYear || last > MaxYear {
					t.Fatalf("last year %d", last)
				}
				return
			}
			if err == nil {
				t.Fatalf("read %s (%s); want a refusal", c.units, c.times)
			}
			for _, w := range append(c.want, p) {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("message lacks %q: %v", w, err)
				}
			}
		})
	}
}
