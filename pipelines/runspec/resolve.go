package runspec

import "fmt"

// Resolved is a spec checked and resolved once for a run: the files it
// names read (power matrices, bathymetry, screening layers) with their
// checksums, and its execution settings typed. What the run uses of a spec
// is here or in the Spec itself; nothing is hidden in either.
type Resolved struct {
	*Spec
	// Named are the files the spec names, by key ("device[0].power_matrix",
	// "depth.bathymetry_file", "screening.layer[0].file"), with their
	// SHA-256 (in the fingerprint); a power matrix keeps its bytes.
	Named []NamedFile
	// Layers are the screening layers, read and checked.
	Layers []*ScreenLayer
	// Exec is how the run executes: [run], sizes parsed.
	Exec Exec
}

// Exec is a run's execution settings ([run] with the command line's
// overrides), resolved: they change neither results nor bytes.
type Exec struct {
	Workers     int    // compute workers (0: one per core)
	MemoryBytes int64  // run.memory_limit in bytes
	MemoryText  string // run.memory_limit as written, for messages
	BlockSteps  int    // time steps per block read
	// CheckpointEveryS: seconds between checkpoints during a pass (0: after
	// every file).
	CheckpointEveryS float64
}

// Resolve checks the spec (Validate, which reads no file), reads the files
// it names within their limits and parses its execution settings. A spec is
// resolved once, before anything is computed.
func (s *Spec) Resolve() (*Resolved, error) {
	if err := s.Validate(); err != nil {
		return nil, err
	}
	named, err := s.readNamedFiles()
	if err != nil {
		return nil, err
	}
	layers, lnamed, err := s.readScreenLayers()
	if err != nil {
		return nil, err
	}
	mem, err := ParseSize(s.Run.MemoryLimit)
	if err != nil { // checked by Validate
		return nil, fmt.Errorf("spec: run.memory_limit = %q: %w", s.Run.MemoryLimit, err)
	}
	return &Resolved{Spec: s, Named: append(named, lnamed...), Layers: layers,
		Exec: Exec{Workers: s.Run.Workers, MemoryBytes: mem, MemoryText: s.Run.MemoryLimit, BlockSteps: s.Run.BlockSteps, CheckpointEveryS: s.Run.CheckpointEveryS}}, nil
}
