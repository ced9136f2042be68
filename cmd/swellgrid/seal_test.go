package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"swellgrid/export/contract"
)

// The manifest is sealed: its SHA-256 (FIPS 180-4, recomputed here with
// Go's crypto/sha256) sits in the run's sealed state
// (.swellgrid/manifest.sha256, as sha256sum writes it), and report,
// validate and screen refuse a manifest.json with one changed digit (exit 2
// naming it) before writing anything; a manifest that records checksums
// but whose seal is gone is refused too.
func TestManifestSealRefusesChangedDigit(t *testing.T) {
	src := provedRuns(t)[0]
	b, _ := os.ReadFile(filepath.Join(src, contract.ManifestFile))
	seal, err := os.ReadFile(filepath.Join(src, filepath.FromSlash(contract.ManifestSeal)))
	if err != nil {
		t.Fatal(err)
	}
	if want := sha256Hex(b) + "  manifest.json\n"; string(seal) != want {
		t.Fatalf("seal %q, want %q", seal, want)
	}
	var digits []int
	for i, c := range b {
		if c >= '0' && c <= '9' {
			digits = append(digits, i)
		}
	}
	spec := filepath.Join(t.TempDir(), "s.toml")
	os.WriteFile(spec, []byte("[[screening.scenario]]\nname = \"core\"\ncriteria = [\"power_mean_kw_m >= 1\"]\n"), 0o644)
	obs := filepath.Join("..", "..", "testdata", "validate", "station_synth.csv")
	commands := [][]string{{"report", "DIR"}, {"validate", "--run", "DIR", "--obs", obs}, {"screen", "DIR", "--spec", spec}}
	for k := 0; k < 6; k++ {
		off := digits[(k*len(digits))/6+1]
		changed := bytes.Clone(b)
		changed[off] = '0' + (changed[off]-'0'+1)%10
		for _, c := range commands {
			t.Run(c[0]+"@"+time.Duration(off).String(), func(t *testing.T) {
				dir := copyRun(t, src)
				mpath := filepath.Join(dir, contract.ManifestFile)
				os.WriteFile(mpath, changed, 0o644)
				os.RemoveAll(filepath.Join(dir, "report"))
				args := append([]string{}, c...)
				for i := range args {
					if args[i] == "DIR" {
						args[i] = dir
					}
				}
				code, stderr := codeWithin(t, time.Minute, args...)
				if code != 2 || !strings.Contains(stderr, mpath) || !strings.Contains(stderr, "seal") {
					t.Fatalf("%s: exit %d, want 2 naming %s and its seal: %s", c[0], code, mpath, stderr)
				}
				for _, f := range []string{"report/index.html", "validation.json", "screening.parquet"} {
					if _, err := os.Stat(filepath.Join(dir, f)); err == nil {
						t.Errorf("%s wrote %s from a changed manifest", c[0], f)
					}
				}
				if got, _ := os.ReadFile(mpath); !bytes.Equal(got, changed) {
					t.Error("the changed manifest was rewritten")
				}
			})
		}
	}
	t.Run("seal removed", func(t *testing.T) {
		dir := copyRun(t, src)
		os.Remove(filepath.Join(dir, filepath.FromSlash(contract.ManifestSeal)))
		code, stderr := codeWithin(t, time.Minute, "report", dir)
		if code != 2 || !strings.Contains(stderr, "no valid seal") || !strings.Contains(stderr, "run the same `swellgrid run` command again") {
			t.Fatalf("exit %d, want 2 (no seal) saying what to do: %s", code, stderr)
		}
		// what the message says to do works: the same run command again
		// seals the run, and report reads it
		in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
		if code, stderr := codeWithin(t, time.Minute, "run", "--input", in, "--out", dir, "--workers", "1"); code != 0 {
			t.Fatalf("the same run again: exit %d: %s", code, stderr)
		}
		if code, stderr := codeWithin(t, time.Minute, "report", dir); code != 0 {
			t.Fatalf("report after the run again: exit %d: %s", code, stderr)
		}
	})
}

// validate writes its tables and validation.json into the run and seals
// them with it (under the run's lock): their sizes and SHA-256 are in the
// manifest's output_checksums and the manifest's seal follows; one flipped
// byte in any of them is then refused by report with exit 2 naming it.
func TestValidationOutputsSealed(t *testing.T) {
	in := filepath.Join("..", "..", "testdata", "bulk_monthly", "sgfx_bulk_2001-0[1-4].nc")
	obs := filepath.Join("..", "..", "testdata", "validate", "station_synth.csv")
	src := filepath.Join(t.TempDir(), "run")
	if code, stderr := codeOf("run", "--input", in, "--out", src, "--workers", "1"); code != 0 {
		t.Fatalf("run: exit %d: %s", code, stderr)
	}
	if code, stderr := codeOf("validate", "--run", src, "--obs", obs); code != 0 {
		t.Fatalf("validate: exit %d: %s", code, stderr)
	}
	b, _ := os.ReadFile(filepath.Join(src, contract.ManifestFile))
	seal, _ := os.ReadFile(filepath.Join(src, filepath.FromSlash(contract.ManifestSeal)))
	if string(seal) != sha256Hex(b)+"  manifest.json\n" {
		t.Fatalf("after validate the seal %q does not match the manifest", seal)
	}
	m, err := contract.DecodeManifest(b)
	if err != nil {
		t.Fatal(err)
	}
	sums := map[string]contract.FileSum{}
	for _, s := range m.OutputChecksums {
		sums[s.Path] = s
	}
	for _, f := range contract.SealedExtras {
		body, err := os.ReadFile(filepath.Join(src, f))
		s, ok := sums[f]
		if err != nil || !ok || s.Size != int64(len(body)) || s.SHA256 != sha256Hex(body) {
			t.Fatalf("%s: sealed %v %+v, file %d bytes %s (%v)", f, ok, s, len(body), sha256Hex(body), err)
		}
	}
	for _, f := range contract.SealedExtras {
		t.Run(f, func(t *testing.T) {
			dir := copyRun(t, src)
			path := filepath.Join(dir, f)
			body, _ := os.ReadFile(path)
			body[len(body)/2] ^= 0x02
			os.WriteFile(path, body, 0o644)
			code, stderr := codeWithin(t, time.Minute, "report", dir)
			if code != 2 || !strings.Contains(stderr, path) {
				t.Fatalf("report: exit %d, want 2 naming %s: %s", code, path, stderr)
			}
		})
	}
}
