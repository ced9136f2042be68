package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime/debug"
	"strings"

	"github.com/spf13/cobra"

	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
)

// Version is the software version recorded in every manifest.
var Version = "0.1.0-dev"

// Exit codes (documented in the README): 0 ok, 1 internal error, 2 bad input,
// spec or usage, 3 interrupted, 4 output directory locked or not writable.
// exitCode is the one place that maps an error to its code: the kind of the
// *fault.Error it carries (see fault.Kind).
func exitCode(err error) int { return fault.ExitCode(err) }

// badInput marks err as bad input, a bad spec or a usage error (exit code 2).
func badInput(err error) error { return &fault.Error{Kind: fault.BadInput, Err: err} }

// interrupted turns the failure of a command whose context was cancelled (a
// signal) into an interruption (exit code 3) saying msg, what to do next.
func interrupted(ctx context.Context, err error, msg string) error {
	if err != nil && (ctx.Err() != nil || fault.KindOf(err) == fault.Interrupted) {
		return &fault.Error{Kind: fault.Interrupted, Err: errors.New(msg)}
	}
	return err
}

// crashDir is where an internal error's stack is written: the output
// directory, once a subcommand knows it.
var crashDir string

// crashLog is the name of the file that holds an internal error's stack.
const crashLog = "swellgrid-internal-error.log"

// mainCode runs the command line args and returns the exit code, having
// written the error to stderr. A panic is caught here (and in every worker
// goroutine of the pipeline): exit code 1, "internal error", and the stack
// in the output directory's crashLog.
func mainCode(args []string, stderr io.Writer) (code int) {
	defer func() {
		if r := recover(); r != nil {
			code = reportInternal(stderr, fmt.Errorf("internal error: %v", r), debug.Stack())
		}
	}()
	root := newRootCmd()
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return 0
	}
	var pe *fault.Error
	if errors.As(err, &pe) && pe.Stack != nil {
		return reportInternal(stderr, err, pe.Stack)
	}
	fmt.Fprintln(stderr, "swellgrid:", termMessage(err.Error()))
	return exitCode(err)
}

// termMessage is a message for the terminal: each of its lines through
// ingest.TermText, so that no control character from an input (a file
// name, an attribute, a station or site name) reaches stderr raw, whatever
// the message quotes; the message's own line breaks are kept.
func termMessage(msg string) string {
	lines := strings.Split(msg, "\n")
	for i, l := range lines {
		lines[i] = ingest.TermText(l)
	}
	return strings.Join(lines, "\n")
}

// reportInternal writes an internal error's stack to crashLog in crashDir
// (or the temporary directory) and says so; it returns exit code 1.
func reportInternal(stderr io.Writer, err error, stack []byte) int {
	dir := crashDir
	if dir == "" || os.MkdirAll(dir, 0o755) != nil {
		dir = os.TempDir()
	}
	path := filepath.Join(dir, crashLog)
	body := fmt.Sprintf("swellgrid %s: %v\n\n%s", Version, err, stack)
	if werr := os.WriteFile(path, []byte(body), 0o644); werr != nil {
		fmt.Fprintf(stderr, "swellgrid: %v; this is a defect of swellgrid, please report it (the stack could not be saved: %v)\n%s", err, werr, stack)
		return 1
	}
	fmt.Fprintf(stderr, "swellgrid: %v; this is a defect of swellgrid, please report it with %s, which holds the stack\n", err, path)
	return 1
}

// markUsage makes the usage errors of c and its subcommands (unknown
// command or flag, wrong number of arguments) bad-input errors, exit code 2.
func markUsage(c *cobra.Command) {
	c.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return badInput(fmt.Errorf("%w (see %s --help)", err, c.CommandPath()))
	})
	args := c.Args
	if args == nil {
		args = func(c *cobra.Command, a []string) error {
			if len(a) > 0 {
				return fmt.Errorf("unknown command %q for %q", a[0], c.CommandPath())
			}
			return nil
		}
	}
	c.Args = func(c *cobra.Command, a []string) error {
		if err := args(c, a); err != nil {
			return badInput(fmt.Errorf("%w (see %s --help)", err, c.CommandPath()))
		}
		return nil
	}
	for _, s := range c.Commands() {
		markUsage(s)
	}
}

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "swellgrid",
		Short: "Turn a CF NetCDF wave hindcast into a wave-energy resource atlas",
		Long: `swellgrid turns a CF NetCDF wave hindcast (spectra or bulk parameters, one file per
month or one file) into a wave-energy resource atlas: per-cell wave power, its
variability, exceedance, weather windows, device yield and extreme sea states, written
as GeoParquet tables, GeoJSON contour layers and a manifest.

` + caution,
		Example: `  swellgrid demo --out demo-out
  swellgrid inspect testdata/bulk_monthly
  swellgrid run --input testdata/bulk_monthly --out atlas`,
		Version:       Version,
		SilenceUsage:  true,
		SilenceErrors: true,
		// Runnable so that an unknown command is a usage error (exit 2),
		// not the help text with exit 0.
		RunE: func(cmd *cobra.Command, args []string) error { return cmd.Help() },
	}
	root.AddCommand(newInspectCmd(), newRunCmd(), newDemoCmd(), newMergeCmd(), newClusterCmd(), newUnlockCmd(), newReportCmd(), newScreenCmd(), newValidateCmd(), newServeCmd())
	markUsage(root)
	return root
}
