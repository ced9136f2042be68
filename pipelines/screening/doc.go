// Package screening applies a spec's [screening] section to a finished run
// directory (rundir.Run): criteria on cells.parquet columns, constraint
// layers (in, out, distance), cell areas and the passing outlines, written
// as screening.parquet, screening.json and GeoJSON. It reads the run's
// tables only: it must not know how they were computed.
package screening
