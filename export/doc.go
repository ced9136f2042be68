// Package export writes what the run computed: GeoParquet tables, GeoJSON contour
// layers and the run manifest. Every file is written under a temporary name in
// the output directory and renamed only when complete.
//
// export never computes statistics and never reads NetCDF; it encodes values it
// is given.
package export
