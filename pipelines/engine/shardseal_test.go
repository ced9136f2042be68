package engine

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/pipelines/fault"
)

// A shard's shard.json is sealed (its SHA-256, FIPS 180-4, recomputed here
// with crypto/sha256, in .swellgrid/shard.sha256 as sha256sum writes it):
// merge refuses a shard.json with a byte altered at 32 places, truncated,
// emptied, swapped with another shard's, or whose seal is gone, as bad input
// naming the file, before the output directory is created; restored, the
// shards merge.
func TestShardManifestSealed(t *testing.T) {
	root := t.TempDir()
	in := []string{filepath.Join("..", "..", "testdata", "points_bulk.nc")}
	dirs := runShards(t, in, root, 2)
	path := filepath.Join(dirs[0], shardFile)
	good, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	other, _ := os.ReadFile(filepath.Join(dirs[1], shardFile))
	seal, err := os.ReadFile(filepath.Join(dirs[0], filepath.FromSlash(shardSeal)))
	sum := sha256.Sum256(good)
	if err != nil || string(seal) != hex.EncodeToString(sum[:])+"  shard.json\n" {
		t.Fatalf("seal %q (%v), want the SHA-256 of shard.json", seal, err)
	}
	out := filepath.Join(root, "merged")
	refused := func(what string) {
		t.Helper()
		_, err := Merge(context.Background(), out, dirs, Options{})
		if fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), path) || !strings.Contains(err.Error(), "seal") {
			t.Fatalf("%s: merge gave %v, want a refusal naming %s and its seal", what, err, path)
		}
		if _, err := os.Stat(out); err == nil {
			t.Fatalf("%s: the refused merge created %s", what, out)
		}
	}
	r := rand.New(rand.NewPCG(35, 7))
	for _, pos := range flipPositions(35, len(good), 32) {
		damage(t, good, path, pos, r)
		refused("byte " + itoa(pos) + " altered")
	}
	os.WriteFile(path, good[:len(good)/2], 0o644)
	refused("truncated")
	os.WriteFile(path, nil, 0o644)
	refused("emptied")
	os.WriteFile(path, other, 0o644)
	refused("swapped with shard 2's")
	os.WriteFile(path, good, 0o644)
	os.Rename(filepath.Join(dirs[0], filepath.FromSlash(shardSeal)), filepath.Join(root, "seal"))
	refused("seal removed")
	os.Rename(filepath.Join(root, "seal"), filepath.Join(dirs[0], filepath.FromSlash(shardSeal)))
	if _, err := Merge(context.Background(), out, dirs, Options{}); err != nil {
		t.Fatalf("the restored shards do not merge: %v", err)
	}
}

// A shard's shard.json carries its stage times (timings_s: catalog, stream,
// fit, export, as a run manifest's), so that a sharded run can be sized from
// a measured shard; the stages lie inside the shard's wall time. (The
// values are not judged: no unit test is timed.)
func TestShardManifestTimings(t *testing.T) {
	dirs := runShards(t, []string{filepath.Join("..", "..", "testdata", "points_bulk.nc")}, t.TempDir(), 2)
	for _, dir := range dirs {
		m, err := readShardManifest(dir)
		if err != nil {
			t.Fatal(err)
		}
		sum := 0.0
		for _, k := range []string{"catalog_s", "stream_s", "fit_s"} {
			v, ok := m.Timings[k]
			if !ok || v < 0 {
				t.Fatalf("%s: timings_s %v lacks %s", dir, m.Timings, k)
			}
			sum += v
		}
		if sum > m.WallS {
			t.Errorf("%s: catalog, stream and fit take %.3f s, more than the shard's wall time %.3f s", dir, sum, m.WallS)
		}
	}
}
