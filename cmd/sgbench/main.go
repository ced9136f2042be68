// Command sgbench is the benchmark driver behind `make bench`: it generates
// the invented benchmark hindcasts once (cached), measures the read floor and
// the full pipeline on the whole and on half the record, each in a child
// process, and prints the figures (and, with -md, a Markdown table).
package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"swellgrid/internal/bench"
)

func main() {
	if raw := os.Getenv(bench.ChildEnv); raw != "" {
		var c bench.Case
		if err := json.Unmarshal([]byte(raw), &c); err != nil {
			fmt.Fprintln(os.Stderr, "sgbench child:", err)
			os.Exit(1)
		}
		m, err := bench.RunChild(c)
		if err != nil {
			fmt.Fprintln(os.Stderr, "sgbench child:", err)
			os.Exit(1)
		}
		json.NewEncoder(os.Stdout).Encode(m)
		return
	}
	home, _ := os.UserCacheDir()
	cache := flag.String("cache", filepath.Join(home, "swellgrid-bench"), "directory for the generated benchmark hindcasts")
	md := flag.String("md", "", "also write the figures as Markdown to this file")
	only := flag.String("only", "", `measure only this data set ("bulk" or "spectral"), or only the sharded run ("shards")`)
	before := flag.String("before", "", "also run every pipeline case with this benchmark program (built on an earlier commit)")
	parts := flag.String("parts", "full,half", "record lengths to measure (full, half)")
	mem256 := flag.Bool("mem256", true, "also run the bulk benchmark under --memory-limit 256MiB (about 9 minutes a program)")
	shards := flag.Bool("shards", true, "also run the sharded-run benchmark: 4 shards and their merge against a single run (50 x 50 cells, 5 years)")
	flag.Parse()
	cfg := bench.Config{Cache: *cache, Markdown: *md, Only: *only, Before: *before, Parts: strings.Split(*parts, ","),
		SkipMem256: !*mem256, Shards: *shards, Log: os.Stderr, Out: os.Stdout}
	if err := bench.Main(cfg); err != nil {
		fmt.Fprintln(os.Stderr, "sgbench:", err)
		os.Exit(1)
	}
}
