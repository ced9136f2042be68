// Package runspec is the run spec: its TOML, its defaults, Validate (which
// reads no file and names the key of every refusal, Error), Resolve (the
// files it names read within their limits, the execution settings typed)
// and the mapping to the settings of ingest, stats/climate and
// stats/extremes. It must not know how a run executes or what it writes.
package runspec
