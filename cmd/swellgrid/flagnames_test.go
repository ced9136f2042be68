package main

import (
	"strings"
	"testing"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
)

// pflag takes the first back-quoted word of a flag's usage as the value's
// name in --help (pflag.UnquoteUsage). `run --help` showed --shard's value as
// "swellgrid merge" (issue 33). The value names of every command's flags
// must be a value's name (no space), and --shard's is I/N.
func TestFlagValueNames(t *testing.T) {
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		c.LocalFlags().VisitAll(func(f *pflag.Flag) {
			name, _ := pflag.UnquoteUsage(f)
			if strings.ContainsAny(name, " \t") {
				t.Errorf("%s --%s: --help shows the value's name as %q (a back-quoted phrase in the usage text)", c.CommandPath(), f.Name, name)
			}
		})
		for _, s := range c.Commands() {
			walk(s)
		}
	}
	root := newRootCmd()
	walk(root)
	run, _, err := root.Find([]string{"run"})
	if err != nil {
		t.Fatal(err)
	}
	f := run.Flags().Lookup("shard")
	if f == nil {
		t.Fatal("run has no --shard flag")
	}
	if name, _ := pflag.UnquoteUsage(f); name != "I/N" {
		t.Errorf("run --shard: --help shows the value's name as %q, want I/N", name)
	}
}
