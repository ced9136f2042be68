package report

import (
	"encoding/xml"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// A figure whose title and axis label hold a station or site name with
// control characters (ESC, BEL, NUL, a C1 control; XML 1.0 forbids the C0
// ones even as character references) and a byte that is not UTF-8 is saved
// as SVG that encoding/xml (Go's XML parser, outside swellgrid) reads to the
// end, and the name's printable text is kept in the figure.
func TestSVGWellFormedWithControlCharacters(t *testing.T) {
	dir := t.TempDir()
	name := "Q-Q of Hm0, B\x1b]0;owned\x07\x00-1 <&> \u0085\xff"
	p := newPlot(name, "measured \x1b[2J (m)", "hindcast (m)")
	f := &figure{Name: "qq_hostile", Title: "test", W: 3 * vg.Inch, H: 3 * vg.Inch, draw: func(dc draw.Canvas) { p.Draw(dc) }}
	if _, err := save(dir, f); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "qq_hostile.svg"))
	if err != nil {
		t.Fatal(err)
	}
	d := xml.NewDecoder(strings.NewReader(string(b)))
	var text strings.Builder
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the SVG is not well-formed XML: %v", err)
		}
		if cd, ok := tok.(xml.CharData); ok {
			text.Write(cd)
		}
	}
	for _, w := range []string{"Q-Q of Hm0, B]0;owned-1 <&> \u0085\ufffd", "measured [2J (m)"} {
		if !strings.Contains(text.String(), w) {
			t.Errorf("the SVG's text lacks %q: %q", w, text.String())
		}
	}
}
