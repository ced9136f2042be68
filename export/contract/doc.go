// Package contract is swellgrid's output contract: the names and document
// types that the writers of a run directory and its readers share, declared
// once so that neither side spells them on its own.
//
// It holds the file names of a run directory (cells.parquet, manifest.json,
// screening.json, atlas.nc, atlas.gpkg, the contours directory and the names
// of the layers in it), the names of the tables and of the cells.parquet
// columns that other packages refer to (with the builders of the names that
// carry a run parameter, such as aep_<device>_mwh), and the types of the
// manifest.json and screening.json documents as the products read them back.
//
// contract knows names and shapes only: it never computes a value, never
// opens or writes a file and never decides what a column holds; the schema
// with each column's unit, description and filling function stays with the
// run engine, and the encoders stay in export. It is a leaf: it imports the
// standard library and swellgrid/grid (for grid.Kind) only.
package contract
