package demo

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"errors"
	"fmt"
	"html"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"testing"

	sgreport "swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/internal/parquetread"
	"swellgrid/internal/runcheck"
)

// The report's figures added for issue 33 plot the values of the tables,
// read here with the Arrow reader (parquetread) and encoding/json, not with
// the report's reader: the exceedance curves (log axis) equal
// exceedance.parquet's levels with a share above 0; the year-by-year figure
// equals annual_maxima.parquet (year, Hm0, excluded) and annual.parquet
// (mean power of the resource rows, each device's energy); the weather
// windows by month equal windows.parquet, and so does the site page's
// windows table as printed; the maps mark the sites of manifest.json and the
// stations of validation.json at their positions. Every SVG of the report
// parses with encoding/xml.
func TestReportYearWindowsExceedanceEqualTables(t *testing.T) {
	dir, _ := demoRun(t)
	nYear, nWin, nExc := 0, 0, 0
	for _, name := range []string{"atlas-grid", "atlas-spectral-points"} {
		run := filepath.Join(dir, name)
		r, err := rundir.Open(run, nil)
		if err != nil {
			t.Fatal(err)
		}
		sites, _ := sgreport.Sites(r)
		read := func(file string, cols ...string) map[string][]any {
			c, err := parquetread.Columns(filepath.Join(run, file), cols...)
			if err != nil {
				t.Fatal(err)
			}
			return c
		}
		exc := read("exceedance.parquet", "cell_id", "variable", "value", "share_exceeded")
		am := read("annual_maxima.parquet", "cell_id", "year", "hm0_m", "excluded")
		an := read("annual.parquet", "cell_id", "year", "device", "power_mean_kw_m", "energy_mwh", "excluded")
		win := read("windows.parquet", "cell_id", "hm0_limit_m", "min_duration_h", "month", "fraction_in_windows", "windows_per_month")
		for _, s := range sites {
			cell := int64(s.Cell)
			vals, err := sgreport.PlottedValues(r, s)
			if err != nil {
				t.Fatal(err)
			}
			where := fmt.Sprintf("%s site %s", name, s.Name)

			// exceedance: per variable, the levels exceeded, in level order
			ex, ok := vals["site_"+s.Slug+"_exceedance_hm0_power"].(sgreport.ExceedanceSeries)
			if !ok {
				t.Errorf("%s: no exceedance figure", where)
			} else {
				nExc++
				for _, v := range []string{"hm0_m", "power_kw_m"} {
					type pt struct{ x, y float64 }
					var want []pt
					for i := range exc["cell_id"] {
						if exc["cell_id"][i].(int64) == cell && exc["variable"][i] == v && runcheck.Num(exc["share_exceeded"][i]) > 0 {
							want = append(want, pt{runcheck.Num(exc["value"][i]), 100 * runcheck.Num(exc["share_exceeded"][i])})
						}
					}
					sort.SliceStable(want, func(a, b int) bool { return want[a].x < want[b].x })
					got := ex[v]
					if len(got) != len(want) || len(want) == 0 {
						t.Errorf("%s %s: %d exceedance points drawn, the table has %d above 0", where, v, len(got), len(want))
						continue
					}
					for k := range want {
						if got[k].X != want[k].x || !runcheck.SameNum(got[k].Y, want[k].y) {
							t.Errorf("%s %s point %d: drawn (%g, %g), exceedance.parquet (%g, %g)", where, v, k, got[k].X, got[k].Y, want[k].x, want[k].y)
						}
					}
				}
			}

			// year by year
			ys, ok := vals["site_"+s.Slug+"_year_by_year"].(*sgreport.AnnualSeries)
			if !ok {
				t.Errorf("%s: no year-by-year figure", where)
			} else {
				nYear++
				var wantMax []sgreport.YearValue
				for i := range am["cell_id"] {
					if am["cell_id"][i].(int64) == cell && am["hm0_m"][i] != nil {
						wantMax = append(wantMax, sgreport.YearValue{Year: am["year"][i].(int64), Value: runcheck.Num(am["hm0_m"][i]), Excluded: am["excluded"][i].(bool)})
					}
				}
				sameYears(t, where+" annual maxima", ys.MaxHm0, wantMax)
				var wantMean []sgreport.YearValue
				wantDev := map[string][]sgreport.YearValue{}
				for i := range an["cell_id"] {
					if an["cell_id"][i].(int64) != cell {
						continue
					}
					y, x := an["year"][i].(int64), an["excluded"][i].(bool)
					if d := an["device"][i].(string); d == "" {
						if an["power_mean_kw_m"][i] != nil {
							wantMean = append(wantMean, sgreport.YearValue{Year: y, Value: runcheck.Num(an["power_mean_kw_m"][i]), Excluded: x})
						}
					} else if an["energy_mwh"][i] != nil {
						wantDev[d] = append(wantDev[d], sgreport.YearValue{Year: y, Value: runcheck.Num(an["energy_mwh"][i]), Excluded: x})
					}
				}
				sameYears(t, where+" annual mean power", ys.MeanPower, wantMean)
				if len(ys.DeviceEnergy) != len(wantDev) {
					t.Errorf("%s: %d devices drawn, annual.parquet has %d", where, len(ys.DeviceEnergy), len(wantDev))
				}
				for d, w := range wantDev {
					sameYears(t, where+" energy of "+d, ys.DeviceEnergy[d], w)
				}
				if name == "atlas-grid" && len(wantDev) == 0 {
					t.Errorf("%s: no device energy per year in annual.parquet (the grid atlas has a device)", where)
				}
			}

			// weather windows by month: figure and the page's table
			wl, ok := vals["site_"+s.Slug+"_windows_by_month"].([]sgreport.WindowLine)
			if !ok {
				t.Errorf("%s: no windows figure", where)
				continue
			}
			nWin++
			type key struct{ lim, dur float64 }
			wantW := map[key]*sgreport.WindowLine{}
			var order []key
			for i := range win["cell_id"] {
				if win["cell_id"][i].(int64) != cell {
					continue
				}
				k := key{runcheck.Num(win["hm0_limit_m"][i]), runcheck.Num(win["min_duration_h"][i])}
				if wantW[k] == nil {
					wantW[k] = &sgreport.WindowLine{LimitM: k.lim, DurationH: k.dur}
					order = append(order, k)
				}
				m := win["month"][i].(int64) - 1
				wantW[k].Fraction[m], wantW[k].PerMonth[m] = runcheck.Num(win["fraction_in_windows"][i]), runcheck.Num(win["windows_per_month"][i])
			}
			if len(wl) != len(order) || len(order) == 0 {
				t.Errorf("%s: %d window criteria drawn, windows.parquet has %d", where, len(wl), len(order))
				continue
			}
			page, err := os.ReadFile(filepath.Join(run, "report", "site_"+s.Slug+".html"))
			if err != nil {
				t.Fatal(err)
			}
			for j, k := range order {
				g, w := wl[j], wantW[k]
				if g.LimitM != w.LimitM || g.DurationH != w.DurationH {
					t.Errorf("%s criterion %d: drawn %g m / %g h, table %g m / %g h", where, j, g.LimitM, g.DurationH, w.LimitM, w.DurationH)
				}
				for m := 0; m < 12; m++ {
					if !runcheck.SameNum(g.Fraction[m], w.Fraction[m]) || !runcheck.SameNum(g.PerMonth[m], w.PerMonth[m]) {
						t.Errorf("%s criterion %d month %d: drawn %g, %g; windows.parquet %g, %g", where, j, m+1, g.Fraction[m], g.PerMonth[m], w.Fraction[m], w.PerMonth[m])
					}
				}
				// the page's table row of this criterion, as printed
				cells := []string{fmt.Sprintf("%.4g", w.LimitM), fmt.Sprintf("%.4g", w.DurationH), "% of time"}
				for m := 0; m < 12; m++ {
					cells = append(cells, fmt.Sprintf("%.1f", 100*w.Fraction[m]))
				}
				row := "<tr><td>" + strings.Join(cells, "</td><td>") + "</td></tr>"
				if !strings.Contains(html.UnescapeString(string(page)), row) {
					t.Errorf("%s: the page has no windows table row %s", where, row)
				}
			}
		}

		// marks on the maps: the manifest's sites and validation.json's stations
		var man struct {
			Parameters struct {
				Sites []struct {
					Name     string
					Lon, Lat float64
				} `json:"sites"`
			} `json:"parameters"`
		}
		readJSON(t, filepath.Join(run, "manifest.json"), &man)
		type mark struct {
			Name    string  `json:"name"`
			Lon     float64 `json:"lon"`
			Lat     float64 `json:"lat"`
			Station bool    `json:"station"`
		}
		var want []mark
		for _, s := range man.Parameters.Sites {
			want = append(want, mark{s.Name, s.Lon, s.Lat, false})
		}
		if _, err := os.Stat(filepath.Join(run, "validation.json")); err == nil {
			var v struct {
				Stations []struct {
					Name     string
					Lon, Lat float64
				} `json:"stations"`
			}
			readJSON(t, filepath.Join(run, "validation.json"), &v)
			for _, s := range v.Stations {
				want = append(want, mark{s.Name, s.Lon, s.Lat, true})
			}
		}
		idx, err := os.ReadFile(filepath.Join(run, "report", "index.html"))
		if err != nil {
			t.Fatal(err)
		}
		figs := regexp.MustCompile(`<figure class="map"[^>]*>`).FindAll(idx, -1)
		if len(figs) == 0 {
			t.Errorf("%s: no maps", name)
		}
		for _, f := range figs {
			m := regexp.MustCompile(`data-marks="([^"]*)"`).FindSubmatch(f)
			if len(want) == 0 {
				if m != nil {
					t.Errorf("%s: marks on a map without sites or stations", name)
				}
				continue
			}
			var got []mark
			if m == nil || json.Unmarshal([]byte(html.UnescapeString(string(m[1]))), &got) != nil {
				t.Errorf("%s: a map without its marks: %s", name, f)
				continue
			}
			if len(got) != len(want) {
				t.Errorf("%s: %d marks, want %d (%v)", name, len(got), len(want), want)
				continue
			}
			for k := range want {
				if got[k] != want[k] {
					t.Errorf("%s mark %d: %+v, want %+v", name, k, got[k], want[k])
				}
			}
		}
		if name == "atlas-grid" && (len(want) < 3 || !want[len(want)-1].Station) {
			t.Errorf("%s: want the 2 sites and the demo's station marked, have %v", name, want)
		}
		// every SVG parses as XML
		svgs, _ := filepath.Glob(filepath.Join(run, "report", "*.svg"))
		for _, p := range svgs {
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			d := xml.NewDecoder(bytes.NewReader(b))
			for {
				_, err := d.Token()
				if errors.Is(err, io.EOF) {
					break
				}
				if err != nil {
					t.Errorf("%s: %v", p, err)
					break
				}
			}
		}
		t.Logf("%s: %d SVG files parsed", name, len(svgs))
	}
	if nYear == 0 || nWin == 0 || nExc == 0 {
		t.Errorf("%d year-by-year, %d windows, %d exceedance figures checked, want some of each", nYear, nWin, nExc)
	}
	t.Logf("%d year-by-year, %d windows and %d exceedance figures equal to the tables", nYear, nWin, nExc)
}

func sameYears(t *testing.T, what string, got, want []sgreport.YearValue) {
	t.Helper()
	if len(got) != len(want) || len(want) == 0 {
		t.Errorf("%s: %d years drawn, the table has %d", what, len(got), len(want))
		return
	}
	for k := range want {
		if got[k].Year != want[k].Year || got[k].Excluded != want[k].Excluded || !runcheck.SameNum(got[k].Value, want[k].Value) || math.IsNaN(got[k].Value) {
			t.Errorf("%s year %d: drawn %+v, the table %+v", what, k, got[k], want[k])
		}
	}
}

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}
