package engine

import (
	"path/filepath"
	"swellgrid/internal/runcheck"
	"testing"
)

// A record where one month is stored in the other axis order gives the same
// tables, byte for byte, as the record stored canonically. The two records
// are written by python3-xarray (testdata/orientation/make_orientation.py):
// the mixed one has January latitude-descending and March longitude-descending
// with dimensions (time, lon, lat).
func TestFlippedMonthSameTables(t *testing.T) {
	var tables [2]map[string][]byte
	for i, rec := range []string{"canonical", "mixed"} {
		s := testSpec(t, filepath.Join("testdata", "orientation", rec), filepath.Join(t.TempDir(), rec))
		s.Run.Workers = 2
		mustRun(t, s)
		tables[i] = runcheck.ParquetFiles(t, s.Output.Dir)
	}
	runcheck.SameBytes(t, "mixed orientation vs canonical", tables[0], tables[1])
}
