// Package engine is the run: a resolved spec -> the catalog -> a plan
// (shards, passes of cells that fit the memory budget) -> stages wired by
// bounded channels (read -> sea state and per-cell state -> extremes fits ->
// tables) -> checkpoints -> contours, manifest, screening and products; and a
// sharded run's merge, an update with new files, the sizing of shards.
//
// engine wires the other packages; its formulas live in stats (the sea
// state, the per-cell statistics, the fits) and its outputs' names in
// export/contract. It must not know the command line, the cluster's
// scheduler, the demo or how stations are validated.
package engine
