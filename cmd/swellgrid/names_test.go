package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// Names that become file names, list lengths and the output directory are
// checked with the spec, before anything is computed or the output
// directory is created (exit 2 naming the key and the limit). A site name
// of 240 or 300 characters used to pass the spec check and fail with exit 4
// after computing everything (the page's name was longer than the 255
// bytes a file name may have on ext4: common practice); 65 design return
// periods were accepted although the README limits lists to 64; an output
// directory with a NUL byte gave exit 4. Messages quote a short prefix only.
func TestNamesCheckedUpFront(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join("..", "..", "testdata", "points_bulk.nc")
	spec := func(name, body string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	site := func(n string) string { return fmt.Sprintf("[[site]]\nname = %q\nlon = 1\nlat = 50\n", n) }
	periods := make([]string, 65)
	for i := range periods {
		periods[i] = fmt.Sprint(i + 2)
	}
	for _, c := range []struct {
		name   string
		out    string
		spec   string
		want   []string
		maxLen int
	}{
		{"site name of 240 characters", "", site(strings.Repeat("s", 240)), []string{"site[0].name", "240 bytes", "at most 200"}, 600},
		{"site name of 300 characters", "", site(strings.Repeat("s", 300)), []string{"site[0].name", "300 bytes", "at most 200"}, 600},
		{"site name of 1 MB", "", site(strings.Repeat("s", 1<<20)), []string{"site[0].name", "1048576 bytes", "at most 200"}, 600},
		{"site names colliding after slugging", "", site("ST-1") + site("st 1"), []string{"site[1].name", `"st 1"`, `"st_1"`, "site[0].name", `"ST-1"`}, 600},
		{"site name without letter or digit", "", site("***"), []string{"site[0].name", "no letter or digit"}, 600},
		{"65 design return periods", "", "[design]\nreturn_periods_y = [" + strings.Join(periods, ", ") + "]\n", []string{"design.return_periods_y", "65 entries", "at most 64"}, 600},
		{"--out with NUL", filepath.Join(dir, "o\x00ut"), "", []string{"output.dir (or --out)", "NUL"}, 600},
		{"output.dir with NUL", "-", "[output]\ndir = \"o\\u0000ut\"\n", []string{"output.dir (or --out)", "NUL"}, 600},
	} {
		t.Run(c.name, func(t *testing.T) {
			out := c.out
			if out == "" {
				out = filepath.Join(dir, "out-"+strings.ReplaceAll(c.name, " ", "-"))
			}
			args := []string{"run", "--input", in, "--workers", "1"}
			if out != "-" {
				args = append(args, "--out", out)
			}
			if c.spec != "" {
				args = append(args, "--spec", spec(strings.ReplaceAll(c.name, " ", "_")+".toml", c.spec))
			}
			code, stderr := codeWithin(t, time.Minute, args...)
			if code != 2 {
				t.Fatalf("exit %d, want 2: %s", code, stderr[:min(len(stderr), 400)])
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("message lacks %q: %s", w, stderr)
				}
			}
			if len(stderr) > c.maxLen {
				t.Errorf("message of %d bytes, want at most %d: %.300s", len(stderr), c.maxLen, stderr)
			}
			if out != "-" && !strings.Contains(out, "\x00") {
				if _, err := os.Stat(out); err == nil {
					t.Errorf("the refusal created the output directory %s", out)
				}
			}
		})
	}
	// The limit is at the boundary: 64 design return periods and a site
	// name of 200 bytes pass their checks (the run is not started: a bad
	// run.memory_limit, checked after them, stops it, to keep the test quick).
	code, stderr := codeOf("run", "--input", in, "--out", filepath.Join(dir, "edge"), "--spec",
		spec("edge.toml", site(strings.Repeat("s", 200))+"[design]\nreturn_periods_y = ["+strings.Join(periods[:64], ", ")+"]\n[run]\nmemory_limit = \"lots\"\n"))
	if code != 2 || !strings.Contains(stderr, "run.memory_limit") {
		t.Errorf("64 periods and a 200-byte site name: exit %d, want the later check (run.memory_limit) to refuse: %s", code, stderr)
	}
}
