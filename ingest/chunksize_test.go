package ingest

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/testtool"
)

// The chunk sizes of the role variables come from the files' storage
// metadata: two NetCDF-4 files written by Debian's ncgen (-k nc4) with the
// chunking, deflate and shuffle set in the CDL special attributes (NetCDF
// User Guide, "Special attributes"). A chunk's bytes are the product of its
// sizes times the type's size (short 2, float 4: the NetCDF external types).
// Unfiltered chunks are not listed (HDF5 reads them straight into the
// caller's buffer); the largest filtered chunk over the files is.
func TestFilteredChunksFromStorage(t *testing.T) {
	testtool.Need(t, "ncgen", "netcdf-bin")
	dir := t.TempDir()
	write := func(name, times, hsChunks, hsFilter, tpChunks, tpFilter string) string {
		s := cdl("TIMES", times)
		s = strings.Replace(s, `hs:_FillValue = -32767s ;`, `hs:_FillValue = -32767s ; hs:_ChunkSizes = `+hsChunks+` ; `+hsFilter, 1)
		s = strings.Replace(s, `tp:_FillValue = -999.f ;`, `tp:_FillValue = -999.f ; tp:_ChunkSizes = `+tpChunks+` ; `+tpFilter, 1)
		src, out := filepath.Join(dir, name+".cdl"), filepath.Join(dir, name+".nc")
		if err := os.WriteFile(src, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
		if b, err := exec.Command("ncgen", "-k", "nc4", "-o", out, src).CombinedOutput(); err != nil {
			t.Fatalf("ncgen: %v: %s", err, b)
		}
		return out
	}
	deflate := `hs:_DeflateLevel = 1 ; hs:_Shuffle = "true" ;`
	a := write("a", "0, 3, 9", "2, 3, 4", deflate, "1, 3, 2", "")
	b := write("b", "12, 15, 18", "3, 1, 4", deflate, "3, 3, 4", `tp:_DeflateLevel = 4 ;`)
	cat, err := Open([]string{a, b}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	got := cat.FilteredChunks()
	want := map[Role]int64{Hm0: 2 * 3 * 4 * 2, Tp: 3 * 3 * 4 * 4} // a's hs (48 > b's 24), b's tp (a's is unfiltered)
	if len(got) != len(want) || got[Hm0] != want[Hm0] || got[Tp] != want[Tp] {
		t.Errorf("filtered chunks %v, want %v", got, want)
	}
	// Classic files have no chunks.
	c := ncgenFile(t, dir, "classic", cdl("TIMES", "24, 27, 30"))
	cc, err := Open([]string{c}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := cc.FilteredChunks(); len(got) != 0 {
		t.Errorf("classic file: filtered chunks %v, want none", got)
	}
}
