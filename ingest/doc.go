// Package ingest reads wave hindcasts stored as CF-convention NetCDF: it builds a
// catalog of files (a file, a directory or a glob), discovers variables by CF
// standard_name (or an explicit role mapping), decodes CF time axes and calendars,
// unpacks and converts values to SI units, and yields blocks of [time x cells]
// per role from one goroutine that owns every NetCDF call.
//
// ingest knows NetCDF and CF; it knows nothing of statistics, of tables or of the
// run as a whole (it must not import stats, export or pipelines).
package ingest
