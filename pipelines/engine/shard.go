package engine

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
)

// Shard selects share Index of Count (1-based) of a run's cells. Shares are
// contiguous ranges of canonical cell ids; on structured grids they hold whole
// rows, so each shard reads whole rows of every file.
type Shard struct {
	Index, Count int
}

// ParseShard reads "I/N" (1 <= I <= N), as given to --shard.
func ParseShard(s string) (Shard, error) {
	a, b, ok := strings.Cut(strings.TrimSpace(s), "/")
	i, err1 := strconv.Atoi(strings.TrimSpace(a))
	n, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil || n < 1 || i < 1 || i > n {
		return Shard{}, fmt.Errorf("--shard %q: give I/N with 1 <= I <= N, e.g. --shard 2/8 (the share of the cells this process runs)", s)
	}
	return Shard{Index: i, Count: n}, nil
}

func (s Shard) String() string { return fmt.Sprintf("%d/%d", s.Index, s.Count) }

// Cells returns the shard's cell range c0..c1-1 on grid g: blocks
// B*(I-1)/N .. B*I/N-1 of the grid's B cell blocks (blocks.go: whole rows of
// a structured grid, or a share of the points of a point set), so that its
// tables' row groups are those of the single run.
func (s Shard) Cells(g *grid.Grid) (c0, c1 int, err error) {
	b := blocksOf(g)
	unit := "row"
	if !g.Structured() {
		unit = "point"
	}
	if s.Count < 1 || s.Index < 1 || s.Index > s.Count {
		return 0, 0, fmt.Errorf("shard %s: the index must lie in 1..%d", s, s.Count)
	}
	if s.Count > b.n {
		return 0, 0, fmt.Errorf("shard %s: the grid has only %d %s, so at most %d shards; use fewer shards", s, b.n, b.what(unit), b.n)
	}
	c0, c1 = b.shard(s.Index, s.Count)
	return c0, c1, nil
}

// shardFile is the name of a shard directory's manifest, sealed by its
// SHA-256 in shardSeal (export.SealFiles; merge and --update prove it).
const (
	shardFile = "shard.json"
	shardSeal = contract.StateDir + "/shard.sha256"
)

// ShardManifest is shard.json: what a shard run covered and with what, so
// that Merge can check the shards belong together. The final per-cell states
// are the pass checkpoints in the shard's .swellgrid folder.
type ShardManifest struct {
	Software    string           `json:"software"`
	Version     string           `json:"version"`
	Shard       int              `json:"shard"`
	Shards      int              `json:"shards"`
	C0          int              `json:"cell_first"`
	C1          int              `json:"cell_end"` // exclusive
	GridCells   int              `json:"grid_cells"`
	Passes      [][2]int         `json:"passes"`
	Fingerprint string           `json:"spec_fingerprint"`
	Inputs      []contract.Input `json:"inputs"`
	// StepDurations identifies the durations the steps were weighted by.
	StepDurations ingest.Durations `json:"step_durations"`
	Spec          *runspec.Spec    `json:"spec"`
	// Tables are the shard's rows of every table (files in the shard
	// directory, row groups ending at the grid's cell blocks) with their
	// sizes and SHA-256, which Merge checks before assembling them.
	Tables []contract.FileSum `json:"tables"`
	WallS  float64            `json:"wall_s"`
	// Timings are the shard's stage times in seconds, as a run manifest's
	// timings_s (catalog, stream with its busy and waiting times, fit,
	// export), to size a sharded run from one measured shard.
	Timings map[string]float64 `json:"timings_s,omitempty"`
	Note    string             `json:"note"`
}

// writeShard finishes a shard run: it writes shard.json beside the final
// states and the shard's tables (tables, relative to out).
func writeShard(out string, spec *runspec.Resolved, cat *ingest.Catalog, sh Shard, c0, c1 int, passes [][2]int, sums []string, tables []string, version string, t0 time.Time, timings map[string]float64) (*Result, error) {
	ts, err := export.OutputChecksums(out, tables)
	if err != nil {
		return nil, fault.Output(err)
	}
	st := *spec.Spec
	st.Input.Paths = absPaths(spec.Input.Paths)
	m := &ShardManifest{Software: "swellgrid", Version: version, Shard: sh.Index, Shards: sh.Count, C0: c0, C1: c1,
		GridCells: cat.Grid.NCells(), Passes: passes, Fingerprint: spec.Fingerprint(), Spec: &st, StepDurations: cat.DurationsOf(cat.Steps),
		Tables: ts, WallS: time.Since(t0).Seconds(), Timings: timings,
		Note: "a shard of a swellgrid run: its cells' rows of every table are beside this file, its per-cell states in .swellgrid/; combine all shards with `swellgrid merge --out DIR SHARD_DIR...`"}
	for i, f := range cat.Files {
		m.Inputs = append(m.Inputs, contract.Input{Path: ingest.PathText(absPath(f.Path)), Size: f.Size, SHA256: sums[i], First: f.From, Last: f.To, Steps: f.Steps})
	}
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return nil, err
	}
	path := filepath.Join(out, shardFile)
	if err := export.WriteFileAtomic(path, func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	}); err != nil {
		return nil, fault.Output(fmt.Errorf("writing %s: %w", path, err))
	}
	if err := export.SealFiles(out, shardSeal, shardFile); err != nil {
		return nil, fault.Output(fmt.Errorf("sealing %s: %w", path, err))
	}
	return &Result{OutDir: out, Files: append(tables, shardFile), Cells: c1 - c0, Steps: cat.Steps, Warnings: cat.Warnings, Wall: time.Since(t0)}, nil
}

// readShardManifest reads a shard directory's shard.json.
func readShardManifest(dir string) (*ShardManifest, error) {
	path := filepath.Join(dir, shardFile)
	b, err := os.ReadFile(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("%s is not a finished shard: it has no %s (run `swellgrid run --shard I/N --out %s` first, or wait for it to finish)", dir, shardFile, dir)
		}
		return nil, err
	}
	if err := rundir.ProveSealed(dir, shardSeal, shardFile); err != nil {
		return nil, fault.Input(err)
	}
	var m ShardManifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if m.Spec == nil || m.Shards < 1 {
		return nil, fmt.Errorf("%s: not a swellgrid shard manifest", path)
	}
	return &m, nil
}

func absPath(p string) string {
	if a, err := filepath.Abs(p); err == nil {
		return a
	}
	return p
}

func absPaths(ps []string) []string {
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = absPath(p)
	}
	return out
}

// passCheckpoints lists the pass checkpoints of a run or shard directory with
// their headers, ordered by first cell.
func passCheckpoints(dir string) ([]string, []*ckHeader, error) {
	paths, _ := filepath.Glob(filepath.Join(dir, lock.StateDir, "pass-*.ckpt"))
	var hs []*ckHeader
	for _, p := range paths {
		h, _, f, err := readCkHeader(p)
		if err != nil {
			return nil, nil, err
		}
		f.Close()
		hs = append(hs, h)
	}
	idx := make([]int, len(paths))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return hs[idx[a]].C0 < hs[idx[b]].C0 })
	sp, sh := make([]string, len(idx)), make([]*ckHeader, len(idx))
	for i, j := range idx {
		sp[i], sh[i] = paths[j], hs[j]
	}
	return sp, sh, nil
}

// tiles reports "" when the ranges (sorted by start) cover lo..hi-1 exactly
// once, or says where they do not.
func tiles(ranges [][2]int, lo, hi int) string {
	at := lo
	for _, r := range ranges {
		switch {
		case r[0] > at:
			return fmt.Sprintf("cells %d..%d are in no state file", at, r[0]-1)
		case r[0] < at:
			return fmt.Sprintf("cells %d..%d are in two state files", r[0], min(at, r[1])-1)
		}
		at = r[1]
	}
	if at < hi {
		return fmt.Sprintf("cells %d..%d are in no state file", at, hi-1)
	}
	if at > hi {
		return fmt.Sprintf("the state files reach cell %d beyond the last cell %d", at-1, hi-1)
	}
	return ""
}

// removeStaleCheckpoints deletes pass checkpoints of dir that are not one of
// passes (left from an earlier plan), so that the folder holds exactly the
// final states of the run.
func removeStaleCheckpoints(dir string, passes [][2]int) error {
	keep := map[string]bool{}
	for _, p := range passes {
		keep[ckPath(dir, p[0], p[1])] = true
	}
	paths, _ := filepath.Glob(filepath.Join(dir, lock.StateDir, "pass-*.ckpt"))
	for _, p := range paths {
		if !keep[p] {
			if err := os.Remove(p); err != nil {
				return fmt.Errorf("removing the stale checkpoint %s: %w", p, err)
			}
		}
	}
	return nil
}
