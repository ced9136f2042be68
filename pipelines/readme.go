package pipelines

import (
	"fmt"
	"regexp"
	"strings"
)

// README markers around the generated column tables.
const (
	readmeBegin = "<!-- BEGIN column tables: generated from pipelines/schema.go; update with `go test ./pipelines -run TestREADMEColumns -update-readme` -->"
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
	for _, c := range Schema() {
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
