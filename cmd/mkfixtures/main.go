// Command mkfixtures rewrites the synthetic NetCDF test fixtures under
// testdata/ (run from the module root: go run ./cmd/mkfixtures).
package main

import (
	"flag"
	"fmt"
	"os"

	"swellgrid/pipelines/synth"
)

func main() {
	root := flag.String("root", "testdata", "directory to write the fixtures into")
	flag.Parse()
	paths, err := synth.WriteFixtures(*root)
	if err != nil {
		fmt.Fprintln(os.Stderr, "mkfixtures:", err)
		os.Exit(1)
	}
	for _, p := range paths {
		fmt.Println(p)
	}
}
