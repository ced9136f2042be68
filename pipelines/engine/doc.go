// Package pipelines is the run: spec -> plan (shards, cell blocks) -> stages wired
// by bounded channels (read -> sea state and per-cell state -> extremes fits ->
// export) -> checkpoints -> merge. It also writes the built-in synthetic demo and
// cluster job scripts.
//
// pipelines wires the other packages; it holds no formula of its own.
package engine
