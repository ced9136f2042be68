package climate

import (
	"bytes"
	"testing"
)

// A reference year mistyped as 9000 in one file (February of a 2001 record)
// must cost the state two years of month records, not seven thousand: the
// year table is sized by the years that have data. Before, the table spanned
// 2001..9000 (7000 x 12 records of 24 bytes, 2 MB per cell, 2.3 GB of
// checkpoints for a small grid).
func TestYearTableSizedByYearsWithData(t *testing.T) {
	cfg := mergeConfig(t)
	month := func(s *CellState, year, m int, h0 float64) {
		for i := 0; i < 28*8; i++ {
			s.Add(&Step{Year: year, Month: m, Hours: h0 + 3*float64(i), DtHours: 3, J: 2e4, Hm0: 1.5, Te: 7, Tp: 8, DirDeg: 180})
		}
	}
	far := NewCellState(cfg)
	month(far, 2001, 1, 0)
	month(far, 9000, 2, 7000*8766)
	near := NewCellState(cfg)
	month(near, 2001, 1, 0)
	month(near, 2002, 2, 8766)
	bf, bn := mustBytes(t, far), mustBytes(t, near)
	if len(bf) != len(bn) {
		t.Errorf("checkpoint of 2001 + 9000: %d bytes, of 2001 + 2002: %d bytes; want equal (two years of data each)", len(bf), len(bn))
	}
	if len(far.ys) != 2 || len(far.ym) != 24 {
		t.Errorf("year table holds %d years, %d month records; want 2 and 24", len(far.ys), len(far.ym))
	}
	// The sizing survives a round trip and a merge.
	back := NewCellState(cfg)
	if err := back.UnmarshalBinary(bf); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(mustBytes(t, back), bf) {
		t.Error("round trip changed the bytes")
	}
	a, b := NewCellState(cfg), NewCellState(cfg)
	month(a, 2001, 1, 0)
	month(b, 9000, 2, 7000*8766)
	if err := a.Merge(b); err != nil {
		t.Fatal(err)
	}
	if len(a.ys) != 2 || len(a.ym) != 24 {
		t.Errorf("merged: %d years, %d month records; want 2 and 24", len(a.ys), len(a.ym))
	}
	// The monthly table over two spans (one per run of years with data)
	// lists 12 climatology rows and 12 + 12 year-months.
	rows := far.MonthlyIn([][2]int{{2001 * 12, 2001*12 + 11}, {9000 * 12, 9000*12 + 11}})
	if len(rows) != 12+24 {
		t.Fatalf("monthly rows: %d, want 36", len(rows))
	}
	if r := rows[12]; r.Year != 2001 || r.Month != 1 || r.Hm0MeanM != 1.5 {
		t.Errorf("first year-month row %+v, want 2001-01 with Hm0 1.5 m", r)
	}
	if r := rows[12+13]; r.Year != 9000 || r.Month != 2 || r.Hm0MeanM != 1.5 {
		t.Errorf("row 26 %+v, want 9000-02 with Hm0 1.5 m", r)
	}
	if r := rows[12+2]; r.Year != 2001 || r.Month != 3 || !r.Excluded || r.ValidHours != 0 {
		t.Errorf("row 15 %+v, want 2001-03 without data, excluded", r)
	}
	// Years may also arrive out of order (merged parts): kept sorted.
	c := NewCellState(cfg)
	month(c, 2003, 1, 2*8766)
	month(c, 2001, 1, 0)
	if len(c.ys) != 2 || c.ys[0] != 2001 || c.ys[1] != 2003 {
		t.Errorf("years %v, want [2001 2003]", c.ys)
	}
}
