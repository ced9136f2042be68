package engine

import (
	"context"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"swellgrid/pipelines/fault"
	"testing"
)

// flipPositions returns n distinct byte positions of a file of size bytes,
// seeded so that a failure can be reproduced.
func flipPositions(seed uint64, size, n int) []int {
	r := rand.New(rand.NewPCG(seed, 0x5ea1))
	seen := map[int]bool{}
	var out []int
	for len(out) < n && len(out) < size {
		p := r.IntN(size)
		if !seen[p] {
			seen[p] = true
			out = append(out, p)
		}
	}
	return out
}

// damage writes a copy of good with byte p altered (xor with a non-zero
// seeded mask) to path.
func damage(t *testing.T, good []byte, path string, p int, r *rand.Rand) {
	t.Helper()
	b := append([]byte(nil), good...)
	b[p] ^= byte(1 + r.IntN(255))
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// A checkpoint with any byte altered, or cut short, is refused as damaged
// (bad input, with the advice to --restart) and none of its states is
// loaded; the undamaged file loads.
func TestDamagedCheckpointRefused(t *testing.T) {
	out := t.TempDir()
	s := testSpec(t, "testdata/points_bulk.nc", out)
	mustRun(t, s)
	j, err := validateRun(context.Background(), s, Options{})
	if err != nil {
		t.Fatal(err)
	}
	p := j.passes[0]
	path := ckPath(out, p[0], p[1])
	good, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if cells, next, err := loadCheckpointTrusting(path, hashedWant(t, j, p), 0, j.eng.newCell); err != nil || cells == nil || next != len(j.cat.Files) {
		t.Fatalf("the undamaged checkpoint does not load: %v", err)
	}
	bad := filepath.Join(t.TempDir(), "pass.ckpt")
	refused := func(what string) {
		t.Helper()
		cells, _, err := loadCheckpointTrusting(bad, hashedWant(t, j, p), 0, j.eng.newCell)
		if err == nil || cells != nil {
			t.Fatalf("%s: loaded (%d cells), want refused", what, len(cells))
		}
		if fault.KindOf(err) != fault.BadInput || fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "--restart") {
			t.Fatalf("%s: %v (kind %v), want a bad-input refusal advising --restart", what, err, fault.KindOf(err))
		}
	}
	r := rand.New(rand.NewPCG(19, 50))
	for _, pos := range flipPositions(19, len(good), 50) {
		damage(t, good, bad, pos, r)
		refused("byte " + itoa(pos) + " of " + itoa(len(good)) + " altered")
	}
	for _, n := range []int{0, 5, len(ckMagic), len(good) / 2, len(good) - sealSize, len(good) - 1} {
		os.WriteFile(bad, good[:n], 0o644)
		refused("truncated to " + itoa(n) + " bytes")
	}
	// Through Run: the damaged checkpoint is refused, the outputs untouched.
	before, _ := os.ReadFile(filepath.Join(out, "cells.parquet"))
	damage(t, good, path, len(good)/3, r)
	_, err = Run(context.Background(), s, Options{})
	if fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), "damaged") {
		t.Fatalf("run over a damaged checkpoint: %v", err)
	}
	after, _ := os.ReadFile(filepath.Join(out, "cells.parquet"))
	if string(before) != string(after) {
		t.Fatal("a refused resume changed cells.parquet")
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

// A shard state file with any byte altered is refused by merge before the
// output directory is created; the undamaged shards merge.
func TestDamagedShardStateRefused(t *testing.T) {
	root := t.TempDir()
	in := []string{filepath.Join("..", "..", "testdata", "points_bulk.nc")}
	dirs := runShards(t, in, root, 2)
	paths, _, err := passCheckpoints(dirs[0])
	if err != nil || len(paths) == 0 {
		t.Fatalf("shard states: %v %v", paths, err)
	}
	good, err := os.ReadFile(paths[0])
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(19, 51))
	out := filepath.Join(root, "merged")
	for _, pos := range flipPositions(20, len(good), 50) {
		damage(t, good, paths[0], pos, r)
		_, err := Merge(context.Background(), out, dirs, Options{})
		if fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), "damaged") {
			t.Fatalf("byte %d of %d altered: merge gave %v, want a refusal of the damaged state", pos, len(good), err)
		}
		if _, err := os.Stat(out); err == nil {
			t.Fatalf("byte %d altered: the refused merge created %s", pos, out)
		}
	}
	os.WriteFile(paths[0], good[:len(good)-7], 0o644)
	if _, err := Merge(context.Background(), out, dirs, Options{}); fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), "truncated or altered") {
		t.Fatalf("truncated shard state: %v", err)
	}
	os.WriteFile(paths[0], good, 0o644)
	if _, err := Merge(context.Background(), out, dirs, Options{}); err != nil {
		t.Fatalf("the undamaged shards do not merge: %v", err)
	}
}
