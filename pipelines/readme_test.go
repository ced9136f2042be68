package pipelines

import (
	"flag"
	"os"
	"strings"
	"testing"

	"swellgrid/stats"
)

var updateREADME = flag.Bool("update-readme", false, "rewrite the README's column tables from the schema")

// TestREADMEColumns: the README's column tables are the schema (pipelines/schema.go),
// and the README carries the one caution text.
func TestREADMEColumns(t *testing.T) {
	const path = "../README.md"
	old, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	want, err := spliceREADME(string(old))
	if err != nil {
		t.Fatal(err)
	}
	if *updateREADME {
		if err := os.WriteFile(path, []byte(want), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	if want != string(old) {
		t.Errorf("README.md's column tables differ from pipelines/schema.go; run go test ./pipelines -run TestREADMEColumns -update-readme")
	}
	// The caution, word for word (the README quotes it as a block, "> " lines).
	text := strings.Join(strings.Fields(strings.ReplaceAll(string(old), "\n> ", " ")), " ")
	if !strings.Contains(text, stats.Caution) {
		t.Errorf("README.md lacks the caution text of stats.Caution: %q", stats.Caution)
	}
}

// TestSchemaEntries: every entry is complete and names are unique per file
// and well formed once expanded.
func TestSchemaEntries(t *testing.T) {
	seen := map[string]bool{}
	for _, c := range Schema() {
		key := c.File + ":" + c.Name
		if seen[key] {
			t.Errorf("%s appears twice", key)
		}
		seen[key] = true
		if c.Doc == "" || c.Type == "" {
			t.Errorf("%s: no description or type", key)
		}
		if c.Param != NoParam && !strings.Contains(c.Name, "<"+string(c.Param)+">") {
			t.Errorf("%s: parameter %s not in the name", key, c.Param)
		}
		if c.Param == NoParam && strings.Contains(c.Name, "<") {
			t.Errorf("%s: a pattern without a parameter", key)
		}
	}
}
