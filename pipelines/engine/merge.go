package engine

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// Merge combines the shard directories written by runs with Options.Shard
// into the normal outputs in out: it checks that the shards were run with the
// same spec over the same, unchanged inputs and cover every cell exactly
// once, and that their tables are those shard.json lists (size and SHA-256);
// then it assembles every table from the shards' row groups, without
// refitting (the shards fitted their cells and wrote their rows at the
// grid's cell blocks, so the tables are byte-identical to a single-process
// run), and computes what needs every cell: contours, products, manifest.
// The shards' final states are copied to out/.swellgrid, so that the merged
// run can later be updated (Options.Update) like any run. opt.Restart and
// opt.Shard are not used.
func Merge(ctx context.Context, out string, shardDirs []string, opt Options) (*Result, error) {
	j, parts, err := validateMerge(ctx, out, shardDirs, opt)
	if err != nil {
		return nil, err
	}
	unlock, err := j.lock()
	if err != nil {
		return nil, err
	}
	defer unlock()
	if opt.LimitProcess {
		j.mem.applyToProcess()
	}
	defer j.abortSink()
	// Each pass of each shard: its state file's seal and header checked
	// (not its states, which the merge does not need), its counts taken,
	// the file copied into out/.swellgrid so that the merged run can be
	// updated.
	ts := time.Now()
	for pi, pt := range parts {
		p := j.passes[pi]
		r, err := openStates(pt.src, pt.want, len(j.ids), j.eng.newCell)
		if err != nil {
			if IsResumeRefused(err) || errors.Is(err, os.ErrNotExist) {
				return nil, fault.Input(fmt.Errorf("merge: shard %d/%d in %s: %w", pt.m.Shard, pt.m.Shards, pt.dir, err))
			}
			return nil, err
		}
		j.seen[pi] = ingest.TallyOf(r.h.Seen) // the shard's counts: CheckTally sees every cell
		next := r.h.NextFile
		r.close()
		if next != len(j.cat.Files) {
			return nil, fault.Input(fmt.Errorf("merge: shard %d/%d in %s has read %d of %d files; rerun it to finish", pt.m.Shard, pt.m.Shards, pt.dir, next, len(j.cat.Files)))
		}
		if err := copyFile(pt.src, ckPath(j.out, p[0], p[1])); err != nil {
			return nil, fault.Output(fmt.Errorf("merge: saving the states in %s: %w", j.out, err))
		}
	}
	j.mark("load_s", ts)
	// Every shard's counts are in: a role variable without data in any
	// cell is refused before a table is put in place.
	if err := j.checkData(); err != nil {
		return nil, fault.Input(err)
	}
	if err := removeStaleCheckpoints(j.out, j.passes); err != nil {
		return nil, fault.Output(err)
	}
	ts = time.Now()
	hold(ctx, "fit") // where a run fits: the merge assembles
	if err := j.openSink(); err != nil {
		return nil, err
	}
	for _, pt := range parts {
		if !pt.lastOfShard {
			continue
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if err := j.sink.assemble(ctx, pt.dir, pt.m.C0, pt.m.C1); err != nil {
			return nil, fault.Output(fmt.Errorf("merge: shard %d/%d in %s: %w", pt.m.Shard, pt.m.Shards, pt.dir, err))
		}
		j.log.Info("merged", "dir", pt.dir, "shard", fmt.Sprintf("%d/%d", pt.m.Shard, pt.m.Shards), "cells", pt.m.C1-pt.m.C0)
	}
	j.mark("assemble_s", ts)
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	sums := make([]string, len(parts[0].m.Inputs))
	for i, in := range parts[0].m.Inputs {
		sums[i] = in.SHA256
	}
	return j.export(ctx, sums)
}

// mergePart is one pass of one shard: the state file a merge loads.
type mergePart struct {
	dir         string
	m           *ShardManifest
	p           [2]int
	src         string   // the shard's state file
	want        ckHeader // what its header must say
	lastOfShard bool
}

// validateMerge is the validate stage of Merge: the shards belong together,
// their spec reproduces its fingerprint, the inputs are those the shards
// read, unchanged, and every state file says so in its header. Nothing is
// written.
func validateMerge(ctx context.Context, out string, shardDirs []string, opt Options) (*job, []mergePart, error) {
	t0 := time.Now()
	if len(shardDirs) == 0 {
		return nil, nil, fault.Input(errors.New("merge: no shard directories given"))
	}
	ms := make([]*ShardManifest, len(shardDirs))
	for i, d := range shardDirs {
		if absPath(d) == absPath(out) {
			return nil, nil, fault.Input(fmt.Errorf("merge: the output directory %s is one of the shards; choose another --out", out))
		}
		m, err := readShardManifest(d)
		if err != nil {
			return nil, nil, fault.Input(err)
		}
		ms[i] = m
	}
	order := make([]int, len(ms))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return ms[order[a]].Shard < ms[order[b]].Shard })
	if why := shardsBelongTogether(shardDirs, ms, order); why != "" {
		return nil, nil, fault.Input(errors.New("merge: " + why))
	}
	first := ms[order[0]]
	spec := *first.Spec
	spec.Output.Dir = out
	if spec.Run.MemoryLimit == "" {
		spec.Run.MemoryLimit = runspec.DefaultSpec().Run.MemoryLimit
	}
	rs, err := resolveSpec(&spec, opt)
	if err != nil {
		return nil, nil, fault.Input(fmt.Errorf("merge: the shards' spec: %w", err))
	}
	if fp := rs.Fingerprint(); fp != first.Fingerprint {
		// The shards' state files record what the fingerprint hashed.
		if len(first.Passes) > 0 {
			p := first.Passes[0]
			if h, _, f, err := readCkHeader(ckPath(shardDirs[order[0]], p[0], p[1])); err == nil {
				f.Close()
				if len(h.Spec) > 0 {
					return nil, nil, fault.Input(fmt.Errorf("merge: the spec or a file it names changed since the shards ran (%s); rerun the shards", fingerprintChanges(h.Spec, rs)))
				}
			}
		}
		return nil, nil, fault.Input(fmt.Errorf("merge: the spec recorded in %s does not reproduce its fingerprint (software version %s); rerun the shards with this version", filepath.Join(shardDirs[order[0]], shardFile), first.Version))
	}
	ts := time.Now()
	cat, err := openCatalog(ctx, rs)
	if err != nil {
		return nil, nil, fault.Input(fmt.Errorf("merge: the shards' inputs: %w", err))
	}
	if len(cat.Files) != len(first.Inputs) {
		return nil, nil, fault.Input(fmt.Errorf("merge: the shards read %d input files, the inputs %v hold %d now; merge before adding files, then use run --update", len(first.Inputs), spec.Input.Paths, len(cat.Files)))
	}
	for i, f := range cat.Files {
		in := first.Inputs[i]
		if absPath(f.Path) != in.Path || f.Size != in.Size {
			return nil, nil, fault.Input(fmt.Errorf("merge: input %s changed since the shards ran (the shards read %s, %d bytes); rerun the shards", f.Path, in.Path, in.Size))
		}
	}
	if first.GridCells != cat.Grid.NCells() {
		return nil, nil, fault.Input(fmt.Errorf("merge: the shards were run on a grid of %d cells, the inputs have %d", first.GridCells, cat.Grid.NCells()))
	}
	j, err := newJob(rs, opt, cat, t0)
	if err != nil {
		return nil, nil, err
	}
	j.mark("catalog_s", ts)
	if j.mem, err = j.eng.planMergeBudget(); err != nil {
		return nil, nil, fault.Input(err)
	}
	if err := checkProductBudget(j.spec.Exec.MemoryBytes, j.spec.Exec.MemoryText, j.cat.Grid.NCells(), productsOf(j.spec)); err != nil {
		return nil, nil, fault.Input(err)
	}
	j.fitChunk = j.mem.fitChunk
	var parts []mergePart
	for _, k := range order {
		dir, m := shardDirs[k], ms[k]
		for i, p := range m.Passes {
			pt := mergePart{dir: dir, m: m, p: p, src: ckPath(dir, p[0], p[1]), lastOfShard: i == len(m.Passes)-1,
				want: ckHeader{Fingerprint: m.Fingerprint, Inputs: j.ids, C0: p[0], C1: p[1], spec: j.spec}}
			// The inputs were matched by path and size to the shard's
			// manifest above; here their modification times are compared
			// with those the shard saw (paths may be spelled differently).
			if why := sameFileTimes(pt.src, j.ids); why != "" {
				return nil, nil, fault.Input(fmt.Errorf("merge: shard %d/%d in %s: %s; rerun the shards", m.Shard, m.Shards, dir, why))
			}
			parts = append(parts, pt)
			j.passes = append(j.passes, p)
		}
		if why := shardTablesIntact(dir, m, j.eng.tableFiles()); why != "" {
			return nil, nil, fault.Input(fmt.Errorf("merge: shard %d/%d in %s: %s", m.Shard, m.Shards, dir, why))
		}
	}
	return j, parts, nil
}

// shardTablesIntact says "" when the shard in dir holds the tables want,
// each of the size and SHA-256 its shard.json records, or what is wrong.
func shardTablesIntact(dir string, m *ShardManifest, want []string) string {
	if len(m.Tables) == 0 {
		return fmt.Sprintf("it holds no tables (a shard of swellgrid %s, which kept only its states); rerun the shard with this version", m.Version)
	}
	have := map[string]contract.FileSum{}
	for _, t := range m.Tables {
		have[t.Path] = t
	}
	for _, name := range want {
		t, ok := have[name]
		if !ok {
			return fmt.Sprintf("its %s lists no table %s; rerun the shard", shardFile, name)
		}
		got, err := export.OutputChecksums(dir, []string{name})
		if err != nil {
			return fmt.Sprintf("its table %s cannot be read (%v); rerun the shard", name, err)
		}
		if g := got[0]; g.Size != t.Size || g.SHA256 != t.SHA256 {
			return fmt.Sprintf("its table %s is damaged or changed since the shard wrote it (%d bytes, SHA-256 %s; %s records %d bytes, SHA-256 %s); rerun the shard", filepath.Join(dir, name), g.Size, short(g.SHA256), shardFile, t.Size, short(t.SHA256))
		}
	}
	return ""
}

// shardsBelongTogether reports "" when the shards (in order, sorted by
// index) are shards 1..N of one run with one spec over the same inputs,
// covering every cell exactly once, or says what is wrong.
func shardsBelongTogether(dirs []string, ms []*ShardManifest, order []int) string {
	first := ms[order[0]]
	n := first.Shards
	seen := map[int]string{}
	for _, k := range order {
		m, d := ms[k], dirs[k]
		if m.Shards != n {
			return fmt.Sprintf("%s is shard %d of %d, %s is shard %d of %d: all shards must come from one split", d, m.Shard, m.Shards, dirs[order[0]], first.Shard, n)
		}
		if o, dup := seen[m.Shard]; dup {
			return fmt.Sprintf("%s and %s are both shard %d/%d", o, d, m.Shard, n)
		}
		seen[m.Shard] = d
		if m.Fingerprint != first.Fingerprint {
			return fmt.Sprintf("%s and %s were run with different specs (fingerprints %s, %s); rerun them with one spec", dirs[order[0]], d, short(first.Fingerprint), short(m.Fingerprint))
		}
		if why := sameInputs(first.Inputs, m.Inputs); why != "" {
			return fmt.Sprintf("%s and %s read different inputs: %s", dirs[order[0]], d, why)
		}
		if why := tiles(m.Passes, m.C0, m.C1); why != "" {
			return fmt.Sprintf("%s: its state files do not cover its cells: %s", d, why)
		}
	}
	var missing []string
	for i := 1; i <= n; i++ {
		if _, ok := seen[i]; !ok {
			missing = append(missing, fmt.Sprintf("%d/%d", i, n))
		}
	}
	if len(missing) > 0 {
		return fmt.Sprintf("shard %s missing; give every shard directory", strings.Join(missing, ", "))
	}
	ranges := make([][2]int, 0, len(order))
	for _, k := range order {
		ranges = append(ranges, [2]int{ms[k].C0, ms[k].C1})
	}
	if why := tiles(ranges, 0, first.GridCells); why != "" {
		return "the shards do not cover the grid: " + why
	}
	return ""
}

func sameInputs(a, b []contract.Input) string {
	if len(a) != len(b) {
		return fmt.Sprintf("%d files against %d", len(a), len(b))
	}
	for i := range a {
		if a[i].Path != b[i].Path || a[i].Size != b[i].Size || a[i].SHA256 != b[i].SHA256 {
			return fmt.Sprintf("file %d is %s (%d bytes, SHA-256 %s) against %s (%d bytes, SHA-256 %s)", i+1, a[i].Path, a[i].Size, short(a[i].SHA256), b[i].Path, b[i].Size, short(b[i].SHA256))
		}
	}
	return ""
}

// copyFile copies src to dst (in the run's state folder, which the lock
// made) atomically, as a hard link where the file system allows
// (checkpoints are replaced by rename, never rewritten in place, so a link
// is safe). The link gets a unique temporary name (a link never replaces an
// existing name) and is renamed only over a dst that is not a symbolic link
// (export.RenameInto).
func copyFile(src, dst string) error {
	if err := export.LinkInto(src, dst); err == nil || export.IsLink(err) {
		return err
	}
	f, err := os.Open(src)
	if err != nil {
		return err
	}
	defer f.Close()
	return export.WriteFileAtomic(dst, func(w io.Writer) error {
		_, err := io.Copy(w, f)
		return err
	})
}

// sameFileTimes compares the size and modification time of each input as the
// checkpoint at path recorded them with ids, by position.
func sameFileTimes(path string, ids []inputID) string {
	h, _, f, err := readCkHeader(path)
	if err != nil {
		return err.Error()
	}
	f.Close()
	for i, id := range ids {
		if i >= len(h.Inputs) {
			return fmt.Sprintf("its states do not record input %s", id.Path)
		}
		if h.Inputs[i].Size != id.Size || h.Inputs[i].MTime != id.MTime {
			return fmt.Sprintf("input %s changed (size or modification time) since the shard read it", id.Path)
		}
	}
	return ""
}
