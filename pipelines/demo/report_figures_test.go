package demo

import (
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	sgreport "swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
)

// The site figures of the demo's report plot the values of the tables, read
// here with the Arrow reader (parquetread), not with the report's reader:
// the design contours equal design.parquet point for point, per return
// period, for the grid's [[site]] cells and for spectral points; the rose's
// sectors equal directions.parquet; the energy-band bars equal
// aep_bands.parquet. The run summary states the run time.
func TestReportFiguresEqualTables(t *testing.T) {
	dir, _ := demoRun(t)
	for _, name := range []string{"atlas-grid", "atlas-spectral-points"} {
		run := filepath.Join(dir, name)
		r, err := rundir.Open(run, nil)
		if err != nil {
			t.Fatal(err)
		}
		sites, _ := sgreport.Sites(r)
		if len(sites) == 0 {
			t.Fatalf("%s: no sites", name)
		}
		des, err := parquetread.Columns(filepath.Join(run, "design.parquet"), "cell_id", "return_period_y", "point", "hm0_m", "te_s")
		if err != nil {
			t.Fatal(err)
		}
		drs, err := parquetread.Columns(filepath.Join(run, "directions.parquet"), "cell_id", "sector", "sector_centre_deg", "sector_from_deg", "sector_to_deg", "power_share", "occurrence_share")
		if err != nil {
			t.Fatal(err)
		}
		bands, err := parquetread.Columns(filepath.Join(run, "aep_bands.parquet"), "cell_id", "device", "horizon_y", "aep_p50_mwh", "aep_p90_mwh", "aep_p99_mwh", "u_total_frac")
		if err != nil {
			t.Fatal(err)
		}
		nDesign, nRose, nBands := 0, 0, 0
		for _, s := range sites {
			vals, err := sgreport.PlottedValues(r, s)
			if err != nil {
				t.Fatal(err)
			}
			// design.parquet rows of the cell, by return period in point order
			type pt struct {
				i         int64
				hm0, te_s float64
			}
			want := map[float64][]pt{}
			for i := range des["cell_id"] {
				if des["cell_id"][i].(int64) == int64(s.Cell) {
					T := des["return_period_y"][i].(float64)
					want[T] = append(want[T], pt{des["point"][i].(int64), runcheck.Num(des["hm0_m"][i]), runcheck.Num(des["te_s"][i])})
				}
			}
			got, ok := vals["site_"+s.Slug+"_design_contours_hm0_te"].(sgreport.DesignSeries)
			if len(want) > 0 && !ok {
				t.Errorf("%s site %s: design.parquet has contours, the page has no design figure", name, s.Name)
			}
			if ok {
				nDesign++
				if len(got) != len(want) {
					t.Errorf("%s site %s: %d contours drawn, design.parquet has %d", name, s.Name, len(got), len(want))
				}
				for T, pts := range want {
					sort.Slice(pts, func(a, b int) bool { return pts[a].i < pts[b].i })
					xy := got[T]
					if len(xy) != len(pts) {
						t.Errorf("%s site %s T=%g: %d points drawn, the table has %d", name, s.Name, T, len(xy), len(pts))
						continue
					}
					for k, p := range pts {
						if xy[k].X != p.te_s || xy[k].Y != p.hm0 {
							t.Errorf("%s site %s T=%g point %d: drawn (%g s, %g m), design.parquet (%g s, %g m)", name, s.Name, T, k, xy[k].X, xy[k].Y, p.te_s, p.hm0)
						}
					}
				}
			}
			// aep_bands.parquet rows of the cell with a P50, in table order
			var brows []int
			for i := range bands["cell_id"] {
				if bands["cell_id"][i].(int64) == int64(s.Cell) && !math.IsNaN(runcheck.Num(bands["aep_p50_mwh"][i])) {
					brows = append(brows, i)
				}
			}
			eb, ok := vals["site_"+s.Slug+"_energy_bands"].([]sgreport.EnergyBand)
			if len(brows) > 0 != ok {
				t.Errorf("%s site %s: %d energy-band rows, band figure drawn: %v", name, s.Name, len(brows), ok)
			} else if ok {
				nBands++
				if len(eb) != len(brows) {
					t.Errorf("%s site %s: %d band groups drawn, aep_bands.parquet has %d", name, s.Name, len(eb), len(brows))
				}
				for k, i := range brows[:min(len(brows), len(eb))] {
					g := eb[k]
					if g.Device != bands["device"][i].(string) || g.HorizonY != runcheck.Num(bands["horizon_y"][i]) || !runcheck.SameNum(g.P50, runcheck.Num(bands["aep_p50_mwh"][i])) ||
						!runcheck.SameNum(g.P90, runcheck.Num(bands["aep_p90_mwh"][i])) || !runcheck.SameNum(g.P99, runcheck.Num(bands["aep_p99_mwh"][i])) || !runcheck.SameNum(g.TotalFrac, runcheck.Num(bands["u_total_frac"][i])) {
						t.Errorf("%s site %s band %d: drawn %+v, aep_bands.parquet row %d differs", name, s.Name, k, g, i)
					}
				}
			}
			// directions.parquet rows of the cell
			var rows []int
			for i := range drs["cell_id"] {
				if drs["cell_id"][i].(int64) == int64(s.Cell) {
					rows = append(rows, i)
				}
			}
			rose, ok := vals["site_"+s.Slug+"_rose_power_occurrence"].([]sgreport.RoseSector)
			if len(rows) > 0 != ok {
				t.Errorf("%s site %s: %d direction rows, rose drawn: %v", name, s.Name, len(rows), ok)
				continue
			}
			if !ok {
				continue
			}
			nRose++
			if len(rose) != len(rows) {
				t.Errorf("%s site %s: %d sectors drawn, directions.parquet has %d", name, s.Name, len(rose), len(rows))
				continue
			}
			var sum float64
			for k, i := range rows {
				g := rose[k]
				if g.Centre != runcheck.Num(drs["sector_centre_deg"][i]) || g.From != runcheck.Num(drs["sector_from_deg"][i]) || g.To != runcheck.Num(drs["sector_to_deg"][i]) ||
					!runcheck.SameNum(g.Power, runcheck.Num(drs["power_share"][i])) || !runcheck.SameNum(g.Occ, runcheck.Num(drs["occurrence_share"][i])) {
					t.Errorf("%s site %s sector %d: drawn %+v, directions.parquet row %d differs", name, s.Name, k, g, i)
				}
				sum += g.Power
			}
			if math.Abs(sum-1) > 1e-9 {
				t.Errorf("%s site %s: power shares sum to %g", name, s.Name, sum)
			}
		}
		if nDesign == 0 || nRose == 0 {
			t.Errorf("%s: %d design figures and %d roses checked, want some of each", name, nDesign, nRose)
		}
		if name == "atlas-grid" && nBands == 0 {
			t.Errorf("%s: no site's energy-band figure checked (the grid atlas has a device)", name)
		}
		t.Logf("%s: %d sites, %d design figures, %d roses and %d energy-band figures equal to the tables", name, len(sites), nDesign, nRose, nBands)
		idx, err := os.ReadFile(filepath.Join(run, "report", "index.html"))
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(idx), "<th>Run time</th><td>") || !strings.Contains(string(idx), "read and accumulate") {
			t.Errorf("%s: the summary does not state the run time", name)
		}
	}
}
