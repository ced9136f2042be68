//go:build tools

// Package swellgrid pins, for `go mod tidy`, the modules that the design card
// names before every one of them is imported by real code. It is never built.
package swellgrid

import (
	_ "github.com/BurntSushi/toml"
	_ "github.com/apache/arrow/go/v17/parquet/pqarrow"
	_ "github.com/fhs/go-netcdf/netcdf"
	_ "github.com/paulmach/orb/encoding/wkb"
	_ "github.com/paulmach/orb/geojson"
	_ "github.com/schollz/progressbar/v3"
	_ "github.com/spf13/cobra"
	_ "golang.org/x/term"
	_ "gonum.org/v1/gonum/optimize"
)
