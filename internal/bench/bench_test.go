package bench

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"testing"

	"swellgrid/ingest"
)

// The read floor and the ingest reader must read the same values: every role
// variable once, cells x steps values per bulk role (common practice for a
// floor measurement: same data, same order, nothing else).
func TestFloorReadsEveryValueOnce(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bulk_monthly", "*.nc"))
	if err != nil || len(files) == 0 {
		t.Fatalf("fixture files: %v %v", files, err)
	}
	cat, err := ingest.Open(files, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	roles := 0
	for _, r := range ingest.Roles { // time-varying roles: the mask and depth are static
		if cat.Vars[r] != nil && r != ingest.Depth {
			roles++
		}
	}
	want := int64(cat.Grid.NCells()) * int64(cat.Steps) * int64(roles)
	fl, err := ReadFloor(cat, 64)
	if err != nil {
		t.Fatal(err)
	}
	in, err := ReadIngest(cat, 64)
	if err != nil {
		t.Fatal(err)
	}
	if fl.Values != want || in.Values != want {
		t.Fatalf("floor read %d values, ingest %d, want %d (%d cells x %d steps x %d roles)", fl.Values, in.Values, want, cat.Grid.NCells(), cat.Steps, roles)
	}
}

func TestPeakRSS(t *testing.T) {
	big := make([]byte, 64<<20)
	for i := range big {
		big[i] = 1
	}
	rss, err := PeakRSS()
	if err != nil {
		t.Fatal(err)
	}
	if rss < 64<<20 {
		t.Fatalf("VmHWM %d bytes after touching 64 MiB", rss)
	}
}

// The cache directory of a scenario is named by its values: two copies of
// the spectral scenario (their Spectra at different addresses) share it, and
// a changed value does not (the cache would otherwise be regenerated on
// every run, or reused when stale).
func TestCacheKeyByValue(t *testing.T) {
	a, b := SpectralScenario(2), SpectralScenario(2)
	if a.Spectra == b.Spectra {
		t.Fatal("the two scenarios share their Spectra; the test needs two copies")
	}
	if key(a) != key(b) {
		t.Errorf("equal scenarios, keys %s and %s", key(a), key(b))
	}
	b.Spectra.NDir++
	if key(a) == key(b) {
		t.Errorf("NDir changed, key still %s", key(a))
	}
	if c := SpectralScenario(1); key(c) == key(a) {
		t.Errorf("record length changed, key still %s", key(a))
	}
}

// The sharded-run cases (MeasureShards) run what they say: 4 shards and
// their merge give the single run's cells.parquet, byte for byte (the
// design's byte-identity; the engine's tests check every table).
func TestShardCasesMergeToSingleRun(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bulk_monthly", "*.nc"))
	if err != nil || len(files) == 0 {
		t.Fatalf("fixture files: %v %v", files, err)
	}
	tmp := t.TempDir()
	single := filepath.Join(tmp, "single")
	if _, err := RunChild(Case{Data: "bulk", Part: "full", Mode: "pipeline", Files: files, Out: single}); err != nil {
		t.Fatal(err)
	}
	var dirs []string
	for i := 1; i <= ShardCount; i++ {
		d := filepath.Join(tmp, fmt.Sprintf("s%d", i))
		m, err := RunChild(Case{Data: "bulk", Part: "full", Mode: "shard", Files: files, Out: d, Shard: fmt.Sprintf(shardsCaseFormat, i, ShardCount)})
		if err != nil {
			t.Fatal(err)
		}
		if m.Cells == 0 || m.Cells >= 30 {
			t.Errorf("shard %d/%d ran %d cells of 30", i, ShardCount, m.Cells)
		}
		dirs = append(dirs, d)
	}
	merged := filepath.Join(tmp, "merged")
	m, err := RunChild(Case{Data: "bulk", Part: "full", Mode: "merge", Out: merged, ShardDirs: dirs})
	if err != nil {
		t.Fatal(err)
	}
	if m.Cells != 30 {
		t.Errorf("merge: %d cells, want 30 (6 x 5 fixture)", m.Cells)
	}
	a, err := os.ReadFile(filepath.Join(single, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(merged, "cells.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Errorf("merged cells.parquet (%d bytes) differs from the single run's (%d bytes)", len(b), len(a))
	}
}
