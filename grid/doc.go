// Package grid describes where the cells of a hindcast are: regular lon/lat grids,
// curvilinear grids and point sets, with stable cell ids, longitudes normalised to
// [-180, 180) and the region's continuous longitude frame (wrap.go: -180..180, or
// 0..360 across 180 degrees) that every geometric step works in, with the cut at
// the antimeridian that RFC 7946 asks of GeoJSON, masks, contouring (marching
// squares) of a per-cell field, and the
// geometry of site screening: geodesic distances on WGS 84, point-in-polygon,
// cell areas on the ellipsoid and the dissolved outline of a set of cells.
//
// grid is plain geometry: it must not know NetCDF, statistics or file formats.
package grid
