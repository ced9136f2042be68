package bench

import (
	"bytes"
	"os"
	"os/exec"
	"strings"
	"testing"

	"swellgrid/internal/testtool"
)

// AlignShardData rechunks as the Slurm plan advises, and the rechunked
// files hold the same values. A small cut of the sharded benchmark's
// scenario (50 x 8 cells, January and February: 248 and 224 steps) has one
// chunk per variable and file spanning the grid, so 4 shards of whole rows
// (boundaries at rows 2, 4, 6) each decompress all 8 rows: read
// amplification 4 (4 x 8 / 8 rows, by hand). Rechunked to two rows per
// chunk (the gcd of 2, 4, 6 and 8) and the shortest file's 224 steps, the
// plan finds amplification 1 and gives no advice. The values are compared
// with netCDF-C's own ncdump (the data section of each variable), and a
// second call reuses the files.
func TestAlignShardDataByPlan(t *testing.T) {
	testtool.Need(t, "nccopy", "netcdf-bin")
	ncdump := testtool.Need(t, "ncdump", "netcdf-bin")
	s := ShardScenario()
	s.Name, s.Months = "sgbench_align", 2
	s.Grid.NY, s.Grid.LatMax = 8, 41.4
	d, err := Ensure(t.TempDir(), "align", s, t.Logf)
	if err != nil {
		t.Fatal(err)
	}
	files := d.Files
	a, plan, err := AlignShardData(d, t.Logf)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(plan, "read amplification 4.00") || a == nil {
		t.Fatalf("plan of the fixture as it is (want read amplification 4.00 and rechunked files):\n%s", plan)
	}
	if len(a.Files) != len(files) {
		t.Fatalf("%d rechunked files, want %d", len(a.Files), len(files))
	}
	for _, k := range []int{0, 1} { // January (248 steps), February (224)
		hdr, err := exec.Command(ncdump, "-hs", a.Files[k]).Output()
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(hdr), "hm0:_ChunkSizes = 224, 2, 50 ;") {
			t.Errorf("%s: hm0 not chunked 224 x 2 x 50:\n%s", a.Files[k], hdr)
		}
		for _, v := range []string{"hm0", "te", "tp"} {
			want, got := dumpData(t, ncdump, v, files[k]), dumpData(t, ncdump, v, a.Files[k])
			if len(want) == 0 || !bytes.Equal(want, got) {
				t.Errorf("%s of %s: the rechunked values differ (%d against %d bytes of ncdump)", v, a.Files[k], len(got), len(want))
			}
		}
	}
	b, plan2, err := AlignShardData(a, t.Logf)
	if err != nil || b != nil || !strings.Contains(plan2, "read amplification 1.00") || strings.Contains(plan2, "nccopy") {
		t.Errorf("plan of the rechunked files: %v, %v; want read amplification 1.00 and no advice:\n%s", b, err, plan2)
	}
	st, err := os.Stat(a.Files[0])
	if err != nil {
		t.Fatal(err)
	}
	a2, _, err := AlignShardData(d, t.Logf)
	if err != nil {
		t.Fatal(err)
	}
	if st2, err := os.Stat(a2.Files[0]); err != nil || !st2.ModTime().Equal(st.ModTime()) {
		t.Errorf("the second call rewrote %s (%v)", a2.Files[0], err)
	}
}

// dumpData is the data section of variable v in ncdump's output of path.
func dumpData(t *testing.T, ncdump, v, path string) []byte {
	t.Helper()
	out, err := exec.Command(ncdump, "-v", v, path).Output()
	if err != nil {
		t.Fatalf("ncdump -v %s %s: %v", v, path, err)
	}
	_, data, ok := bytes.Cut(out, []byte("\ndata:\n"))
	if !ok {
		t.Fatalf("ncdump -v %s %s: no data section", v, path)
	}
	// the coordinate variables are dumped as well; keep v's values
	_, vals, ok := bytes.Cut(data, []byte("\n "+v+" ="))
	if !ok {
		t.Fatalf("ncdump -v %s %s: no values of %s", v, path, v)
	}
	return vals
}
