// Command swellgrid turns a CF NetCDF wave hindcast into a wave-energy resource
// atlas. The command only parses flags, calls one library function per
// subcommand and reports; all logic lives in the packages it calls.
package main

import (
	"os"
)

func main() {
	os.Exit(mainCode(os.Args[1:], os.Stderr))
}
