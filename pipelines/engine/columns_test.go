package engine

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
	"swellgrid/internal/testtool"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// readRef decodes a reference JSON file into v.
func readRef(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}

// rerunReference reruns a reference script of testdata (Debian's python3
// with modules; under CI a missing one fails the test) in its own directory
// with a temporary output path as its argument, and decodes the committed
// reference into committed and the script's new output into again.
func rerunReference(t *testing.T, script, committedPath string, committed, again any, modules ...string) {
	t.Helper()
	py := testtool.NeedPython(t, modules...)
	tmp := filepath.Join(t.TempDir(), "reference.json")
	cmd := exec.Command(py, filepath.Base(script), tmp)
	cmd.Dir = filepath.Dir(script)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("%s: %v\n%s", script, err, out)
	}
	readRef(t, committedPath, committed)
	readRef(t, tmp, again)
}

// readInts reads one integer column of a Parquet file with the Arrow reader.
func readInts(t *testing.T, path, col string) []int64 {
	t.Helper()
	m, err := parquetread.Columns(path, col)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]int64, len(m[col]))
	for i, v := range m[col] {
		switch x := v.(type) {
		case int64:
			out[i] = x
		case int32:
			out[i] = int64(x)
		default:
			t.Fatalf("%s: column %s row %d: %T", path, col, i, v)
		}
	}
	return out
}

// angleDiff is the signed smallest difference a - b in degrees.
func angleDiff(a, b float64) float64 {
	return math.Mod(a-b+540, 360) - 180
}

// Spectra written by Debian's python3-netcdf4 with missing bins in the first,
// a middle and the last stored position, a raw NaN, +Inf and a negative bin,
// and whole steps missing: each such bin counts as 0 and in bad_bins, a
// spectrum missing whole is a missing step, and power, Hm0, coverage and the
// mean wave direction (first-order directional moments) equal the numpy
// computation of testdata/spectral_badbins/make_fixture.py (reference.json)
// on a two-peaked sea (wind sea from 270 deg, swell from 0 deg).
func TestSpectralBadBinsAndMeanDirectionAgainstNumpy(t *testing.T) {
	out := t.TempDir()
	s := testSpec(t, "testdata/spectral_badbins/spectral_badbins.nc", out)
	s.Run.Workers = 1
	mustRun(t, s)
	// the per-step mean directions are summed exactly (integer sums), so the
	// tables do not depend on how the cells are split between workers
	out3 := t.TempDir()
	s3 := testSpec(t, "testdata/spectral_badbins/spectral_badbins.nc", out3)
	s3.Run.Workers = 3
	mustRun(t, s3)
	runcheck.SameBytes(t, "workers 1 vs 3", runcheck.ParquetFiles(t, out), runcheck.ParquetFiles(t, out3))
	var ref struct {
		Stations []struct {
			Station         int
			StepsValid      int     `json:"steps_valid"`
			Coverage        float64 `json:"coverage"`
			BadBins         int64   `json:"bad_bins"`
			PowerMeanKWm    float64 `json:"power_mean_kw_m"`
			Hm0MeanM        float64 `json:"hm0_mean_m"`
			DirMeanDeg      float64 `json:"dir_mean_deg"`
			DirPeakPowerDeg float64 `json:"dir_peak_power_deg"`
		}
	}
	readRef(t, "../../testdata/spectral_badbins/reference.json", &ref)
	cells := filepath.Join(out, "cells.parquet")
	pw := runcheck.ReadColumn(t, cells, "power_mean_kw_m")
	hm := runcheck.ReadColumn(t, cells, "hm0_mean_m")
	cov := runcheck.ReadColumn(t, cells, "coverage")
	dir := runcheck.ReadColumn(t, cells, "dir_mean_deg")
	dmax := runcheck.ReadColumn(t, cells, "dir_max_power_deg")
	bad := readInts(t, cells, "bad_bins")
	if len(pw) != len(ref.Stations) {
		t.Fatalf("%d cells, reference has %d stations", len(pw), len(ref.Stations))
	}
	for _, r := range ref.Stations {
		i := r.Station
		if bad[i] != r.BadBins {
			t.Errorf("station %d: bad_bins %d, numpy counts %d", i, bad[i], r.BadBins)
		}
		if math.Abs(cov[i]-r.Coverage) > 1e-9 {
			t.Errorf("station %d: coverage %.6f, numpy %.6f (%d valid steps)", i, cov[i], r.Coverage, r.StepsValid)
		}
		if rel := math.Abs(pw[i]-r.PowerMeanKWm) / r.PowerMeanKWm; rel > 1e-5 {
			t.Errorf("station %d: power_mean_kw_m %.6f, numpy %.6f", i, pw[i], r.PowerMeanKWm)
		}
		if rel := math.Abs(hm[i]-r.Hm0MeanM) / r.Hm0MeanM; rel > 1e-5 {
			t.Errorf("station %d: hm0_mean_m %.6f, numpy %.6f", i, hm[i], r.Hm0MeanM)
		}
		// directions are summed at 0.1 deg resolution (climate.DirResDeg)
		if d := angleDiff(dir[i], r.DirMeanDeg); math.Abs(d) > 0.06 {
			t.Errorf("station %d: dir_mean_deg %.3f, numpy mean direction %.3f (%.3f deg off)", i, dir[i], r.DirMeanDeg, d)
		}
		// the direction of maximum directional power is a different quantity,
		// 20 deg away on this sea; numpy found it on a 0.01 deg grid
		if d := angleDiff(dmax[i], r.DirPeakPowerDeg); math.Abs(d) > 0.02 {
			t.Errorf("station %d: dir_max_power_deg %.3f, numpy %.3f", i, dmax[i], r.DirPeakPowerDeg)
		}
	}
}

// With two months of the record missing (the files of 2001-06 and 2001-07
// left out of testdata/bulk_monthly), monthly.parquet still has a year_month
// row for each of the 24 year-months from 2001-01 to 2002-12 at every cell:
// the missing ones with coverage 0, no valid hours, null means and excluded,
// so that the June and July climatologies are the 2002 months alone.
func TestMonthlyRowForEveryYearMonth(t *testing.T) {
	files, _ := filepath.Glob("../../testdata/bulk_monthly/*.nc")
	var keep []string
	for _, f := range files {
		if !strings.Contains(f, "2001-06") && !strings.Contains(f, "2001-07") {
			keep = append(keep, f)
		}
	}
	if len(keep) != 22 {
		t.Fatalf("fixture: %d files kept", len(keep))
	}
	out := t.TempDir()
	s := runspec.DefaultSpec()
	s.Input.Paths, s.Output.Dir = keep, out
	mustRun(t, s)
	path := filepath.Join(out, "monthly.parquet")
	m, err := parquetread.Columns(path, "cell_id", "period", "year", "month", "power_mean_kw_m", "hm0_mean_m", "valid_hours", "coverage", "excluded")
	if err != nil {
		t.Fatal(err)
	}
	ids := readInts(t, path, "cell_id")
	years, months := readInts(t, path, "year"), readInts(t, path, "month")
	pw := runcheck.ReadColumn(t, path, "power_mean_kw_m")
	hrs := runcheck.ReadColumn(t, path, "valid_hours")
	cov := runcheck.ReadColumn(t, path, "coverage")
	ym := map[int64][]string{}
	clim := map[[2]int64]float64{}
	byYM := map[[3]int64]float64{}
	for i := range ids {
		period := m["period"][i].(string)
		switch period {
		case "year_month":
			key := fmt.Sprintf("%04d-%02d", years[i], months[i])
			ym[ids[i]] = append(ym[ids[i]], key)
			byYM[[3]int64{ids[i], years[i], months[i]}] = pw[i]
			gap := years[i] == 2001 && (months[i] == 6 || months[i] == 7)
			excl := m["excluded"][i].(bool)
			if gap && (cov[i] != 0 || hrs[i] != 0 || !math.IsNaN(pw[i]) || !excl) {
				t.Errorf("cell %d %s (no file): coverage %g, valid_hours %g, power %g, excluded %v; want 0, 0, null, true", ids[i], key, cov[i], hrs[i], pw[i], excl)
			}
			if !gap && !math.IsNaN(pw[i]) && !(cov[i] > 0.99) {
				t.Errorf("cell %d %s: coverage %g with data for the whole month", ids[i], key, cov[i])
			}
		case "calendar_month":
			clim[[2]int64{ids[i], months[i]}] = pw[i]
		}
	}
	var want []string
	for y := 2001; y <= 2002; y++ {
		for mo := 1; mo <= 12; mo++ {
			want = append(want, fmt.Sprintf("%04d-%02d", y, mo))
		}
	}
	if len(ym) != 24 {
		t.Fatalf("%d cells with year_month rows, the grid has 24 sea cells (6 land)", len(ym))
	}
	for id, got := range ym {
		if strings.Join(got, " ") != strings.Join(want, " ") {
			t.Errorf("cell %d: year_month rows %v, want every month 2001-01 .. 2002-12", id, got)
		}
		for _, mo := range []int64{6, 7} {
			if c, y := clim[[2]int64{id, mo}], byYM[[3]int64{id, 2002, mo}]; !math.IsNaN(y) && math.Abs(c-y) > 1e-9*y {
				t.Errorf("cell %d: month %d climatology %g, the only month with data (2002) has %g", id, mo, c, y)
			}
		}
	}
}

type deviceRef struct {
	Lon, Lat           float64
	AEPMWh             float64 `json:"aep_mwh"`
	CF                 float64 `json:"cf"`
	OutsideEnergyShare float64 `json:"outside_energy_share"`
	Steps              int
}

// checkDevice compares a device's columns of cells.parquet with the numpy
// reference, cell by cell (matched by position).
func checkDevice(t *testing.T, cells, dev string, ref []deviceRef) {
	t.Helper()
	lon, lat := runcheck.ReadColumn(t, cells, "lon"), runcheck.ReadColumn(t, cells, "lat")
	aep := runcheck.ReadColumn(t, cells, "aep_"+dev+"_mwh")
	cf := runcheck.ReadColumn(t, cells, "cf_"+dev)
	out := runcheck.ReadColumn(t, cells, "energy_outside_matrix_"+dev+"_frac")
	if len(ref) == 0 {
		t.Fatalf("%s: empty reference", dev)
	}
	for _, r := range ref {
		i := -1
		for k := range lon {
			if math.Abs(lon[k]-r.Lon) < 1e-9 && math.Abs(lat[k]-r.Lat) < 1e-9 {
				i = k
			}
		}
		if i < 0 {
			t.Fatalf("%s: no cell at %g, %g", dev, r.Lon, r.Lat)
		}
		// device power is summed in quanta of 2^-16 kW, J in 1/16 W/m (climate/fixed.go)
		if math.Abs(aep[i]-r.AEPMWh) > 1e-7*r.AEPMWh {
			t.Errorf("%s cell %d (%g, %g): aep %.6f MWh, numpy %.6f", dev, i, r.Lon, r.Lat, aep[i], r.AEPMWh)
		}
		if math.Abs(cf[i]-r.CF) > 1e-7*r.CF {
			t.Errorf("%s cell %d: cf %.9f, numpy %.9f (on rated_kw 750)", dev, i, cf[i], r.CF)
		}
		if math.Abs(out[i]-r.OutsideEnergyShare) > 1e-7 {
			t.Errorf("%s cell %d: energy outside the matrix %.8f, numpy %.8f", dev, i, out[i], r.OutsideEnergyShare)
		}
	}
}

// manifestAssumptions returns the assumptions of a run's manifest.
func manifestAssumptions(t *testing.T, dir string) string {
	t.Helper()
	var m struct{ Assumptions []string }
	readRef(t, filepath.Join(dir, "manifest.json"), &m)
	return strings.Join(m.Assumptions, "\n")
}

// A power matrix over Tp (said in the CSV header, or in the spec), with the
// data sheet's rated power (rated_kw 750 kW, above the matrix maximum of 661
// kW), by bin lookup and bilinear interpolation: AEP, capacity factor and the
// share of incident energy outside the matrix equal the numpy computation of
// testdata/devices/make_reference.py, which reimplements the lookup from its
// documentation (reference.json). With Tp in the files it is used directly;
// on a file without Tp (bulk_no_tp.nc, written by python3-netcdf4) through
// Te/Tp = 0.9, and the manifest says which.
func TestDeviceYieldAgainstNumpy(t *testing.T) {
	var ref struct {
		BulkMonthly map[string][]deviceRef `json:"bulk_monthly"`
		NoTp        map[string][]deviceRef `json:"no_tp"`
	}
	readRef(t, "../../testdata/devices/reference.json", &ref)
	matrix, _ := filepath.Abs("../../testdata/devices/tp_matrix.csv")

	out := t.TempDir()
	s := testSpec(t, "testdata/bulk_monthly", out)
	s.Devices = []runspec.DeviceSpec{
		{Name: "tpbin", PowerMatrix: matrix, RatedKW: 750},
		{Name: "tpbil", PowerMatrix: matrix, Lookup: "bilinear", Period: "tp", RatedKW: 750},
	}
	mustRun(t, s)
	cells := filepath.Join(out, "cells.parquet")
	checkDevice(t, cells, "tpbin", ref.BulkMonthly["tpbin"])
	checkDevice(t, cells, "tpbil", ref.BulkMonthly["tpbil"])
	if a := manifestAssumptions(t, out); !strings.Contains(a, "device tpbin: power matrix over Tp, with each step's Tp from the files") ||
		!strings.Contains(a, "rated power 750 kW (rated_kw)") {
		t.Errorf("manifest assumptions do not say how the matrix was read:\n%s", a)
	}

	out2 := t.TempDir()
	s2 := testSpec(t, "testdata/devices/bulk_no_tp.nc", out2)
	s2.Devices = []runspec.DeviceSpec{{Name: "tpbin", PowerMatrix: matrix, RatedKW: 750}}
	mustRun(t, s2)
	checkDevice(t, filepath.Join(out2, "cells.parquet"), "tpbin", ref.NoTp["tpbin"])
	if a := manifestAssumptions(t, out2); !strings.Contains(a, "Tp = Te / 0.9") {
		t.Errorf("manifest does not record the Te/Tp assumption of the Tp matrix:\n%s", a)
	}

	// the spec and the header disagree: refused before any output, as an input error
	s3 := testSpec(t, "testdata/devices/bulk_no_tp.nc", t.TempDir())
	s3.Devices = []runspec.DeviceSpec{{Name: "tpbin", PowerMatrix: matrix, Period: "te"}}
	_, err := Run(context.Background(), s3, Options{})
	if err == nil || fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), `header of its power matrix`) {
		t.Errorf("period te against a tp header: %v", err)
	}
	// rated power below the matrix maximum
	s4 := testSpec(t, "testdata/devices/bulk_no_tp.nc", t.TempDir())
	s4.Devices = []runspec.DeviceSpec{{Name: "tpbin", PowerMatrix: matrix, RatedKW: 600}}
	if _, err := Run(context.Background(), s4, Options{}); err == nil || fault.KindOf(err) != fault.BadInput || !strings.Contains(err.Error(), "below the largest entry") {
		t.Errorf("rated_kw 600 below the 661 kW maximum: %v", err)
	}
}

// The device keys period and rated_kw are checked with the rest of the spec,
// from TOML, naming the key.
func TestDeviceSpecKeys(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "m.csv")
	if err := os.WriteFile(csv, []byte("hm0_m\\tp_s, 6, 8\n1, 10, 20\n2, 40, 80\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	base := "[input]\npaths = [\"x\"]\n[[device]]\nname = \"wec\"\npower_matrix = \"m.csv\"\n"
	for _, c := range []struct{ extra, want string }{
		{"period = \"tz\"\n", "device[0].period"},
		{"rated_kw = -1.0\n", "device[0].rated_kw"},
		{"period = \"tp\"\nrated_kw = 750.0\n", ""},
	} {
		p := filepath.Join(dir, "s.toml")
		if err := os.WriteFile(p, []byte(base+c.extra), 0o644); err != nil {
			t.Fatal(err)
		}
		s, err := runspec.LoadSpec(p)
		if err == nil {
			_, err = s.Resolve()
		}
		if c.want == "" {
			if err != nil {
				t.Errorf("%q: %v", c.extra, err)
			} else if s.Devices[0].Period != "tp" || s.Devices[0].RatedKW != 750 {
				t.Errorf("%q read as %+v", c.extra, s.Devices[0])
			}
			continue
		}
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%q: want an error naming %s, got %v", c.extra, c.want, err)
		}
	}
}
