// Package layout holds no code: its test checks the house rule of
// DEVELOPERS.md ("Layout and import direction") that tooling stays out of the
// product. A product package (ingest, grid, stats, export, pipelines and
// cmd/swellgrid, with their sub-packages) may import the tooling packages
// (internal/testtool, internal/bench, internal/corpus, internal/parquetread,
// internal/runcheck)
// only from its _test.go files, and never a tool program under cmd/.
//
// It must not know what any package does; it reads import lines only.
package layout
