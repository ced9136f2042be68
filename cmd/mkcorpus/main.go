// Command mkcorpus writes swellgrid's bad-input corpus (synthetic files) into a
// directory, one sub-directory per case, and prints each case with the
// outcome swellgrid must give it.
//
//	go run ./cmd/mkcorpus -out /tmp/corpus
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"swellgrid/internal/corpus"
)

func main() {
	out := flag.String("out", "corpus-out", "directory to write the cases into")
	flag.Parse()
	for _, c := range corpus.Cases() {
		s, err := c.Build(filepath.Join(*out, c.Name))
		if err != nil {
			fmt.Fprintln(os.Stderr, "mkcorpus:", err)
			os.Exit(1)
		}
		spec := ""
		if s.Spec != "" {
			spec = " --spec " + s.Spec
		}
		fmt.Printf("%s\t%d\t--input %s%s\t%s: %s\n", c.Name, c.Exit, s.Input, spec, c.Outcome, c.Breaks)
	}
}
