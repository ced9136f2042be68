package engine

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/lock"
	"swellgrid/pipelines/runspec"
)

// An incremental update (Options.Update) continues a finished run with the
// input files that are new. The saved final states are exactly the states
// after the earlier files, and every accumulator is mergeable, so adding the
// new files' steps to them gives the states — and hence the tables — of a
// full run over all files. This holds only when the earlier files and the
// spec are unchanged; checkUpdate refuses otherwise and says what changed.

// updatePlan is what an accepted update continues from.
type updatePlan struct {
	passes  [][2]int         // the saved states' cell ranges
	earlier int              // number of earlier input files (verified by checksum)
	shard   *Shard           // the directory is a shard (nil: a whole run)
	lo, hi  int              // cells covered
	prior   []contract.Input // the earlier run's inputs
}

// updateRefused says why an update cannot continue the earlier run.
type updateRefused struct{ dir, why string }

func (e *updateRefused) Error() string {
	return fmt.Sprintf("cannot update %s: %s", e.dir, e.why)
}

// IsUpdateRefused reports whether err is a refused update (exit code 2).
func IsUpdateRefused(err error) bool {
	var r *updateRefused
	return errors.As(err, &r)
}

// priorRun is what a finished run directory says about its inputs and spec.
type priorRun struct {
	inputs    []contract.Input
	spec      json.RawMessage
	shard     *ShardManifest
	durations ingest.Durations // empty in a run made before durations were recorded
	steps     int
	stepSecs  int64
}

func readPriorRun(dir string) (*priorRun, error) {
	if _, err := os.Stat(filepath.Join(dir, shardFile)); err == nil {
		m, err := readShardManifest(dir)
		if err != nil {
			return nil, err
		}
		b, _ := json.Marshal(m.Spec)
		return &priorRun{inputs: m.Inputs, spec: b, shard: m, durations: m.StepDurations}, nil
	}
	path := filepath.Join(dir, "manifest.json")
	if _, err := os.Lstat(path); errors.Is(err, os.ErrNotExist) {
		return nil, &updateRefused{dir, "it holds no finished run (no manifest.json or shard.json); run without --update first, or finish the earlier run by rerunning it"}
	}
	b, err := rundir.ReadManifest(dir) // proved against its seal; these bytes are the ones read
	if err != nil {
		return nil, fault.Input(err)
	}
	var m struct {
		Inputs        []contract.Input `json:"inputs"`
		Parameters    json.RawMessage  `json:"parameters"`
		Steps         int              `json:"steps"`
		StepSeconds   int64            `json:"step_seconds"`
		StepDurations ingest.Durations `json:"step_durations"`
	}
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return &priorRun{inputs: m.Inputs, spec: m.Parameters, durations: m.StepDurations, steps: m.Steps, stepSecs: m.StepSeconds}, nil
}

// checkUpdate checks that the run in dir can be continued with the catalog
// cat under spec: same spec fingerprint, every earlier file present first,
// with the same size, and final states for every cell. It reads and writes
// nothing else; the earlier files' contents are compared by
// inputContentChanges once their checksums are known.
func checkUpdate(dir string, spec *runspec.Resolved, cat *ingest.Catalog, sh *Shard) (*updatePlan, error) {
	prior, err := readPriorRun(dir)
	if err != nil {
		return nil, err
	}
	up := &updatePlan{earlier: len(prior.inputs), lo: 0, hi: cat.Grid.NCells(), prior: prior.inputs}
	if prior.shard != nil {
		s := Shard{Index: prior.shard.Shard, Count: prior.shard.Shards}
		if sh != nil && *sh != s {
			return nil, &updateRefused{dir, fmt.Sprintf("it is shard %s, not shard %s; give --shard %s or leave --shard out", s, sh, s)}
		}
		up.shard, up.lo, up.hi = &s, prior.shard.C0, prior.shard.C1
	} else if sh != nil {
		return nil, &updateRefused{dir, fmt.Sprintf("it is a whole run, not a shard; leave --shard %s out", sh)}
	}
	fp := spec.Fingerprint()
	_, hs, err := passCheckpoints(dir)
	if err != nil {
		return nil, err
	}
	if len(hs) == 0 {
		return nil, &updateRefused{dir, fmt.Sprintf("its saved per-cell states (%s/pass-*.ckpt) are missing; an update needs them, so run over all files without --update", filepath.Join(dir, lock.StateDir))}
	}
	for _, h := range hs {
		if h.Fingerprint != fp {
			what := specChanges(prior.spec, spec.Spec)
			if len(h.Spec) > 0 {
				what = fingerprintChanges(h.Spec, spec)
			}
			return nil, &updateRefused{dir, "the spec changed since the earlier run (" + what + "); results would mix two specs, so run over all files into a new directory instead"}
		}
		if h.NextFile < len(prior.inputs) {
			return nil, &updateRefused{dir, fmt.Sprintf("the saved states of cells %d..%d hold only %d of the earlier run's %d files; rerun the earlier run to finish it", h.C0, h.C1-1, h.NextFile, len(prior.inputs))}
		}
		up.passes = append(up.passes, [2]int{h.C0, h.C1})
	}
	if why := tiles(up.passes, up.lo, up.hi); why != "" {
		return nil, &updateRefused{dir, "its saved states do not cover the run's cells: " + why}
	}
	if why := inputChanges(prior.inputs, cat, nil); why != "" {
		return nil, &updateRefused{dir, why}
	}
	if why := durationChanges(prior, cat); why != "" {
		return nil, &updateRefused{dir, why + "; run over all files into a new directory"}
	}
	return up, nil
}

// durationChanges says why the steps the saved states were fed would not
// keep their durations with the new files ("" when they do): the states
// hold each step weighted by its duration, and a step's duration is the
// time until the next step, so the new files must begin after the earlier
// record's last step and leave the earlier durations as they were.
func durationChanges(prior *priorRun, cat *ingest.Catalog) string {
	old := prior.durations
	if old.SHA256 == "" {
		if prior.stepSecs <= 0 || prior.steps <= 0 {
			return "" // nothing recorded to compare (a shard of an earlier version): the states' checksums still guard them
		}
		old.Steps = prior.steps
	}
	if e := len(prior.inputs); e < len(cat.Files) && cat.Files[e].Offset != old.Steps {
		return fmt.Sprintf("the new file %s begins at step %d of the record, but the earlier run read %d steps (a time held by two files is read from the later one: input.duplicate_steps = \"last\"?)", cat.Files[e].Path, cat.Files[e].Offset, old.Steps)
	}
	return cat.DurationsChange(old, prior.stepSecs)
}

// inputContentChanges is inputChanges with the checksums sums of the
// catalog's files.
func inputContentChanges(old []contract.Input, cat *ingest.Catalog, sums []string) string {
	return inputChanges(old, cat, sums)
}

// inputChanges compares the earlier run's inputs with the new catalog: the
// earlier files must come first, in the same order, unchanged (by content
// too when sums, the checksums of the catalog's files, is not nil).
func inputChanges(old []contract.Input, cat *ingest.Catalog, sums []string) string {
	now := map[string]int{}
	for i, f := range cat.Files {
		now[ingest.PathText(absPath(f.Path))] = i
	}
	for i, o := range old {
		p := absPath(o.Path)
		j, ok := now[p]
		switch {
		case !ok:
			return fmt.Sprintf("the earlier input %s is not among the inputs now; an update must be given every earlier file plus the new ones", o.Path)
		case j != i:
			return fmt.Sprintf("the new file %s lies within the earlier record (before %s, which ends %s); an update only adds files later in time, so run over all files into a new directory", cat.Files[i].Path, o.Path, old[len(old)-1].Last)
		case cat.Files[j].Size != o.Size:
			return fmt.Sprintf("the earlier input %s changed size (%d bytes then, %d now); run over all files into a new directory", o.Path, o.Size, cat.Files[j].Size)
		case sums != nil && sums[j] != o.SHA256:
			return fmt.Sprintf("the earlier input %s changed content (SHA-256 %s then, %s now); run over all files into a new directory", o.Path, short(o.SHA256), short(sums[j]))
		}
	}
	return ""
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12] + "…"
	}
	return h
}

// fingerprintChanges names what differs between a recorded fingerprinted
// spec (ckHeader.Spec) and spec: the settings sections, and the files named
// by the spec whose content changed.
func fingerprintChanges(prior json.RawMessage, spec *runspec.Resolved) string {
	var old struct {
		Spec  map[string]json.RawMessage `json:"spec"`
		Files map[string]string          `json:"files"`
	}
	if spec == nil || len(prior) == 0 || json.Unmarshal(prior, &old) != nil {
		return "the earlier settings are not recorded"
	}
	now := spec.Fingerprinted()
	b, _ := json.Marshal(now.Spec)
	sec := map[string]json.RawMessage{}
	json.Unmarshal(b, &sec)
	var diff []string
	for _, k := range slices.Sorted(maps.Keys(sec)) {
		if !bytes.Equal(old.Spec[k], sec[k]) {
			diff = append(diff, k)
		}
	}
	for _, k := range slices.Sorted(maps.Keys(old.Spec)) {
		if _, ok := sec[k]; !ok {
			diff = append(diff, k)
		}
	}
	var files []string
	for _, n := range spec.Named {
		if o, ok := old.Files[n.Key]; !ok {
			files = append(files, fmt.Sprintf("%s %s is new", n.Key, n.Path))
		} else if o != n.SHA256 {
			files = append(files, fmt.Sprintf("the content of %s %s (SHA-256 %s then, %s now)", n.Key, n.Path, short(o), short(n.SHA256)))
		}
	}
	for _, k := range slices.Sorted(maps.Keys(old.Files)) {
		if _, ok := now.Files[k]; !ok {
			files = append(files, k+" is no longer given")
		}
	}
	var parts []string
	if len(diff) > 0 {
		parts = append(parts, "changed settings: "+strings.Join(diff, ", "))
	}
	parts = append(parts, files...)
	if len(parts) == 0 {
		return "the settings are recorded alike, but the fingerprint differs"
	}
	return strings.Join(parts, "; ")
}

// specChanges names the spec sections that differ between the earlier run's
// recorded spec and spec (ignoring the input paths, output directory and run
// settings, as Fingerprint does).
func specChanges(prior json.RawMessage, spec *runspec.Spec) string {
	var old runspec.Spec
	if len(prior) == 0 || json.Unmarshal(prior, &old) != nil {
		return "the earlier spec is not recorded"
	}
	sections := func(s *runspec.Spec) map[string]json.RawMessage {
		c := *s
		c.Output, c.Input.Paths, c.Run = runspec.OutputSpec{}, nil, runspec.RunSpec{}
		b, _ := json.Marshal(&c)
		m := map[string]json.RawMessage{}
		json.Unmarshal(b, &m)
		return m
	}
	a, b := sections(&old), sections(spec)
	var diff []string
	for k := range b {
		if !bytes.Equal(a[k], b[k]) {
			diff = append(diff, k)
		}
	}
	for k := range a {
		if _, ok := b[k]; !ok {
			diff = append(diff, k)
		}
	}
	sort.Strings(diff)
	if len(diff) == 0 {
		return "the settings are recorded alike, but the fingerprint differs: a power-matrix or bathymetry path may be spelled differently"
	}
	return "changed: " + strings.Join(diff, ", ")
}
