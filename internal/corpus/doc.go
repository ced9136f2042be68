// Package corpus generates swellgrid's corpus of malformed and hostile inputs:
// NetCDF files with broken coordinates, time axes, units, values and
// dimensions, files that are not NetCDF at all, bad run specs and bad power
// matrices. Each Case says what it breaks and what the tool must do with it:
// process the input and flag the problem, or refuse it with a message that
// names the file, the variable and the fix, and exit with the documented code.
//
// Every file is written by code here from invented, synthetic values (global
// attribute synthetic = "yes"); nothing is a hand-edited binary or real data.
// The reliability tests (cmd/swellgrid) run the built binary over the corpus;
// cmd/mkcorpus writes it into a directory.
//
// It is test tooling: corpus writes files only; it knows nothing of the run,
// the statistics or the outputs (it imports no other swellgrid package), and
// no product package (ingest, grid, stats, export, pipelines, cmd/swellgrid)
// imports it outside its _test.go files.
package corpus
