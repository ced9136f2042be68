package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"
)

// TermText escapes exactly the control characters: for every code point of
// the first planes, the result holds no character that Go's unicode tables
// (an implementation outside swellgrid) class as a control (C0, DEL, C1;
// ECMA-48's control sets), and leaves every other character as it is.
// Invalid UTF-8 bytes become \xNN; a second pass changes nothing.
func TestTermTextEscapesControls(t *testing.T) {
	for r := rune(0); r < 0x3000; r++ {
		s := "a" + string(r) + "b"
		got := TermText(s)
		if unicode.IsControl(r) {
			if strings.ContainsRune(got, r) {
				t.Fatalf("%U kept raw: %q", r, got)
			}
			for _, x := range got {
				if unicode.IsControl(x) {
					t.Fatalf("%U escaped to text holding the control %U", r, x)
				}
			}
		} else if got != s {
			t.Fatalf("%U changed: %q -> %q", r, s, got)
		}
		if TermText(got) != got {
			t.Fatalf("%U: a second pass changed %q", r, got)
		}
	}
	for in, want := range map[string]string{
		"\x1b]0;owned\x07": `\x1b]0;owned\x07`, // the title sequence of xterm-like terminals
		"a\u009b31mb":      `a\u009b31mb`,      // CSI as a single C1 character
		"bad\xffname":      `bad\xffname`,      // not UTF-8
		"line\nbreak\r":    `line\x0abreak\x0d`,
		"Süd-Ost 1":        "Süd-Ost 1",
	} {
		if got := TermText(in); got != want {
			t.Errorf("TermText(%q) = %q, want %q", in, got, want)
		}
	}
	// PathText, for JSON, escapes only bytes that are not UTF-8.
	if got := PathText("bad\xff\x1b"); got != "bad\\xff\x1b" {
		t.Errorf("PathText = %q", got)
	}
	long := strings.Repeat("é", 1000)
	if got := ShortText(long); len(got) > MaxQuoted+40 || !utf8.ValidString(got) || !strings.Contains(got, "(2000 bytes)") {
		t.Errorf("ShortText of 2000 bytes = %q", got)
	}
}

// Refusals of station files quote their text escaped and short: a station
// name and a value holding ESC and BEL, a time field of 10^6 characters
// (once quoted whole in a 1 MB message), and a NetCDF station file whose
// featureType global attribute is a terminal title sequence.
func TestStationTextInMessages(t *testing.T) {
	dir := t.TempDir()
	hdr := "time,station,lon,lat,hm0_m,te_s,tp_s,dir_deg\n"
	for name, c := range map[string]struct{ body, want string }{
		"lon.csv":  {hdr + "2031-01-01T00:00:00Z,B\x1b]0;x\x07,\x1b[2J5\x07,50,1,5,7,180\n", `\x1b[2J5\a`},
		"time.csv": {hdr + strings.Repeat("9", 1_000_000) + ",B1,5,50,1,5,7,180\n", "(1000000 bytes)"},
	} {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(c.body), 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := ReadObservations([]string{p})
		if err == nil {
			t.Fatalf("%s: read", name)
		}
		msg := err.Error()
		if strings.ContainsAny(msg, "\x1b\x07") || len(msg) > 1000 || !strings.Contains(msg, c.want) {
			t.Errorf("%s: message of %d bytes, want no ESC/BEL, at most 1000 bytes, with %q: %q", name, len(msg), c.want, ShortText(msg))
		}
	}
	p := ncgenFile(t, dir, "feature", `netcdf feature {
dimensions:
  time = 1 ;
variables:
  double time(time) ; time:units = "hours since 2031-01-01" ;
// global attributes:
  :synthetic = "yes" ; :comment = "invented" ; :featureType = "\033]0;owned\007" ;
data:
  time = 0 ;
}
`)
	_, err := ReadObservations([]string{p})
	if err == nil || strings.ContainsAny(err.Error(), "\x1b\x07") || !strings.Contains(err.Error(), `\x1b]0;owned\a`) {
		t.Errorf("featureType: %v", err)
	}
}
