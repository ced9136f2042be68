package main

import (
	"bytes"
	"strings"
	"testing"

	"swellgrid/stats"
)

// TestValidateCommandRefusals: usage errors and a run directory that is not
// a finished run are exit code 2, saying what to do.
func TestValidateCommandRefusals(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"validate", "--obs", "x.csv"}, "--run DIR"},
		{[]string{"validate", "--run", t.TempDir(), "--obs", "x.csv"}, "not a finished run directory"},
		{[]string{"validate", "extra"}, "unknown command"},
	} {
		var stderr bytes.Buffer
		if code := mainCode(c.args, &stderr); code != 2 || !strings.Contains(stderr.String(), c.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", c.args, code, stderr.String(), c.want)
		}
	}
	cmd := newValidateCmd()
	if text := strings.Join(strings.Fields(cmd.Long), " "); !strings.Contains(text, strings.Join(strings.Fields(stats.Caution), " ")) {
		t.Errorf("validate --help lacks the caution")
	}
}
