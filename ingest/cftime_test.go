package ingest

import (
	"encoding/json"
	"fmt"
	"os"
	"testing"
)

// TestTimeDecodingAgainstCftime checks CF time decoding for every calendar
// against the reference implementation, cftime.num2date from Debian's
// python3-cftime; values and the script that made them are in
// testdata/cftime/ (make_ref.py, cftime_ref.json).
func TestTimeDecodingAgainstCftime(t *testing.T) {
	raw, err := os.ReadFile("../testdata/cftime/cftime_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Source string
		Cases  []struct {
			Calendar, Units, Date string
			Value                 float64
			Microsecond           int
		}
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) < 500 {
		t.Fatalf("reference has only %d cases", len(ref.Cases))
	}
	for _, c := range ref.Cases {
		cal, err := ParseCalendar(c.Calendar)
		if err != nil {
			t.Fatal(err)
		}
		tu, err := ParseTimeUnits(c.Units, cal)
		if err != nil {
			t.Fatalf("%s %q: %v", c.Calendar, c.Units, err)
		}
		st, err := tu.Stamp(c.Value)
		if err != nil {
			t.Fatal(err)
		}
		want := c.Date
		if c.Microsecond >= 500000 {
			// swellgrid rounds to the nearest second; cftime keeps microseconds.
			var d Date
			fmt.Sscanf(c.Date, "%d-%d-%d %d:%d:%d", &d.Year, &d.Month, &d.Day, &d.Hour, &d.Minute, &d.Second)
			want = DateOf(cal, StampOf(cal, d)+1).String()
		}
		if got := DateOf(cal, st).String(); got != want {
			t.Errorf("%s: %v %s = %s, cftime says %s", c.Calendar, c.Value, c.Units, got, c.Date)
		}
		// Round trip: the date converts back to the same stamp.
		if back := StampOf(cal, DateOf(cal, st)); back != st {
			t.Errorf("%s: round trip of %v %s: %d != %d", c.Calendar, c.Value, c.Units, back, st)
		}
	}
}

func TestTimeUnitsRefused(t *testing.T) {
	bad := []string{"hours", "hours after 2001-01-01", "months since 2001-01-01", "fortnights since 2001-01-01",
		"hours since 2001-13-01", "hours since 2001-02-30", "days since yesterday"}
	for _, u := range bad {
		if _, err := ParseTimeUnits(u, Standard); err == nil {
			t.Errorf("ParseTimeUnits(%q) accepted", u)
		}
	}
	if _, err := ParseCalendar("lunar"); err == nil {
		t.Error("unknown calendar accepted")
	}
	// 360_day has a 30 February (common practice in climate models; CF 1.8 4.4.1).
	if _, err := ParseTimeUnits("days since 2001-02-30", Day360); err != nil {
		t.Errorf("360_day 30 February refused: %v", err)
	}
	// A UTC offset shifts the reference (CF 1.8 section 4.4: ISO 8601 offsets).
	a, _ := ParseTimeUnits("hours since 2001-01-01 01:00:00+01:00", Standard)
	b, _ := ParseTimeUnits("hours since 2001-01-01 00:00:00", Standard)
	if a.Ref != b.Ref {
		t.Errorf("offset not applied: %d vs %d", a.Ref, b.Ref)
	}
}
