package engine

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
	"testing"
)

const testMatrix = `# synthetic power matrix (invented device), kW
hm0_m\te_s,5,7,9,11
0.5,5,9,10,8
1.5,40,70,75,60
2.5,110,190,200,170
3.5,200,300,300,280
`

// runspec.Spec values past their limits are refused by validation.Validate, naming the key and
// the limit; nothing is computed or written.
func TestSpecLimitsAndNames(t *testing.T) {
	dir := t.TempDir()
	okCSV := filepath.Join(dir, "ok.csv")
	os.WriteFile(okCSV, []byte(testMatrix), 0o644)
	big := filepath.Join(dir, "big.csv")
	os.WriteFile(big, []byte(testMatrix+strings.Repeat("#"+strings.Repeat("x", 1023)+"\n", 1025)), 0o644)
	rows := filepath.Join(dir, "rows.csv")
	os.WriteFile(rows, []byte(testMatrix+strings.Repeat("4.5,1,2,3,4\n", 1001)), 0o644)
	wide := filepath.Join(dir, "wide.csv")
	os.WriteFile(wide, []byte(testMatrix+"4.5"+strings.Repeat(",1", 1001)+"\n"), 0o644)
	many := make([]float64, 99999)
	for i := range many {
		many[i] = float64(i+1) / 1000
	}
	for _, c := range []struct {
		name string
		mod  func(s *runspec.Spec)
		want []string
	}{
		{"capital device name", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "WEC", PowerMatrix: okCSV}} }, []string{"device[0].name", "lower-case"}},
		{"device name with a dash", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "wec-1", PowerMatrix: okCSV}} }, []string{"device[0].name"}},
		{"negative seed", func(s *runspec.Spec) { s.Extremes.Seed = -1 }, []string{"extremes.seed", "-1"}},
		{"model uncertainty of 100 %", func(s *runspec.Spec) { s.Uncertainty.ModelFrac = 1 }, []string{"uncertainty.model_frac", "[0, 1)"}},
		{"a horizon of 0 years", func(s *runspec.Spec) { s.Uncertainty.HorizonsY = []float64{0, 10} }, []string{"uncertainty.horizons_y", "out of range"}},
		{"9 horizons", func(s *runspec.Spec) { s.Uncertainty.HorizonsY = many[:9] }, []string{"uncertainty.horizons_y", "at most 8"}},
		{"a reach of 0 km", func(s *runspec.Spec) { s.Uncertainty.ReachKm = 0 }, []string{"uncertainty.reach_km", "(0, 20000]"}},
		{"blocks of 0 pairs", func(s *runspec.Spec) { s.Uncertainty.BlockPairs = 0 }, []string{"uncertainty.block_pairs", "1..100000"}},
		{"10 resamples", func(s *runspec.Spec) { s.Uncertainty.BootstrapReps = 10 }, []string{"uncertainty.bootstrap_reps", "100..100000"}},
		{"a validation that is not there", func(s *runspec.Spec) { s.Uncertainty.Validation = dir }, []string{"uncertainty.validation", "no finished validation", "validation.json"}},
		{"99999 percentiles", func(s *runspec.Spec) { s.Statistics.Percentiles = many[:99999] }, []string{"statistics.percentiles", "99999 entries", "at most 64"}},
		{"100 return periods", func(s *runspec.Spec) { s.Extremes.ReturnPeriodsY = many[:100] }, []string{"extremes.return_periods_y", "at most 64"}},
		{"100 window limits", func(s *runspec.Spec) { s.Statistics.WindowLimitsM = many[:100] }, []string{"statistics.window_limits_m", "at most 64"}},
		{"100 contour levels", func(s *runspec.Spec) { s.Contours.Levels = map[string][]float64{"hm0_mean_m": many[:100]} }, []string{"contours.levels.hm0_mean_m", "at most 64"}},
		{"65 devices", func(s *runspec.Spec) {
			for i := 0; i < 65; i++ {
				s.Devices = append(s.Devices, runspec.DeviceSpec{Name: "d" + itoa(i), PowerMatrix: okCSV})
			}
		}, []string{"device has 65 entries", "at most 64"}},
		{"matrix /dev/zero", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: "/dev/zero"}} }, []string{"device[0].power_matrix", "/dev/zero", "not a regular file"}},
		{"matrix over 1 MB", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: big}} }, []string{"device[0].power_matrix", "the limit is 1048576 bytes"}},
		{"matrix with 1006 rows", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: rows}} }, []string{"device[0].power_matrix", "at most 1000 rows"}},
		{"matrix row of 1002 cells", func(s *runspec.Spec) { s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: wide}} }, []string{"device[0].power_matrix", "at most 1000 per row"}},
		{"missing matrix", func(s *runspec.Spec) {
			s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: filepath.Join(dir, "none.csv")}}
		}, []string{"device[0].power_matrix", "none.csv"}},
	} {
		s := runspec.DefaultSpec()
		s.Input.Paths = []string{"x"}
		c.mod(s)
		_, err := s.Resolve()
		if err == nil {
			t.Errorf("%s: accepted", c.name)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %q lacks %q", c.name, err, w)
			}
		}
	}
	s := runspec.DefaultSpec()
	s.Input.Paths = []string{"x"}
	s.Devices = []runspec.DeviceSpec{{Name: "wec_2", PowerMatrix: okCSV}}
	if _, err := s.Resolve(); err != nil {
		t.Errorf("a good device is refused: %v", err)
	}
}

// A spec error is refused by Run before any output directory exists, with
// the exit code of bad input.
func TestSpecErrorCreatesNoOutput(t *testing.T) {
	out := filepath.Join(t.TempDir(), "atlas")
	s := testSpec(t, "testdata/points_bulk.nc", out)
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "m.csv"), []byte(testMatrix), 0o644)
	s.Devices = []runspec.DeviceSpec{{Name: "Wec", PowerMatrix: filepath.Join(dir, "m.csv")}}
	_, err := Run(context.Background(), s, Options{})
	if fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "device[0].name") {
		t.Fatalf("capital device name: %v", err)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Fatalf("a refused spec created %s", out)
	}
	s = testSpec(t, "testdata/points_bulk.nc", out)
	_, err = Run(context.Background(), s, Options{Update: true, Restart: true})
	if fault.ExitCode(err) != 2 {
		t.Fatalf("--update with --restart: %v", err)
	}
	_, err = Run(context.Background(), s, Options{Update: true})
	if fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "no finished run") {
		t.Fatalf("--update of a directory with no run: %v", err)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Fatalf("a refused update created %s", out)
	}
}

// Relative paths in a spec file, the output directory included, are
// relative to the spec file's directory; the example specs write inside
// the repository's ignored out/ folder.
func TestSpecPathsRelativeToSpecFile(t *testing.T) {
	s, err := runspec.ParseSpec([]byte("[input]\npaths = [\"in/a.nc\"]\n[output]\ndir = \"atlas\"\n[[device]]\nname = \"wec\"\npower_matrix = \"m.csv\"\n"), "/data/study/run.toml")
	if err != nil {
		t.Fatal(err)
	}
	if s.Output.Dir != "/data/study/atlas" || s.Input.Paths[0] != "/data/study/in/a.nc" || s.Devices[0].PowerMatrix != "/data/study/m.csv" {
		t.Fatalf("paths: out %s, input %v, matrix %s", s.Output.Dir, s.Input.Paths, s.Devices[0].PowerMatrix)
	}
	s, _ = runspec.ParseSpec([]byte("[input]\npaths = [\"/abs/a.nc\"]\n"), "/data/study/run.toml")
	if s.Output.Dir != runspec.DefaultSpec().Output.Dir {
		t.Fatalf("an output.dir not in the spec file is the default, got %s", s.Output.Dir)
	}
	repo, _ := filepath.Abs("../..")
	files, _ := filepath.Glob("../examples/*.toml")
	for _, f := range files {
		s, err := runspec.LoadSpec(f)
		if err != nil {
			t.Fatal(err)
		}
		out, _ := filepath.Abs(s.Output.Dir)
		if rel, err := filepath.Rel(filepath.Join(repo, "out"), out); err != nil || strings.HasPrefix(rel, "..") {
			t.Errorf("%s writes to %s, outside %s/out", f, out, repo)
		}
	}
}

// The fingerprint follows the content of the files a spec names, not the
// spelling of their paths; a matrix edited between runs makes the resume a
// refusal (exit code 2) naming the file.
func TestFingerprintFollowsNamedFileContent(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.csv"), filepath.Join(dir, "sub", "b.csv")
	os.MkdirAll(filepath.Dir(b), 0o755)
	os.WriteFile(a, []byte(testMatrix), 0o644)
	os.WriteFile(b, []byte(testMatrix), 0o644)
	fp := func(path string) string {
		s := runspec.DefaultSpec()
		s.Input.Paths = []string{"x"}
		s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: path}}
		r, err := s.Resolve()
		if err != nil {
			t.Fatal(err)
		}
		return r.Fingerprint()
	}
	if fp(a) != fp(b) {
		t.Error("the same matrix at two paths gives two fingerprints")
	}
	os.WriteFile(b, []byte(strings.Replace(testMatrix, "300,300", "300,301", 1)), 0o644)
	if fp(a) == fp(b) {
		t.Error("an edited matrix keeps the fingerprint")
	}

	out := t.TempDir()
	s := testSpec(t, "testdata/points_bulk.nc", out)
	s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: a}}
	mustRun(t, s)
	os.WriteFile(a, []byte(strings.Replace(testMatrix, "200,300", "210,300", 1)), 0o644)
	s = testSpec(t, "testdata/points_bulk.nc", out)
	s.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: a}}
	_, err := Run(context.Background(), s, Options{})
	if fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "device[0].power_matrix") || !strings.Contains(err.Error(), a) || !strings.Contains(err.Error(), "--restart") {
		t.Fatalf("resume after the matrix changed: %v", err)
	}

	// A merge of shards run before the edit is refused the same way.
	root := t.TempDir()
	in := []string{filepath.Join("..", "..", "testdata", "points_bulk.nc")}
	var dirs []string
	for i := 1; i <= 2; i++ {
		d := filepath.Join(root, "shard", itoa(i))
		sh := clSpec(in, d)
		sh.Devices = []runspec.DeviceSpec{{Name: "wec", PowerMatrix: a}}
		clRun(t, sh, Options{Shard: &Shard{Index: i, Count: 2}})
		dirs = append(dirs, d)
	}
	os.WriteFile(a, []byte(testMatrix), 0o644)
	_, err = Merge(context.Background(), filepath.Join(root, "merged"), dirs, Options{})
	if fault.ExitCode(err) != 2 || !strings.Contains(err.Error(), "the content of device[0].power_matrix") {
		t.Fatalf("merge after the matrix changed: %v", err)
	}
}
