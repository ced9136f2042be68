package engine

import (
	"swellgrid/pipelines/runspec"
	"testing"
)

// FuzzSpec fuzzes the run-spec parser and validator: any bytes give a spec or
// an error naming the spec (TOML 1.0 syntax, checked by BurntSushi/toml, and
// the key rules of validation.Validate). A spec that validates must have a stable
// fingerprint (the same spec hashes the same, as checkpoints rely on).
func FuzzSpec(f *testing.F) {
	for _, s := range []string{
		"", "[extremes]\nreturn_periods_y = [1.0, 10.0, 100.0]\n",
		"[statistics]\nwindow_limits_m = [2.5, 1.5]\n",
		"[extremes]\nreturn_periods_y = [-10.0]\n",
		"[[device]]\nname = \"alpha\"\npower_matrix = \"m.csv\"\n",
		"[depth]\nsource = \"constant\"\nconstant_m = -3\n",
		"[run]\nmemory_limit = \"1e400GiB\"\nworkers = -1\n",
		"[contours.levels]\npower_mean_kw_m = [30.0, 10.0]\n",
		"[statistics\nbad",
		"[input]\npaths = [\"a.nc\"]\n[physics]\nrho = nan\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := runspec.ParseSpec(data, "/fuzz/run.toml")
		if err != nil {
			return
		}
		if len(s.Input.Paths) == 0 {
			s.Input.Paths = []string{"/fuzz/in"}
		}
		fp := func(s *runspec.Spec) string {
			r, err := s.Resolve()
			if err != nil {
				t.Fatalf("a valid spec does not resolve: %v", err)
			}
			return r.Fingerprint()
		}
		if _, err := s.Resolve(); err != nil {
			return
		}
		// The fingerprint follows the result-changing settings only: the
		// execution settings and the output place leave it alone, a changed
		// physical constant changes it (README "Usage": a changed spec refuses to resume).
		a := fp(s)
		if len(a) != 64 {
			t.Fatalf("fingerprint %q is not a hex SHA-256", a)
		}
		moved := *s
		moved.Output.Dir, moved.Run.Workers, moved.Run.MemoryLimit = "/elsewhere/out", s.Run.Workers+3, "64MiB"
		if b := fp(&moved); b != a {
			t.Fatalf("output dir, workers and memory limit changed the fingerprint: %q -> %q", a, b)
		}
		denser := *s
		denser.Physics.Rho = s.Physics.Rho + 1
		if b := fp(&denser); b == a {
			t.Fatalf("physics.rho %g -> %g left the fingerprint %q", s.Physics.Rho, denser.Physics.Rho, a)
		}
	})
}
