package engine

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"swellgrid/export/contract"
	"swellgrid/internal/parquetread"
	"swellgrid/pipelines/screening"
)

// TestScreeningDeliveredByHand: delivered energy and levelised cost of two
// scenarios on the small grid of smallScreenRun (cells.parquet written by
// hand: aep_wec_mwh = 100 x power, availability_wec = 0.99 - 0.01 x cell,
// cf_wec for a 500 kW device), against the formulas written out here:
//
//	route_km   = dist_ports_km x route factor (the geodesic itself is
//	             checked against pyproj by grid's tests)
//	loss       = fixed + per_km x route_km
//	delivered  = aep x array factor x availability x (1 - loss)
//	CRF(r, n)  = r (1+r)^n / ((1+r)^n - 1)
//	LCOE       = (capex/MW x MW + cable/km x route_km) x CRF + opex/MW-yr x MW) / (devices x delivered)
//
// with DC export (fixed 2.5 %, 0.003 % per km: the common-practice
// defaults of stats/delivery) and AC export with its loss given.
func TestScreeningDeliveredByHand(t *testing.T) {
	dir := smallScreenRun(t)
	os.WriteFile(filepath.Join(dir, "deliv.toml"), []byte(delivSpec), 0o644)
	if _, _, err := screening.Rescreen(dir, filepath.Join(dir, "deliv.toml")); err != nil {
		t.Fatal(err)
	}
	cols, err := parquetread.Columns(filepath.Join(dir, "screening.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	f := func(name string, k int) float64 {
		v := cols[name][k]
		if v == nil {
			return math.NaN()
		}
		return v.(float64)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if !(math.Abs(got-want) <= 1e-9*math.Max(1, math.Abs(want))) {
			t.Errorf("%s: got %.12g, by hand %.12g", what, got, want)
		}
	}
	crf := 0.08 * math.Pow(1.08, 20) / (math.Pow(1.08, 20) - 1) // 0.10185220882...
	near("CRF", crf, 0.1018522088)
	density := map[string]float64{"far_dc": 1e6 / (200 * 250), "near_ac": 20}
	type sums struct{ capex, opex, mwh, e float64 }
	tot := map[string]*sums{"far_dc": {}, "near_ac": {}}
	for k, id := range cols["cell_id"] {
		i := int(id.(int64))
		sc := cols["scenario"][k].(string)
		power := []float64{20, 25, 30, 35, 40, 10, 18, math.NaN(), 22, 50, 16, 17, 19, 21, 23}[i]
		aep, avail := 100*power, 0.99-0.01*float64(i)
		if i == 11 {
			aep = math.NaN()
		}
		fixed, perKm, route, cable := 0.025, 0.00003, 1.2, 2e6
		af := 0.9
		if sc == "near_ac" {
			fixed, perKm, route, cable, af = 0.01, 0.0004, 1.1, 1e6, 1 // route factor: the default 1.1
		}
		rkm := f("dist_ports_km", k) * route
		loss := fixed + perKm*rkm
		del := aep * af * avail * (1 - loss)
		near(sc+" route_km", f("route_km", k), rkm)
		near(sc+" loss_frac", f("loss_frac", k), loss)
		near(sc+" array_factor", f("array_factor", k), af)
		near(sc+" availability", f("availability", k), avail)
		if i == 11 || i == 7 {
			if !math.IsNaN(f("delivered_mwh", k)) && i == 11 {
				t.Errorf("cell 11 has no AEP, delivered %v", f("delivered_mwh", k))
			}
			continue
		}
		near(sc+" delivered_mwh", f("delivered_mwh", k), del)
		near(sc+" cf_delivered", f("cf_delivered", k), del/(0.5*8766))
		n := f("area_km2", k) * density[sc]
		mw := n * 0.5
		capex := 5e6*mw + cable*rkm
		opex := 1.5e5 * mw
		near(sc+" lcoe_per_mwh", f("lcoe_per_mwh", k), (capex*crf+opex)/(n*del))
		if cols["pass"][k].(bool) {
			s := tot[sc]
			s.capex += capex
			s.opex += opex
			s.mwh += n * del
			s.e += n * del
		}
	}
	var sum contract.ScreeningSummary
	b, _ := os.ReadFile(filepath.Join(dir, screening.File))
	if err := json.Unmarshal(b, &sum); err != nil {
		t.Fatal(err)
	}
	lcoe := map[string]float64{}
	for _, s := range sum.Scenarios {
		w := tot[s.Name]
		if s.DeliveredEnergyGWh == nil || s.LCOE == nil || s.LossCrossoverKm == nil {
			t.Fatalf("scenario %s: summary without delivered energy or LCOE: %+v", s.Name, s)
		}
		near(s.Name+" delivered_energy_gwh", *s.DeliveredEnergyGWh, w.e/1000)
		lcoe[s.Name] = (w.capex*crf + w.opex) / w.mwh
		near(s.Name+" lcoe_per_mwh", *s.LCOE, lcoe[s.Name])
		near(s.Name+" crossover", *s.LossCrossoverKm, (0.025-0.005)/(0.0003-0.00003))
	}
	for _, s := range sum.Scenarios {
		other := "near_ac"
		if s.Name == other {
			other = "far_dc"
		}
		want := 1
		if lcoe[s.Name] > lcoe[other] {
			want = 2
		}
		if s.LCOERank != want {
			t.Errorf("scenario %s: LCOE rank %d, want %d (%v against %v)", s.Name, s.LCOERank, want, lcoe[s.Name], lcoe[other])
		}
	}
}

// delivSpec is the screening of TestScreeningDeliveredByHand: two
// scenarios with delivered energy and costs on smallScreenRun's grid.
const delivSpec = `
[[screening.layer]]
name = "ports"
file = "ports.geojson"
[[screening.scenario]]
name = "far_dc"
criteria = ["power_mean_kw_m >= 15"]
device = "wec"
spacing_along_m = 200
spacing_across_m = 250
array_factor = 0.9
connection = "ports"
route_factor = 1.2
export = "dc"
capex_per_mw = 5e6
cable_per_km = 2e6
opex_per_mw_yr = 1.5e5
discount_rate = 0.08
lifetime_y = 20
[[screening.scenario]]
name = "near_ac"
criteria = ["power_mean_kw_m >= 15"]
distance = [{layer = "ports", max_km = 100}]
device = "wec"
devices_per_km2 = 20
connection = "ports"
loss_fixed = 0.01
loss_per_km = 0.0004
capex_per_mw = 5e6
cable_per_km = 1e6
opex_per_mw_yr = 1.5e5
discount_rate = 0.08
lifetime_y = 20
`
