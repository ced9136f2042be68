package main

import (
	"context"
	"fmt"
	"os"
	"os/signal"
	"syscall"

	"github.com/spf13/cobra"

	"swellgrid/pipelines/serve"
)

func newServeCmd() *cobra.Command {
	var addr string
	var allowRemote bool
	cmd := &cobra.Command{
		Use:   "serve DIR",
		Short: "Explore a finished run on an interactive map in the browser (local, read-only)",
		Long: `serve shows the finished run in DIR as an interactive map in the browser: a
layer for each numeric column of cells.parquet in the report's colours (legend
with unit and colour scale), the contour layers of contours/, the sites and the
validation stations, a coastline; hover over a cell to read its value, click it
to open its page (the figures and numbers of a report's site page, built on
demand), or find the nearest cell to a lon/lat. The map library and coastline
are built into swellgrid: the page needs no network.

serve checks every file of the run against the manifest's checksums once, at
start, and never writes into DIR. It listens on 127.0.0.1 (this machine only);
an --addr on another interface is refused unless --allow-remote is given, as the
server has no authentication. Stop it with Ctrl-C. Exit codes: 0 stopped,
1 internal error, 2 not a finished run or a damaged file, or an --addr refused.

` + caution,
		Example: `  swellgrid serve demo-out/atlas-grid
  swellgrid serve --addr 127.0.0.1:0 atlas`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := serve.CheckAddr(addr, allowRemote); err != nil {
				return badInput(err)
			}
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
			defer stop()
			return serve.Serve(ctx, args[0], serve.Options{Addr: addr, AllowRemote: allowRemote, Ready: func(url string) {
				fmt.Fprintf(os.Stdout, "serving %s at %s (read-only; Ctrl-C to stop)\n", args[0], url)
			}})
		},
	}
	cmd.Flags().StringVar(&addr, "addr", serve.DefaultAddr, "`host:port` to listen on; a host other than 127.0.0.1, ::1 or localhost is refused without --allow-remote")
	cmd.Flags().BoolVar(&allowRemote, "allow-remote", false, "allow an --addr that other machines can reach (the server has no authentication)")
	return cmd
}
