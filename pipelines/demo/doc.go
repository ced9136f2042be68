// Package demo is `swellgrid demo`: it writes the invented, synthetic
// scenario (pipelines/synth, labelled synthetic in every file), runs the
// whole job on it three times (bulk grid, spectral points, mesh) and
// validates the grid atlas against an invented station. It holds no
// statistic and no output format of its own.
package demo
