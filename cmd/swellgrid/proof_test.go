package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"swellgrid/export/contract"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/products"
)

var (
	provedOnce sync.Once
	provedDirs [2]string
	provedErr  error
	provedRoot string // removed by TestMain
)

// provedRuns runs testdata/points_bulk.nc twice, once with the defaults and
// once with another sea-water density (a foreign run of the same grid), and
// returns the two run directories (shared by the tests of this file; copy
// before changing one).
func provedRuns(t *testing.T) [2]string {
	t.Helper()
	provedOnce.Do(func() {
		root, err := os.MkdirTemp("", "swellgrid-proof-")
		if err != nil {
			provedErr = err
			return
		}
		provedRoot = root
		spec := filepath.Join(root, "rho.toml")
		os.WriteFile(spec, []byte("[physics]\nrho = 1030\n"), 0o644)
		in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
		for i, extra := range [][]string{nil, {"--spec", spec}} {
			provedDirs[i] = filepath.Join(root, []string{"run", "foreign"}[i])
			args := append([]string{"run", "--input", in, "--out", provedDirs[i], "--workers", "1"}, extra...)
			if code, stderr := codeOf(args...); code != 0 {
				provedErr = errors.New(stderr)
				return
			}
		}
	})
	if provedErr != nil {
		t.Fatal(provedErr)
	}
	return provedDirs
}

// copyRun copies a run directory into a new temporary folder.
func copyRun(t *testing.T, src string) string {
	t.Helper()
	dst := filepath.Join(t.TempDir(), "run")
	if err := os.CopyFS(dst, os.DirFS(src)); err != nil {
		t.Fatal(err)
	}
	return dst
}

// The manifest records the size and SHA-256 of every output it lists
// (SHA-256 recomputed here by crypto/sha256 through a second reader: the
// sums must equal the files' own), leaving out only itself.
func TestManifestRecordsOutputChecksums(t *testing.T) {
	dir := provedRuns(t)[0]
	b, _ := os.ReadFile(filepath.Join(dir, contract.ManifestFile))
	m, err := contract.DecodeManifest(b)
	if err != nil {
		t.Fatal(err)
	}
	if len(m.OutputChecksums) != len(m.Outputs)-1 {
		t.Fatalf("%d checksums for %d outputs (all but manifest.json)", len(m.OutputChecksums), len(m.Outputs))
	}
	for i, s := range m.OutputChecksums {
		if s.Path != m.Outputs[i] {
			t.Fatalf("checksum %d is of %s, output %d is %s", i, s.Path, i, m.Outputs[i])
		}
		body, err := os.ReadFile(filepath.Join(dir, s.Path))
		if err != nil {
			t.Fatal(err)
		}
		if int64(len(body)) != s.Size || sha256Hex(body) != s.SHA256 {
			t.Errorf("%s: %d bytes %s, the manifest records %d bytes %s", s.Path, len(body), sha256Hex(body), s.Size, s.SHA256)
		}
	}
	// the field is the manifest's last member
	if i := bytes.LastIndex(b, []byte(`"output_checksums"`)); i < 0 || bytes.Contains(b[i:], []byte("\n  \"")) {
		t.Error("output_checksums is not the manifest's last member")
	}
	// report rewrites report/ and reseals: the manifest is byte-identical
	// (the report is deterministic) and still proves every file
	cp := copyRun(t, dir)
	if code, stderr := codeOf("report", cp); code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	after, _ := os.ReadFile(filepath.Join(cp, contract.ManifestFile))
	if !bytes.Equal(after, b) {
		t.Error("report changed the manifest of a run whose files it rebuilt identically")
	}
	if _, err := rundir.Open(cp, nil); err != nil {
		t.Fatal(err)
	}
}

// A run directory whose cells.parquet (or a table the report reads) has one
// flipped byte, is truncated, or was copied from another run of the same
// grid is refused by rundir.Open (a *DamagedError, bad input), by
// `swellgrid report` and (cells.parquet) by `swellgrid screen` with exit 2 naming the file and saying to rerun; the
// damaged file is left as it was and no report is written.
func TestDamagedOrForeignRunRefused(t *testing.T) {
	runs := provedRuns(t)
	good, _ := os.ReadFile(filepath.Join(runs[0], contract.CellsFile))
	foreign, _ := os.ReadFile(filepath.Join(runs[1], contract.CellsFile))
	if bytes.Equal(good, foreign) {
		t.Fatal("the foreign run's cells.parquet equals the run's: no foreign file to test with")
	}
	type damage struct {
		name, file string
		body       []byte
	}
	var cases []damage
	for _, off := range []int{0, 4, 100, len(good) / 3, len(good) / 2, len(good) - 9, len(good) - 1} {
		b := bytes.Clone(good)
		b[off] ^= 0x01
		cases = append(cases, damage{"flip@" + strconv.Itoa(off), contract.CellsFile, b})
	}
	cases = append(cases, damage{"truncated", contract.CellsFile, good[:len(good)-100]},
		damage{"foreign", contract.CellsFile, foreign})
	mon, _ := os.ReadFile(filepath.Join(runs[0], "monthly.parquet"))
	mb := bytes.Clone(mon)
	mb[len(mb)/2] ^= 0x40
	cases = append(cases, damage{"monthly flipped", "monthly.parquet", mb})
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := copyRun(t, runs[0])
			path := filepath.Join(dir, c.file)
			os.WriteFile(path, c.body, 0o644)
			os.RemoveAll(filepath.Join(dir, "report"))
			if c.file == contract.CellsFile {
				_, err := rundir.Open(dir, nil)
				var de *rundir.DamagedError
				if !errors.As(err, &de) || de.Path != path || fault.ExitCode(fault.Output(err)) != 2 {
					t.Fatalf("rundir.Open: %v, want a DamagedError of %s (exit 2)", err, path)
				}
			}
			code, stderr := codeWithin(t, 60*time.Second, "report", dir)
			if code != 2 || !strings.Contains(stderr, path) || !strings.Contains(stderr, "rerun") {
				t.Fatalf("report: exit %d, want 2 naming %s: %s", code, path, stderr)
			}
			if c.file == contract.CellsFile {
				spec := filepath.Join(t.TempDir(), "s.toml")
				os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
				if code, stderr := codeWithin(t, 60*time.Second, "screen", dir, "--spec", spec); code != 2 || !strings.Contains(stderr, path) {
					t.Errorf("screen: exit %d, want 2 naming %s: %s", code, path, stderr)
				}
				if _, err := os.Stat(filepath.Join(dir, "screening.parquet")); err == nil {
					t.Error("screen wrote screening.parquet from a damaged run")
				}
			}
			if b, _ := os.ReadFile(path); !bytes.Equal(b, c.body) {
				t.Error("the damaged file was changed")
			}
			if _, err := os.Stat(filepath.Join(dir, "report", "index.html")); err == nil {
				t.Error("a report was written from a damaged run")
			}
		})
	}
}

// A manifest without output_checksums (a run of an earlier version) is read
// as before, with a warning; a Parquet file damaged there (nothing to prove
// it against) gives an error or is read, never a panic (the Parquet
// reader's CRC and length checks panic on some damage: rundir turns the
// panic into a DamagedError).
func TestUncheckedRunReadWithWarning(t *testing.T) {
	dir := copyRun(t, provedRuns(t)[0])
	mpath := filepath.Join(dir, contract.ManifestFile)
	var doc map[string]json.RawMessage
	b, _ := os.ReadFile(mpath)
	if err := json.Unmarshal(b, &doc); err != nil {
		t.Fatal(err)
	}
	delete(doc, contract.ManifestChecksumsKey)
	b, _ = json.MarshalIndent(doc, "", "  ")
	os.WriteFile(mpath, b, 0o644)
	os.Remove(filepath.Join(dir, filepath.FromSlash(contract.ManifestSeal))) // an earlier version wrote none
	r, err := rundir.Open(dir, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Warnings) != 1 || !strings.Contains(r.Warnings[0], rundir.UncheckedWarning) {
		t.Fatalf("warnings %q, want the unchecked-run warning", r.Warnings)
	}
	_, warns, err := products.Rebuild(dir, products.Products{Report: true})
	if err != nil || !slices.ContainsFunc(warns, func(w string) bool { return strings.Contains(w, rundir.UncheckedWarning) }) {
		t.Fatalf("report of an unchecked run: %v, warnings %q, want the unchecked-run warning", err, warns)
	}
	after, _ := os.ReadFile(mpath)
	if !bytes.Equal(after, b) {
		t.Error("report added checksums to an unchecked run (it would vouch for files nobody checked)")
	}
	good, _ := os.ReadFile(filepath.Join(dir, contract.CellsFile))
	for k := 0; k < 40; k++ {
		off := 4 + k*(len(good)-8)/40
		bb := bytes.Clone(good)
		bb[off] ^= 0xff
		os.WriteFile(filepath.Join(dir, contract.CellsFile), bb, 0o644)
		for _, name := range []string{"monthly", "design"} {
			mb, _ := os.ReadFile(filepath.Join(provedRuns(t)[0], name+".parquet"))
			mb = bytes.Clone(mb)
			mb[4+k*(len(mb)-8)/40] ^= 0xff
			os.WriteFile(filepath.Join(dir, name+".parquet"), mb, 0o644)
		}
		func() {
			defer func() {
				if p := recover(); p != nil {
					t.Fatalf("offset %d: panic reading a damaged run: %v", off, p)
				}
			}()
			if r, err := rundir.Open(dir, nil); err == nil {
				r.Table("monthly")
				r.CellTable("design", 0)
			}
		}()
	}
}

// sha256Hex is the SHA-256 of b (FIPS 180-4, Go's crypto/sha256) in hex.
func sha256Hex(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

// screen adds screening.parquet to a sealed run and rebuilds its report:
// the manifest's checksums are kept right (every listed file proves itself
// afterwards, screening.parquet among them), so the run still opens.
func TestScreenKeepsRunSealed(t *testing.T) {
	dir := copyRun(t, provedRuns(t)[0])
	spec := filepath.Join(t.TempDir(), "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	if code, stderr := codeOf("screen", dir, "--spec", spec); code != 0 {
		t.Fatalf("screen: exit %d: %s", code, stderr)
	}
	b, _ := os.ReadFile(filepath.Join(dir, contract.ManifestFile))
	m, err := contract.DecodeManifest(b)
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, s := range m.OutputChecksums {
		body, err := os.ReadFile(filepath.Join(dir, s.Path))
		if err != nil || int64(len(body)) != s.Size || sha256Hex(body) != s.SHA256 {
			t.Errorf("%s after screen: %d bytes %s (%v), the manifest records %d bytes %s", s.Path, len(body), sha256Hex(body), err, s.Size, s.SHA256)
		}
		seen[s.Path] = true
	}
	if !seen["screening.parquet"] || len(m.OutputChecksums) != len(m.Outputs)-1 {
		t.Errorf("after screen: %d checksums for %d outputs, screening.parquet sealed: %v", len(m.OutputChecksums), len(m.Outputs), seen["screening.parquet"])
	}
	if _, err := rundir.Open(dir, nil); err != nil {
		t.Fatal(err)
	}
}

// screen and report on a finished run with a link planted at contours/ or
// report/: refused with exit 2 naming it, nothing written outside.
func TestScreenRefusesPlantedLink(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "regular_packed.nc")
	src := filepath.Join(t.TempDir(), "run")
	if code, stderr := codeOf("run", "--input", in, "--out", src, "--workers", "1"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, stderr)
	}
	spec := filepath.Join(t.TempDir(), "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	dir := copyRun(t, src)
	outside, intact := outsideDir(t)
	os.RemoveAll(filepath.Join(dir, "contours"))
	link := filepath.Join(dir, "contours")
	os.Symlink(outside, link)
	code, stderr := codeOf("screen", dir, "--spec", spec)
	if code != 2 || !strings.Contains(stderr, link) {
		t.Fatalf("screen: exit %d, want 2 naming %s: %s", code, link, stderr)
	}
	intact(t)
}

// A run on a UGRID mesh proves its mesh tables too: one flipped byte in
// mesh_faces.parquet is refused by `report` with exit 2 naming it.
func TestDamagedMeshTableRefused(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "ugrid", "mixed0.nc")
	dir := filepath.Join(t.TempDir(), "run")
	if code, stderr := codeOf("run", "--input", in, "--out", dir, "--workers", "1"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, stderr)
	}
	if code, stderr := codeOf("report", dir); code != 0 {
		t.Fatalf("report of the sound run: exit %d: %s", code, stderr)
	}
	path := filepath.Join(dir, "mesh_faces.parquet")
	b, _ := os.ReadFile(path)
	b[len(b)/2] ^= 0x01
	os.WriteFile(path, b, 0o644)
	code, stderr := codeOf("report", dir)
	if code != 2 || !strings.Contains(stderr, path) {
		t.Fatalf("report: exit %d, want 2 naming %s: %s", code, path, stderr)
	}
}
