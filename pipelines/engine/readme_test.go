package engine

import (
	"flag"
	"fmt"
	"os"
	"regexp"
	"strings"
	"testing"

	"swellgrid/pipelines/tables"
	"swellgrid/pipelines/validation"
	"swellgrid/stats"
)

var updateREADME = flag.Bool("update-readme", false, "rewrite the README's column tables from the schema")

// TestREADMEColumns: the README's column tables are the schema (pipelines/engine/schema.go),
// and the README carries the one caution text.
func TestREADMEColumns(t *testing.T) {
	const path = "../../README.md"
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
		t.Errorf("README.md's column tables differ from pipelines/engine/schema.go; run go test ./pipelines/engine -run TestREADMEColumns -update-readme")
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
	for _, c := range allSchema() {
		key := c.File + ":" + c.Name
		if seen[key] {
			t.Errorf("%s appears twice", key)
		}
		seen[key] = true
		if c.Doc == "" || c.Type == "" {
			t.Errorf("%s: no description or type", key)
		}
		if c.Param != tables.NoParam && !strings.Contains(c.Name, "<"+string(c.Param)+">") {
			t.Errorf("%s: parameter %s not in the name", key, c.Param)
		}
		if c.Param == tables.NoParam && strings.Contains(c.Name, "<") {
			t.Errorf("%s: a pattern without a parameter", key)
		}
	}
}

// README markers around the generated column tables.
const (
	readmeBegin = "<!-- BEGIN column tables: generated from pipelines/engine/schema.go and pipelines/validation/schema.go; update with `go test ./pipelines/engine -run TestREADMEColumns -update-readme` -->"
	readmeEnd   = "<!-- END column tables -->"
)

var placeholder = regexp.MustCompile(`<[A-Za-z]+(\|[A-Za-z]+)*>`)

// readmeCell formats text for a Markdown table cell: placeholders such as
// <P> in code spans, pipes escaped.
func readmeCell(s string) string {
	s = placeholder.ReplaceAllStringFunc(s, func(m string) string { return "`" + m + "`" })
	return strings.ReplaceAll(s, "|", `\|`)
}

// readmeTables renders the schema as the README's column tables, one per file.
func readmeTables() string {
	var b strings.Builder
	b.WriteString(readmeBegin + "\n")
	file := ""
	for _, c := range allSchema() {
		if c.File != file {
			file = c.File
			fmt.Fprintf(&b, "\n#### `%s`\n\n", file)
			b.WriteString("| column | type | unit | CF standard_name; cell_methods | meaning |\n|---|---|---|---|---|\n")
		}
		cf := c.StandardName
		if c.CellMethods != "" {
			cf = strings.TrimPrefix(cf+"; "+c.CellMethods, "; ")
		}
		unit := c.Unit
		if unit == "" {
			unit = "—"
		}
		fmt.Fprintf(&b, "| `%s` | %s | %s | %s | %s |\n", strings.ReplaceAll(c.Name, "|", `\|`), c.Type, readmeCell(unit), readmeCell(cf), readmeCell(c.Doc))
	}
	b.WriteString("\n" + readmeEnd)
	return b.String()
}

// spliceREADME replaces the generated part of a README text.
func spliceREADME(readme string) (string, error) {
	a := strings.Index(readme, readmeBegin)
	z := strings.Index(readme, readmeEnd)
	if a < 0 || z < a {
		return "", fmt.Errorf("README.md: the markers of the generated column tables are missing (%q ... %q)", readmeBegin, readmeEnd)
	}
	return readme[:a] + readmeTables() + readme[z+len(readmeEnd):], nil
}

// allSchema is every column of every table swellgrid writes: the run's
// (Schema) and those of `swellgrid validate` (validation.Specs).
func allSchema() []tables.ColumnSpec { return append(Schema(), validation.Specs()...) }
