// Command sgmem is the memory part of `make bench` (target bench-memory): it
// runs the swellgrid executable on the benchmark hindcasts under several
// memory limits, each case a child process, and reports each child's peak
// RSS (ru_maxrss) against its target (the limit plus the stated overhead,
// engine.ProcessOverhead, or the 360 MB for the bulk benchmark at
// 256 MiB). It asserts nothing: the figures go to BENCHMARKS.md.
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"

	"swellgrid/internal/bench"
	"swellgrid/pipelines/engine"
)

func main() {
	home, _ := os.UserCacheDir()
	cache := flag.String("cache", filepath.Join(home, "swellgrid-bench"), "directory of the generated benchmark hindcasts")
	bin := flag.String("bin", "bin/swellgrid", "swellgrid executable")
	md := flag.String("md", "", "write the table as Markdown here (and the figures as JSON beside it)")
	work := flag.String("work", "", "scratch directory for the run directories (default: a temporary one)")
	only := flag.String("only", "", "run only the cases whose name contains one of these (comma-separated)")
	months := flag.Int("grid200-months", 12, "record length of the 200 x 200 grid")
	flag.Parse()
	logf := func(f string, a ...any) { fmt.Fprintf(os.Stderr, f+"\n", a...) }
	bulk, err := bench.Ensure(*cache, "bulk", bench.BulkScenario(10), logf)
	if err != nil {
		fail(err)
	}
	g200, err := bench.Ensure(*cache, "grid200", bench.Grid200Scenario(*months), logf)
	if err != nil {
		fail(err)
	}
	// A child's ru_maxrss is at least the peak RSS of this process when it
	// started the child: Go starts children with vfork (the child shares
	// this memory until its exec) and Linux keeps the high-water mark of
	// the memory an exec replaces. Generating a hindcast above takes
	// hundreds of MiB, which then showed as every case's peak (595 MiB for
	// every 200 x 200 case). So, once the data exist, this program
	// replaces itself by a fresh copy (no generation: the cache is
	// complete) before it runs any case.
	if os.Getenv("SGMEM_FRESH") == "" {
		exe, err := os.Executable()
		if err != nil {
			fail(err)
		}
		os.Setenv("SGMEM_FRESH", "1")
		fail(syscall.Exec(exe, os.Args, os.Environ()))
	}
	root := *work
	if root == "" {
		if root, err = os.MkdirTemp("", "sgmem-"); err != nil {
			fail(err)
		}
		defer os.RemoveAll(root)
	}
	var done []*bench.MemCase
	for _, c := range bench.MemCases(bulk.Files, g200.Files, root, engine.ProcessOverhead) {
		if !selected(c.Name, *only) {
			continue
		}
		bench.RunMemCase(*bin, c, os.Stderr)
		done = append(done, c)
	}
	host := fmt.Sprintf("%d logical CPUs, %s/%s, %s", runtime.NumCPU(), runtime.GOOS, runtime.GOARCH, runtime.Version())
	table := bench.MemMarkdown(done, host)
	fmt.Print(table)
	if *md != "" {
		if err := os.WriteFile(*md, []byte(table), 0o644); err != nil {
			fail(err)
		}
		if err := bench.WriteMemJSON(strings.TrimSuffix(*md, filepath.Ext(*md))+".json", done); err != nil {
			fail(err)
		}
	}
}

// selected reports whether the case name contains one of the comma-separated
// parts of only (every case when only is empty).
func selected(name, only string) bool {
	if only == "" {
		return true
	}
	for _, p := range strings.Split(only, ",") {
		if p != "" && strings.Contains(name, p) {
			return true
		}
	}
	return false
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "sgmem:", err)
	os.Exit(1)
}
