package contract

// Files of a run directory whose names more than one package spells.
const (
	ManifestFile   = "manifest.json"   // the run's manifest (Manifest)
	CellsFile      = "cells.parquet"   // one row per cell (the Col* columns)
	ScreeningFile  = "screening.json"  // swellgrid screen's summary (ScreeningSummary)
	ValidationFile = "validation.json" // swellgrid validate's summary
	AtlasNCFile    = "atlas.nc"        // the CF raster (UGRID on a mesh)
	AtlasGPKGFile  = "atlas.gpkg"      // the OGC GeoPackage
	ContourDir     = "contours"        // sub-directory of the contour and screening layers
	ReportDir      = "report"          // sub-directory of the HTML report
	ReportIndex    = "index.html"      // the report's first page, in ReportDir
	StateDir       = ".swellgrid"      // the run's state: checkpoints, the lock, a cluster's scripts; no output
	// ManifestSeal holds the SHA-256 of manifest.json ("<hex>  manifest.json",
	// as sha256sum writes it): the manifest cannot hold its own checksum.
	ManifestSeal = StateDir + "/manifest.sha256"
	// ValidationSeal holds the SHA-256 of a validation's files written
	// outside a run directory (validate --out; inside a run they are in its
	// output_checksums).
	ValidationSeal = StateDir + "/validation.sha256"
)

// SealedExtras are files that commands other than the run add to a finished
// run directory (swellgrid validate) without listing them in its outputs:
// when present, their size and SHA-256 are in the manifest's
// output_checksums too (export.Reseal), and readers verify them.
var SealedExtras = []string{ValidationFile, TableValidation + ".parquet", TableValidationQQ + ".parquet", TableValidationPairs + ".parquet"}

// Long tables of a run directory by name: the file is the name with
// ".parquet" (ParquetFile).
const (
	TableMonthly              = "monthly"
	TableScatter              = "scatter"
	TableExceedance           = "exceedance"
	TableWindows              = "windows"
	TableExtremes             = "extremes"
	TableThresholdDiagnostics = "threshold_diagnostics"
	TableDesign               = "design"
	TableDirections           = "directions"
	TableAnnual               = "annual"
	TableAnnualMaxima         = "annual_maxima"
	TableMonthlyYield         = "monthly_yield"
	TableAEPBands             = "aep_bands"
	TableAccess               = "access"
	TableScreening            = "screening"
	TableValidation           = "validation"
	TableValidationQQ         = "validation_qq"
	TableValidationPairs      = "validation_pairs"
	TableMeshNodes            = "mesh_nodes"
	TableMeshFaces            = "mesh_faces"
)

// The values of the spec's output.long_tables_cells: which cells have rows
// in the long tables. LongCellsAll (the default; an empty setting means
// it too): every cell. LongCellsSites: only the cells nearest to the
// spec's sites (for very large grids); atlas.nc then leaves out the
// monthly layers, which would be blank away from the sites.
const (
	LongCellsAll   = "all"
	LongCellsSites = "sites"
)

// ParquetFile is the file of the table named table: table + ".parquet".
func ParquetFile(table string) string { return table + ".parquet" }

// ContourLinesFile is the isoline layer of a cells.parquet column in
// ContourDir: <column>.geojson.
func ContourLinesFile(column string) string { return column + ".geojson" }

// ContourBandsFile is the band layer of a cells.parquet column in
// ContourDir: <column>.bands.geojson.
func ContourBandsFile(column string) string { return column + ".bands.geojson" }

// ScreeningOutlinePrefix begins the name of every screening outline in
// ContourDir (ScreeningOutlineFile).
const ScreeningOutlinePrefix = "screening_"

// ScreeningOutlineFile is the passing area of a screening scenario in
// ContourDir: screening_<scenario>.geojson.
func ScreeningOutlineFile(scenario string) string {
	return ScreeningOutlinePrefix + scenario + ".geojson"
}
