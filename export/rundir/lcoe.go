package rundir

import (
	"fmt"
	"math"

	"swellgrid/export/contract"
)

// LCOEField is the levelised cost of one screening scenario per cell (in
// cell order, NaN where the cell has none), read from screening.parquet.
type LCOEField struct {
	Scenario string
	Column   *Column // named contract.LCOELayer(Scenario), unit contract.LCOEUnit
}

// LCOEFields returns, in the order of screening.parquet's rows, the
// levelised cost of every scenario that has one on at least one cell; nil
// when the run has no screening.parquet or no cost inputs.
func (r *Run) LCOEFields() ([]LCOEField, error) {
	t, err := r.Columns(contract.TableScreening, contract.ColCellID, "scenario", "lcoe_per_mwh")
	if err != nil || t == nil {
		return nil, err
	}
	ids, sc, v := t.Col(contract.ColCellID), t.Col("scenario"), t.Col("lcoe_per_mwh")
	if ids == nil || sc == nil {
		return nil, fmt.Errorf("%s: no cell_id or scenario column; rerun swellgrid screen", t.Path)
	}
	if v == nil { // a screening from before the levelised cost
		return nil, nil
	}
	n := r.Cells.Rows
	var all []LCOEField
	at := map[string]int{}
	has := map[string]bool{}
	for k := 0; k < t.Rows; k++ {
		name := sc.Str[k]
		j, ok := at[name]
		if !ok { // scenarios in the order of their first row (the spec's)
			j = len(all)
			at[name] = j
			vals := make([]float64, n)
			for i := range vals {
				vals[i] = math.NaN()
			}
			all = append(all, LCOEField{Scenario: name, Column: &Column{Name: contract.LCOELayer(name), Unit: contract.LCOEUnit,
				Doc: "levelised cost of energy of the cell's layout under screening scenario " + name + " (screening.parquet's lcoe_per_mwh)", Kind: Float, Float: vals}})
		}
		x := v.Value(k)
		if math.IsNaN(x) {
			continue
		}
		id := ids.Int[k]
		if id < 0 || id >= int64(n) {
			return nil, fmt.Errorf("%s: row %d: cell_id %d is not a cell of cells.parquet (%d cells)", t.Path, k, id, n)
		}
		all[j].Column.Float[id] = x
		has[name] = true
	}
	var out []LCOEField
	for _, f := range all {
		if has[f.Scenario] {
			out = append(out, f)
		}
	}
	return out, nil
}

// LCOEColumn returns the levelised-cost field named col
// (contract.LCOELayer of a scenario), or nil.
func (r *Run) LCOEColumn(col string) (*Column, error) {
	fs, err := r.LCOEFields()
	for _, f := range fs {
		if f.Column.Name == col {
			return f.Column, nil
		}
	}
	return nil, err
}
