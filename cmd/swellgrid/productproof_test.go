package main

import (
	"bytes"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"swellgrid/export/contract"
	"swellgrid/pipelines/serve"
)

// Every product of a finished run on a grid (every file its manifest's
// output_checksums list: the tables, atlas.nc, atlas.gpkg, the contour
// layers and the report), damaged in each of these ways: a byte altered at
// 32 offsets, truncated, emptied, or swapped with the same file of another
// run of the same grid (sea-water density 1030), is refused under every
// command that reads a finished run (report, report --atlas, validate,
// screen, and serve at start) with exit 2 naming the file, before anything
// is computed or written: the damaged file keeps its bytes, the manifest
// is unchanged, no screening or validation file appears. A file a command
// is about to rewrite does not stop it (report repairs report/index.html,
// report --atlas repairs atlas.nc: afterwards both match the manifest
// again; SHA-256 by Go's crypto/sha256, FIPS 180-4).
func TestEveryProductProvedByEveryReader(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
	root := t.TempDir()
	src, foreign := filepath.Join(root, "run"), filepath.Join(root, "foreign")
	rho := filepath.Join(root, "rho.toml")
	os.WriteFile(rho, []byte("[physics]\nrho = 1030\n"), 0o644)
	for i, extra := range [][]string{nil, {"--spec", rho}} {
		args := append([]string{"run", "--input", in, "--out", []string{src, foreign}[i], "--workers", "1"}, extra...)
		if code, stderr := codeOf(args...); code != 0 {
			t.Fatalf("run: exit %d: %s", code, stderr)
		}
	}
	mb, _ := os.ReadFile(filepath.Join(src, contract.ManifestFile))
	m, err := contract.DecodeManifest(mb)
	if err != nil {
		t.Fatal(err)
	}
	kinds := map[string]bool{}
	for _, s := range m.OutputChecksums {
		kinds[filepath.Ext(s.Path)] = true
	}
	for _, ext := range []string{".parquet", ".nc", ".gpkg", ".geojson", ".html", ".svg", ".png"} {
		if !kinds[ext] {
			t.Fatalf("the run has no %s product to damage (%v)", ext, kinds)
		}
	}
	spec := filepath.Join(root, "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	obs := filepath.Join("..", "..", "testdata", "validate", "station_synth.csv")
	dir := copyRun(t, src)
	type reader struct {
		name    string
		args    []string // "" is the run directory; nil: serve
		rewrite func(rel string) bool
	}
	isReport := func(rel string) bool { return strings.HasPrefix(rel, "report/") }
	readers := []reader{
		{"report", []string{"report", ""}, isReport},
		{"report --atlas", []string{"report", "--atlas", ""}, func(rel string) bool {
			return isReport(rel) || rel == contract.AtlasNCFile || rel == contract.AtlasGPKGFile
		}},
		{"validate", []string{"validate", "--run", "", "--obs", obs}, isReport},
		{"screen", []string{"screen", "", "--spec", spec}, func(rel string) bool { return isReport(rel) || rel == contract.AtlasGPKGFile }},
		{"serve", nil, func(string) bool { return false }},
	}
	r := rand.New(rand.NewPCG(35, 32))
	cases := 0
	for _, s := range m.OutputChecksums {
		path := filepath.Join(dir, filepath.FromSlash(s.Path))
		good, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		type damage struct {
			what string
			body []byte
		}
		damages := []damage{{"truncated", good[:len(good)/2]}, {"emptied", []byte{}}}
		if other, err := os.ReadFile(filepath.Join(foreign, filepath.FromSlash(s.Path))); err == nil && !bytes.Equal(other, good) {
			damages = append(damages, damage{"swapped", other})
		}
		for k := 0; k < 32; k++ {
			b := bytes.Clone(good)
			off := r.IntN(len(b))
			b[off] ^= byte(1 + r.IntN(255))
			damages = append(damages, damage{"byte " + strconv.Itoa(off), b})
		}
		for _, rd := range readers {
			if rd.rewrite(s.Path) {
				continue
			}
			for _, d := range damages {
				os.WriteFile(path, d.body, 0o644)
				cases++
				if rd.args == nil {
					sv, err := serve.New(dir)
					if err == nil {
						sv.Close()
					}
					if err == nil || !strings.Contains(err.Error(), path) {
						t.Fatalf("serve, %s %s: %v, want a refusal naming it", s.Path, d.what, err)
					}
				} else {
					args := append([]string{}, rd.args...)
					for i := range args {
						if args[i] == "" {
							args[i] = dir
						}
					}
					code, stderr := codeWithin(t, time.Minute, args...)
					if code != 2 || !strings.Contains(stderr, path) {
						t.Fatalf("%s, %s %s: exit %d, want 2 naming %s: %s", rd.name, s.Path, d.what, code, path, stderr)
					}
				}
				if b, _ := os.ReadFile(path); !bytes.Equal(b, d.body) {
					t.Fatalf("%s, %s %s: the damaged file was changed", rd.name, s.Path, d.what)
				}
				if b, _ := os.ReadFile(filepath.Join(dir, contract.ManifestFile)); !bytes.Equal(b, mb) {
					t.Fatalf("%s, %s %s: the manifest was changed", rd.name, s.Path, d.what)
				}
				for _, f := range []string{contract.ScreeningFile, contract.ValidationFile} {
					if _, err := os.Lstat(filepath.Join(dir, f)); err == nil {
						t.Fatalf("%s, %s %s: %s was written", rd.name, s.Path, d.what, f)
					}
				}
			}
		}
		os.WriteFile(path, good, 0o644)
	}
	t.Logf("%d refusals checked over %d files", cases, len(m.OutputChecksums))
	// a file the command rewrites is repaired, not refused
	for _, c := range []struct {
		rel  string
		args []string
	}{{"report/index.html", []string{"report", dir}}, {contract.AtlasNCFile, []string{"report", "--atlas", dir}}} {
		path := filepath.Join(dir, filepath.FromSlash(c.rel))
		good, _ := os.ReadFile(path)
		b := bytes.Clone(good)
		b[len(b)/2] ^= 0x10
		os.WriteFile(path, b, 0o644)
		if code, stderr := codeWithin(t, time.Minute, c.args...); code != 0 {
			t.Fatalf("%v with %s damaged: exit %d, want it rebuilt: %s", c.args, c.rel, code, stderr)
		}
		after, _ := os.ReadFile(path)
		mb2, _ := os.ReadFile(filepath.Join(dir, contract.ManifestFile))
		m2, err := contract.DecodeManifest(mb2)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range m2.OutputChecksums {
			if s.Path == c.rel && (s.SHA256 != sha256Hex(after) || s.Size != int64(len(after))) {
				t.Errorf("%s after %v does not match the manifest", c.rel, c.args)
			}
		}
		if !bytes.Equal(after, good) {
			t.Errorf("%s rebuilt by %v differs from the run's (the products are deterministic)", c.rel, c.args)
		}
	}
}
