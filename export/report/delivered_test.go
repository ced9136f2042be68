package report

import (
	"path/filepath"
	"strings"
	"testing"

	"swellgrid/export"
	"swellgrid/export/contract"
	"swellgrid/export/rundir"
)

// TestDeliveredRanking: the screening caption ranks the passing cells by
// open-water AEP and by delivered energy side by side. Four invented cells
// worked by hand: by AEP 2 (900), 0 (800), 3 (700), 1 (600, fails the
// scenario); by delivered energy 0 (700), 3 (650), 2 (500): cell 2 leads in
// open water but falls to last once delivered.
func TestDeliveredRanking(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "screening.parquet")
	tb := &export.Table{Columns: []export.Column{
		export.Int64Column("cell_id", "1", "cell id", []int64{0, 1, 2, 3}, nil),
		export.StringColumn("scenario", "", "scenario", []string{"s", "s", "s", "s"}, nil),
		export.BoolColumn("pass", "", "pass", []bool{true, false, true, true}, nil),
		export.Float64Column("aep_mwh", "MWh/yr", "aep", []float64{800, 600, 900, 700}),
		export.Float64Column("delivered_mwh", "MWh/yr", "delivered", []float64{700, 590, 500, 650}),
	}}
	if err := export.WriteParquet(path, tb); err != nil {
		t.Fatal(err)
	}
	rt, err := rundir.ReadTable(path)
	if err != nil {
		t.Fatal(err)
	}
	g, lc, x := 1.85, 300.0, 74.07
	s := contract.ScenarioSummary{Name: "s", DeliveredEnergyGWh: &g, ArrayFactor: 1, Connection: "ports", RouteFactor: 1.1, LossFixed: 0.005, LossPerKm: 0.0003, LossCrossoverKm: &x, LCOE: &lc, LCOERank: 1}
	got := deliveredText(s, rt, rt.Col("scenario"), rt.Col("cell_id"), rt.Col("pass"))
	for _, want := range []string{"by open-water AEP: 2, 0, 3;", "by delivered energy: 0, 3, 2.", "rank 1", "not investment advice", "0.5 % + 0.03 % per km"} {
		if !strings.Contains(got, want) {
			t.Errorf("caption lacks %q:\n%s", want, got)
		}
	}
	s.DeliveredEnergyGWh = nil
	if deliveredText(s, rt, rt.Col("scenario"), rt.Col("cell_id"), rt.Col("pass")) != "" {
		t.Error("a scenario without delivered energy gets a delivered-energy text")
	}
}
