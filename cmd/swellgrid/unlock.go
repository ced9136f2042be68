package main

import (
	"fmt"
	"os"
	"swellgrid/pipelines/lock"

	"github.com/spf13/cobra"
)

func newUnlockCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "unlock DIR",
		Short: "Break the lock of a run directory whose run is gone",
		Long: `unlock removes the lock (DIR/.swellgrid/lock) that a run takes on its output
directory. A run refuses a locked directory while the run that locked it may be alive:
when the lock is of another host, or its pid now belongs to another process, the
refusal says so and names this command. unlock refuses while the run that took the
lock is alive on this host (exit code 4); stop that run instead.`,
		Example: `  swellgrid unlock atlas`,
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			msg, err := lock.Unlock(args[0])
			if err != nil {
				return err
			}
			fmt.Fprintln(os.Stdout, msg)
			return nil
		},
	}
}
