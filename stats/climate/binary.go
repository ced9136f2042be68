package climate

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
)

// Checkpoint layout (little endian, fixed field order, so the same state
// always gives the same bytes): magic "SGCS", version u16, config
// fingerprint u64, the scalar fields, then each array with its length;
// version 3 added the directional distribution (count, minutes and power
// sums per sector, then the minutes split over the sectors) at the end;
// version 4 writes the month table as the years with data, each with its
// twelve months (3: a first year and every year of the span); version 5
// adds, after each year's months, its device sums per month and device
// (minutes u32, power sum u128), for the year-by-year device energy;
// version 6 adds the repair-access states (their count, then each one's
// fields in AccessState.encode's order) at the end.
const (
	binMagic   = "SGCS"
	binVersion = 6
)

type enc struct{ b []byte }

func (e *enc) u64(v uint64)  { e.b = binary.LittleEndian.AppendUint64(e.b, v) }
func (e *enc) u32(v uint32)  { e.b = binary.LittleEndian.AppendUint32(e.b, v) }
func (e *enc) i64(v int64)   { e.u64(uint64(v)) }
func (e *enc) f64(v float64) { e.u64(math.Float64bits(v)) }
func (e *enc) bool(v bool) {
	if v {
		e.b = append(e.b, 1)
	} else {
		e.b = append(e.b, 0)
	}
}
func (e *enc) u128(v u128) { e.u64(v.hi); e.u64(v.lo) }
func (e *enc) run(r run) {
	e.i64(r.len)
	e.b = append(e.b, byte(r.startCM), byte(r.nseg))
	for k := range r.segCM {
		e.b = append(e.b, byte(r.segCM[k]))
		e.u32(r.segMin[k])
	}
}

type dec struct {
	b   []byte
	err error
}

func (d *dec) take(n int) []byte {
	if d.err != nil {
		return make([]byte, n)
	}
	if len(d.b) < n {
		d.err = errors.New("climate: checkpoint truncated")
		return make([]byte, n)
	}
	p := d.b[:n]
	d.b = d.b[n:]
	return p
}
func (d *dec) u64() uint64  { return binary.LittleEndian.Uint64(d.take(8)) }
func (d *dec) u32() uint32  { return binary.LittleEndian.Uint32(d.take(4)) }
func (d *dec) i64() int64   { return int64(d.u64()) }
func (d *dec) f64() float64 { return math.Float64frombits(d.u64()) }
func (d *dec) bool() bool   { return d.take(1)[0] != 0 }
func (d *dec) u128() u128   { hi := d.u64(); return u128{hi, d.u64()} }
func (d *dec) run() run {
	var r run
	r.len = d.i64()
	p := d.take(2)
	r.startCM, r.nseg = int8(p[0]), int8(p[1])
	for k := range r.segCM {
		r.segCM[k] = int8(d.take(1)[0])
		r.segMin[k] = d.u32()
	}
	if r.startCM < 0 || r.startCM > 11 || r.nseg < 0 || int(r.nseg) > len(r.segCM) {
		d.err = errors.New("climate: checkpoint holds a corrupt calm run")
	}
	return r
}

func (s *CellState) scalars() []any {
	return []any{&s.nSteps, &s.nRejected, &s.nInvalid, &s.nBackwards, &s.hasAcc, &s.startBroken, &s.endBroken,
		&s.firstStart, &s.lastEnd, &s.wAll, &s.wJ, &s.sJ, &s.s2J, &s.minJ, &s.maxJ, &s.wH, &s.sH, &s.s2H,
		&s.minH, &s.maxH, &s.wTe, &s.sTe, &s.wTp, &s.sTp, &s.wDir, &s.sSin, &s.sCos}
}

// MarshalBinary encodes the state for a checkpoint. The bytes depend only on
// the state (not on how it was built: whole, merged or resumed).
func (s *CellState) MarshalBinary() ([]byte, error) {
	e := &enc{b: make([]byte, 0, s.approxBytes())}
	e.b = append(e.b, binMagic...)
	e.b = binary.LittleEndian.AppendUint16(e.b, binVersion)
	e.u64(s.cfg.fingerprint)
	for _, p := range s.scalars() {
		switch v := p.(type) {
		case *uint64:
			e.u64(*v)
		case *int64:
			e.i64(*v)
		case *bool:
			e.bool(*v)
		case *float64:
			e.f64(*v)
		case *u128:
			e.u128(*v)
		}
	}
	for _, a := range [][]uint32{s.histH, s.histJ, s.scW, s.winCnt, s.winMin} {
		e.u64(uint64(len(a)))
		for _, v := range a {
			e.u32(v)
		}
	}
	e.u64(uint64(len(s.scJ)))
	for _, v := range s.scJ {
		e.u64(v)
	}
	e.u64(uint64(len(s.ys)))
	for yi, y := range s.ys {
		e.i64(int64(y))
		for _, r := range s.ym[yi*12 : yi*12+12] {
			e.u32(r.wJ)
			e.u32(r.wH)
			e.u64(r.sJ)
			e.u64(r.sH)
		}
		nd := s.cfg.lay.nDev
		for _, r := range s.yd[yi*12*nd : (yi+1)*12*nd] {
			e.u32(r.w)
			e.u128(r.sP)
		}
	}
	e.u64(uint64(len(s.runs)))
	for l := range s.runs {
		e.run(s.runs[l])
		e.run(s.leads[l])
		e.bool(s.leadOpen[l])
	}
	e.u64(uint64(len(s.dev)))
	for _, a := range s.dev {
		e.u64(a.w)
		e.u128(a.sP)
		for _, v := range []uint64{a.wAbove, a.wBelow, a.wOut, a.wE, a.eAll, a.eAbove, a.eBelow, a.eOut} {
			e.u64(v)
		}
	}
	e.u64(uint64(len(s.rose.w)))
	for k := range s.rose.w {
		e.u64(s.rose.w[k])
		e.u64(s.rose.j[k])
	}
	e.u64(s.rose.wJ)
	e.u64(uint64(len(s.acc)))
	for k := range s.acc {
		s.acc[k].encode(e)
	}
	return e.b, nil
}

// UnmarshalBinary restores a state written by MarshalBinary. The receiver
// must come from NewCellState with the same Config as the state that was
// written (checked by fingerprint).
func (s *CellState) UnmarshalBinary(b []byte) error {
	if s.cfg == nil {
		return errors.New("climate: UnmarshalBinary needs a state from NewCellState(cfg)")
	}
	d := &dec{b: b}
	if string(d.take(4)) != binMagic {
		return errors.New("climate: not a climate-state checkpoint (bad magic)")
	}
	if v := binary.LittleEndian.Uint16(d.take(2)); v != binVersion {
		return fmt.Errorf("climate: checkpoint version %d, this build reads %d: redo the run from the inputs", v, binVersion)
	}
	if fp := d.u64(); fp != s.cfg.fingerprint {
		return errors.New("climate: checkpoint made with different settings (config fingerprint differs): use the settings of the original run or start afresh")
	}
	t := NewCellState(s.cfg)
	for _, p := range t.scalars() {
		switch v := p.(type) {
		case *uint64:
			*v = d.u64()
		case *int64:
			*v = d.i64()
		case *bool:
			*v = d.bool()
		case *float64:
			*v = d.f64()
		case *u128:
			*v = d.u128()
		}
	}
	arrLen := func(want int, what string) {
		if n := d.u64(); d.err == nil && n != uint64(want) {
			d.err = fmt.Errorf("climate: checkpoint %s has %d entries, the config gives %d", what, n, want)
		}
	}
	for i, a := range [][]uint32{t.histH, t.histJ, t.scW, t.winCnt, t.winMin} {
		arrLen(len(a), fmt.Sprintf("array %d", i))
		for k := range a {
			a[k] = d.u32()
		}
	}
	arrLen(len(t.scJ), "scatter sums")
	for k := range t.scJ {
		t.scJ[k] = d.u64()
	}
	n := d.u64()
	if d.err == nil && n > maxYears {
		d.err = fmt.Errorf("climate: checkpoint month table has %d years (at most %d)", n, maxYears)
	}
	if d.err == nil {
		nd := t.cfg.lay.nDev
		t.ys, t.ym, t.yd = make([]int, n), make([]ymRec, 12*n), make([]ydRec, 12*nd*int(n))
		for yi := range t.ys {
			t.ys[yi] = int(d.i64())
			if d.err == nil && yi > 0 && t.ys[yi] <= t.ys[yi-1] {
				d.err = fmt.Errorf("climate: checkpoint month table lists year %d after %d", t.ys[yi], t.ys[yi-1])
			}
			for k := yi * 12; k < yi*12+12; k++ {
				r := &t.ym[k]
				r.wJ, r.wH, r.sJ, r.sH = d.u32(), d.u32(), d.u64(), d.u64()
			}
			for k := yi * 12 * nd; k < (yi+1)*12*nd; k++ {
				t.yd[k].w, t.yd[k].sP = d.u32(), d.u128()
			}
		}
	}
	arrLen(len(t.runs), "window limits")
	for l := range t.runs {
		t.runs[l], t.leads[l], t.leadOpen[l] = d.run(), d.run(), d.bool()
	}
	arrLen(len(t.dev), "devices")
	for k := range t.dev {
		a := &t.dev[k]
		a.w, a.sP = d.u64(), d.u128()
		for _, p := range []*uint64{&a.wAbove, &a.wBelow, &a.wOut, &a.wE, &a.eAll, &a.eAbove, &a.eBelow, &a.eOut} {
			*p = d.u64()
		}
	}
	arrLen(len(t.rose.w), "direction sectors")
	for k := range t.rose.w {
		t.rose.w[k], t.rose.j[k] = d.u64(), d.u64()
	}
	t.rose.wJ = d.u64()
	arrLen(len(t.acc), "access rules")
	for k := range t.acc {
		t.acc[k].decode(d)
	}
	if d.err != nil {
		return d.err
	}
	if len(d.b) != 0 {
		return fmt.Errorf("climate: checkpoint has %d unexpected trailing bytes", len(d.b))
	}
	*s = *t
	return nil
}

// approxBytes is the size of the checkpoint encoding.
func (s *CellState) approxBytes() int {
	return 4 + 2 + 8 + 27*16 + 4*(len(s.histH)+len(s.histJ)+len(s.scW)+len(s.winCnt)+len(s.winMin)) +
		8*len(s.scJ) + 24*len(s.ym) + 20*len(s.yd) + 8*len(s.ys) + 64*len(s.runs) + 96*len(s.dev) + 16*len(s.rose.w) + 144 + 8 + 700*len(s.acc)
}
