package report

import (
	"os"
	"strings"
	"testing"
)

// The README's description of the report's site pages must match what
// sitePage draws: the directional rose (rose.go, directionsFigure) is a site
// figure, so the README may not say the pages have none (issue 33).
func TestREADMESitePageRose(t *testing.T) {
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	i := strings.Index(s, "- `report/index.html`")
	if i < 0 {
		t.Fatal("README.md: no entry for report/index.html")
	}
	entry := s[i:]
	if j := strings.Index(entry[1:], "\n- "); j >= 0 {
		entry = entry[:j+1]
	}
	entry = strings.Join(strings.Fields(entry), " ")
	if strings.Contains(strings.ToLower(entry), "no directional power rose") {
		t.Errorf("README.md's report entry says the site pages have no directional rose, yet sitePage draws one: %q", entry)
	}
	if !strings.Contains(entry, "directional rose") || !strings.Contains(entry, "directions.parquet") {
		t.Errorf("README.md's report entry does not describe the site pages' directional rose (from directions.parquet): %q", entry)
	}
}
