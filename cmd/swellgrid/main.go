// Command swellgrid turns a CF NetCDF wave hindcast into a wave-energy resource
// atlas. The command only parses flags, calls one library function per
// subcommand and reports; all logic lives in the packages it calls.
package main

import (
	"fmt"
	"os"
)

func main() {
	if err := newRootCmd().Execute(); err != nil {
		fmt.Fprintln(os.Stderr, "swellgrid:", err)
		os.Exit(exitCode(err))
	}
}
