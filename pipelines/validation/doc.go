// Package validation is `swellgrid validate`: stations (CSV or CF NetCDF)
// placed on the finished run's grid (nearest sea cell or bilinear), their
// times matched to the hindcast's steps, and the comparison statistics
// (stats/validate) written as tables and validation.json. It reads the run
// directory and its inputs again; it must not know the run engine.
package validation
