// Package grid describes where the cells of a hindcast are: regular lon/lat grids,
// curvilinear grids and point sets, with stable cell ids, longitudes normalised to
// [-180, 180), masks, and contouring (marching squares) of a per-cell field.
//
// grid is plain geometry: it must not know NetCDF, statistics or file formats.
package grid
