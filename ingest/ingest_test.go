package ingest

import (
	"swellgrid/internal/testtool"

	"context"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// ncgenFile writes a NetCDF file from CDL text with Debian's ncgen (netcdf-bin),
// an implementation of the format independent of swellgrid's reader.
func ncgenFile(t *testing.T, dir, name, cdl string) string {
	t.Helper()
	testtool.Need(t, "ncgen", "netcdf-bin")
	src := filepath.Join(dir, name+".cdl")
	out := filepath.Join(dir, name+".nc")
	if err := os.WriteFile(src, []byte(cdl), 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command("ncgen", "-o", out, src).CombinedOutput(); err != nil {
		t.Fatalf("ncgen: %v: %s", err, b)
	}
	return out
}

// baseCDL is a 3 x 4 regular grid, stored with descending latitude and
// longitudes in 0..360, three steps (one gap), packed heights in cm.
const baseCDL = `netcdf a {
dimensions:
  time = UNLIMITED ; lat = 3 ; lon = 4 ;
variables:
  double time(time) ; time:units = "TUNITS" ; time:calendar = "CAL" ; time:standard_name = "time" ;
  float lat(lat) ; lat:standard_name = "latitude" ; lat:units = "degrees_north" ;
  float lon(lon) ; lon:standard_name = "longitude" ; lon:units = "degrees_east" ;
  short hs(time, lat, lon) ; hs:standard_name = "HSNAME" ; hs:units = "HSUNITS" ; hs:scale_factor = 0.5f ; hs:add_offset = 1.0f ; hs:_FillValue = -32767s ;
  float tp(time, lat, lon) ; tp:standard_name = "sea_surface_wave_period_at_variance_spectral_density_maximum" ; tp:units = "s" ; tp:_FillValue = -999.f ;
  float depth(lat, lon) ; depth:standard_name = "sea_floor_depth_below_sea_surface" ; depth:units = "m" ;
data:
  time = TIMES ;
  lat = LATS ;
  lon = 350, 355, 0, 5 ;
  hs = HSDATA ;
  tp = 8,8,8,8, 8,8,8,8, 8,8,8,-999, 9,9,9,9, 9,9,9,9, 9,9,9,9, 10,10,10,10,10,10,10,10,10,10,10,10 ;
  depth = 10, 20, 30, 40, 50, 60, 70, 80, 90, 100, 110, 120 ;
}
`

const hsData = "100,110,120,130, 140,150,160,_, 170,180,190,200,  100,110,120,130, 140,150,160,_, 170,180,190,200,  100,110,120,130, 140,150,160,_, 170,180,190,200"

func cdl(repl ...string) string {
	def := map[string]string{"TUNITS": "hours since 2001-01-01 00:00:00", "CAL": "noleap", "TIMES": "0, 3, 9",
		"LATS": "52, 51, 50", "HSNAME": "sea_surface_wave_significant_height", "HSUNITS": "cm", "HSDATA": hsData}
	for i := 0; i+1 < len(repl); i += 2 {
		def[repl[i]] = repl[i+1]
	}
	s := baseCDL
	for k, v := range def {
		s = strings.ReplaceAll(s, k, v)
	}
	return s
}

// The values read back equal what ncgen wrote, unpacked by CF's rule
// (CF 1.8 section 8.1: value = packed * scale_factor + add_offset), converted
// from cm to m, and placed on swellgrid's canonical cells.
func TestReadBackPlacementAndUnpacking(t *testing.T) {
	dir := t.TempDir()
	p := ncgenFile(t, dir, "a", cdl())
	cat, err := Open([]string{p}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if cat.Steps != 3 || cat.StepSeconds != 3*3600 || len(cat.Gaps) != 1 || cat.Gaps[0].Hours != 3 || cat.Gaps[0].First != "2001-01-01 06:00:00" {
		t.Fatalf("time axis: steps %d step %d gaps %+v", cat.Steps, cat.StepSeconds, cat.Gaps)
	}
	// Depth, canonical cell 0 = lat 50 (file row 2), lon -10 (file column 0).
	if cat.Depth[0] != 90 || cat.Depth[11] != 40 {
		t.Errorf("depth placement: %v", cat.Depth)
	}
	out := make(chan *Block, 4)
	go func() {
		if err := cat.Read(context.Background(), ReadRange{MaxSteps: 2}, out); err != nil {
			t.Error(err)
		}
		close(out)
	}()
	var blocks []*Block
	for b := range out {
		blocks = append(blocks, b)
	}
	if len(blocks) != 2 || blocks[0].NT != 2 || blocks[1].NT != 1 || !blocks[1].LastOfFile {
		t.Fatalf("blocks: %d", len(blocks))
	}
	hs := blocks[0].Bulk[Hm0]
	// file (row 2, col 0) = 170 -> (170*0.5 + 1) cm = 0.86 m
	if got := hs[0]; math.Abs(got-0.86) > 1e-12 {
		t.Errorf("hs cell 0 = %v, want 0.86", got)
	}
	// canonical (iy 1, ix 3) = file (row 1, col 3) = fill
	if got := hs[1*4+3]; !math.IsNaN(got) {
		t.Errorf("fill not missing: %v", got)
	}
	// tp canonical (iy 0, ix 3) at t=0 = file (row 2, col 3) = -999 fill
	if got := blocks[0].Bulk[Tp][3]; !math.IsNaN(got) {
		t.Errorf("tp fill not missing: %v", got)
	}
	if got := blocks[1].Bulk[Tp][5]; got != 10 {
		t.Errorf("tp step 2 = %v, want 10", got)
	}
	// Partial cell range 5..9: same values, shifted.
	out2 := make(chan *Block, 4)
	go func() { cat.Read(context.Background(), ReadRange{C0: 5, C1: 9, MaxSteps: 8}, out2); close(out2) }()
	b := <-out2
	for range out2 {
	}
	for c := 5; c < 9; c++ {
		a, x := hs[c], b.Bulk[Hm0][c-5]
		if !(a == x || math.IsNaN(a) && math.IsNaN(x)) {
			t.Errorf("cell %d: range read %v vs full %v", c, x, a)
		}
	}
}

// Each bad input stops Open (or, for a variable without any value, the
// read of the whole grid) with a message that names the file, the variable
// where there is one, and what to do.
func TestBadInputErrors(t *testing.T) {
	dir := t.TempDir()
	good := ncgenFile(t, dir, "good", cdl())
	notNC := filepath.Join(dir, "random.nc")
	os.WriteFile(notNC, []byte("this is not a NetCDF file at all, just text"), 0o644)
	raw, _ := os.ReadFile(good)
	trunc := filepath.Join(dir, "trunc.nc")
	os.WriteFile(trunc, raw[:len(raw)/2], 0o644)
	cases := []struct {
		name  string
		files []string
		want  []string
	}{
		{"not netcdf", []string{notNC}, []string{"random.nc", "not a NetCDF file"}},
		{"truncated", []string{trunc}, []string{"trunc.nc", "truncated"}},
		{"no role", []string{ncgenFile(t, dir, "norole", cdl("HSNAME", "sea_surface_height"))}, []string{"norole.nc", "no variable for the wave height"}},
		{"unknown calendar", []string{ncgenFile(t, dir, "cal", cdl("CAL", "lunar"))}, []string{"cal.nc", `"time"`, "unknown calendar"}},
		{"malformed units", []string{ncgenFile(t, dir, "tu", cdl("TUNITS", "hours after the storm"))}, []string{"tu.nc", `"time"`, "since"}},
		{"unconvertible units", []string{ncgenFile(t, dir, "un", cdl("HSUNITS", "kg"))}, []string{"un.nc", `"hs"`, "not convertible to m", "set units"}},
		{"all fill", []string{ncgenFile(t, dir, "fill", cdl("HSDATA", strings.Repeat("_,", 35)+"_"))}, []string{"fill.nc", `"hs"`, "fill value"}},
		{"non-increasing time", []string{ncgenFile(t, dir, "back", cdl("TIMES", "0, 6, 3"))}, []string{"back.nc", "goes back"}},
		{"grids differ", []string{good, ncgenFile(t, dir, "other", cdl("LATS", "53, 52, 51", "TIMES", "24, 27, 30"))}, []string{"good.nc", "other.nc", "different grids"}},
		{"overlap", []string{good, ncgenFile(t, dir, "over", cdl("TIMES", "6, 12, 15"))}, []string{"good.nc", "over.nc", "overlap"}},
		{"duplicate", []string{good, ncgenFile(t, dir, "dup", cdl())}, []string{"good.nc", "dup.nc", "same time"}},
		{"dimension not the grid's", []string{ncgenFile(t, dir, "dim", strings.Replace(strings.Replace(cdl(), "lon = 4 ;", "lon = 4 ; x = 4 ;", 1), "float tp(time, lat, lon)", "float tp(time, lat, x)", 1))}, []string{"dim.nc", `"tp"`, "dimensions"}},
	}
	for _, c := range cases {
		cat, err := Open(c.files, Options{})
		if err == nil {
			// Whether a variable holds any value is found while reading
			// (the catalog reads metadata only): read the record through.
			out := make(chan *Block, 16)
			go func() {
				for range out {
				}
			}()
			err = cat.Read(context.Background(), ReadRange{}, out)
			close(out)
		}
		if err == nil {
			t.Errorf("%s: accepted", c.name)
			continue
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: message %q lacks %q", c.name, err, w)
			}
		}
		t.Logf("%-24s %v", c.name, err)
	}
}

// Files are sorted by their first time, whatever their names; the record is
// their concatenation.
func TestFilesSortedByTime(t *testing.T) {
	dir := t.TempDir()
	a := ncgenFile(t, dir, "z_first", cdl())
	b := ncgenFile(t, dir, "a_second", cdl("TIMES", "12, 15, 18"))
	cat, err := Open([]string{b, a}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if cat.Files[0].Path != a || cat.Steps != 6 || len(cat.Gaps) != 1 {
		t.Errorf("order %s, steps %d, gaps %+v", cat.Files[0].Path, cat.Steps, cat.Gaps)
	}
}

// A sea_binary_mask variable (CF standard name table: 1 = sea, 0 = land)
// masks the cells it marks as land, beyond those without depth.
func TestSeaBinaryMask(t *testing.T) {
	dir := t.TempDir()
	c := strings.Replace(cdl(), "  float depth(lat, lon) ;", "  byte sea(lat, lon) ; sea:standard_name = \"sea_binary_mask\" ;\n  float depth(lat, lon) ;", 1)
	c = strings.Replace(c, "  depth = 10,", "  sea = 1,1,1,1, 1,1,1,1, 1,1,1,0 ;\n  depth = 10,", 1)
	p := ncgenFile(t, dir, "mask", c)
	cat, err := Open([]string{p}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// file (row 2, col 3) = lat 50, lon 5 = canonical cell 3
	n := 0
	for i, m := range cat.Masked {
		if m {
			n++
			if i != 3 {
				t.Errorf("cell %d masked", i)
			}
		}
	}
	if n != 1 {
		t.Errorf("%d cells masked, want 1", n)
	}
}

// An infinite valid_min/valid_max, as some writers store for "no limit", is an
// open bound (CF 1.8 section 2.5.1 defines the valid range; infinities bound
// nothing), so every finite value stays valid; a NaN bound is refused by name.
// Files written by Debian's ncgen.
func TestInfiniteValidBoundsAreOpen(t *testing.T) {
	dir := t.TempDir()
	inf := strings.Replace(cdl(), `tp:_FillValue = -999.f ;`, `tp:_FillValue = -999.f ; tp:valid_min = -Infinityf ; tp:valid_max = Infinityf ;`, 1)
	cat, err := Open([]string{ncgenFile(t, dir, "inf", inf)}, Options{})
	if err != nil {
		t.Fatalf("infinite valid bounds refused: %v", err)
	}
	out := make(chan *Block, 4)
	go func() { cat.Read(context.Background(), ReadRange{MaxSteps: 8}, out); close(out) }()
	b := <-out
	for range out {
	}
	// tp canonical cell 5 at step 0 = file row 1 = 8 s; the -999 fill stays missing.
	if got := b.Bulk[Tp][5]; got != 8 {
		t.Errorf("tp with open valid bounds = %v, want 8", got)
	}
	if got := b.Bulk[Tp][3]; !math.IsNaN(got) {
		t.Errorf("tp fill under open bounds = %v, want missing", got)
	}
	nan := strings.Replace(cdl(), `tp:_FillValue = -999.f ;`, `tp:_FillValue = -999.f ; tp:valid_max = NaNf ;`, 1)
	_, err = Open([]string{ncgenFile(t, dir, "nanmax", nan)}, Options{})
	if err == nil || !strings.Contains(err.Error(), "nanmax.nc") || !strings.Contains(err.Error(), "valid_max is NaN") {
		t.Errorf("NaN valid_max: got %v, want a refusal naming the file and attribute", err)
	}
}
