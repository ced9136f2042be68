package climate

import (
	"errors"
	"fmt"
)

// Merge folds later into s: afterwards s is the state of s's record followed
// by later's record, exactly (bit for bit) what feeding both records to one
// state would give. later must start at or after the end of s (adjacent or
// after a gap) and come from the same Config. A calm run open at the end of s
// and one open at the start of later are joined when the records are
// adjacent in time, so weather windows spanning the boundary are counted
// once and credited in full. later is not changed.
func (s *CellState) Merge(later *CellState) error {
	o := later
	if o == s {
		return errors.New("climate: Merge of a state with itself")
	}
	if o.cfg.fingerprint != s.cfg.fingerprint {
		return errors.New("climate: Merge of states made with different settings (config fingerprints differ): build all states of a run from one Config")
	}
	if o.nSteps == 0 {
		return nil
	}
	if s.nSteps == 0 {
		s.copyFrom(o)
		return nil
	}
	if s.hasAcc && o.hasAcc && o.firstStart < s.lastEnd {
		return fmt.Errorf("climate: Merge out of order: the later state starts at %.4f h, before this state ends at %.4f h (merge parts in time order)",
			float64(o.firstStart)/60, float64(s.lastEnd)/60)
	}
	adjacent := s.hasAcc && o.hasAcc && !s.endBroken && !o.startBroken && o.firstStart == s.lastEnd

	s.mergeWindows(o, adjacent)

	s.nSteps += o.nSteps
	s.nRejected += o.nRejected
	s.nInvalid += o.nInvalid
	s.nBackwards += o.nBackwards
	if o.hasAcc {
		if !s.hasAcc {
			s.firstStart = o.firstStart
		}
		s.hasAcc = true
		s.lastEnd = o.lastEnd
		s.endBroken = o.endBroken
	} else {
		s.endBroken = true
	}
	s.wAll += o.wAll
	s.wJ += o.wJ
	s.sJ += o.sJ
	s.s2J.add(o.s2J)
	s.minJ, s.maxJ = min(s.minJ, o.minJ), max(s.maxJ, o.maxJ)
	s.wH += o.wH
	s.sH += o.sH
	s.s2H.add(o.s2H)
	s.minH, s.maxH = min(s.minH, o.minH), max(s.maxH, o.maxH)
	s.wTe += o.wTe
	s.sTe += o.sTe
	s.wTp += o.wTp
	s.sTp += o.sTp
	s.wDir += o.wDir
	s.sSin += o.sSin
	s.sCos += o.sCos
	addU32(s.histH, o.histH)
	addU32(s.histJ, o.histJ)
	addU32(s.scW, o.scW)
	for i, v := range o.scJ {
		s.scJ[i] += v
	}
	for yi, y := range o.ys {
		off := s.yearSlot(y) * 12
		if off < 0 {
			return errors.New("climate: Merge: the merged state would hold more than 10000 years")
		}
		for m, r := range o.ym[yi*12 : yi*12+12] {
			t := &s.ym[off+m]
			t.wJ += r.wJ
			t.wH += r.wH
			t.sJ += r.sJ
			t.sH += r.sH
		}
		nd := s.cfg.lay.nDev
		for k, r := range o.yd[yi*12*nd : (yi+1)*12*nd] {
			t := &s.yd[off*nd+k]
			t.w += r.w
			t.sP.add(r.sP)
		}
	}
	for k := range s.dev {
		a, b := &s.dev[k], &o.dev[k]
		a.w += b.w
		a.sP.add(b.sP)
		a.wAbove += b.wAbove
		a.wBelow += b.wBelow
		a.wOut += b.wOut
		a.wE += b.wE
		a.eAll += b.eAll
		a.eAbove += b.eAbove
		a.eBelow += b.eBelow
		a.eOut += b.eOut
	}
	s.rose.merge(&o.rose)
	for k := range s.acc {
		if err := s.acc[k].Merge(&o.acc[k]); err != nil {
			return err
		}
	}
	return nil
}

func addU32(a, b []uint32) {
	for i, v := range b {
		a[i] += v
	}
}

// mergeWindows adds later's window tallies and joins the calm run open at
// the end of s with the one open at the start of later when the records are
// adjacent. With T the run ending s (length Lt), L the run starting later
// (Ll) and C = Lt + Ll, for each duration D: later counted a window at L's
// start if Ll >= D (now part of the joined run: removed); the joined run
// counts at T's start if C >= D (already counted if Lt >= D); the time of T
// and L not yet credited (because Lt < D or Ll < D) is credited when C >= D.
func (s *CellState) mergeWindows(o *CellState, adjacent bool) {
	lay := &s.cfg.lay
	addU32(s.winCnt, o.winCnt)
	addU32(s.winMin, o.winMin)
	for l := 0; l < lay.nLim; l++ {
		T := s.runs[l]
		L := o.leads[l]
		if o.leadOpen[l] {
			L = o.runs[l]
		}
		if !(adjacent && T.len > 0 && L.len > 0) {
			if s.leadOpen[l] {
				s.leads[l] = s.runs[l]
				s.leadOpen[l] = false
			}
			s.runs[l] = o.runs[l]
			continue
		}
		C := T.len + L.len
		base := l * lay.nDur * 12
		for d := 0; d < lay.nDur; d++ {
			D := lay.durMin[d]
			idx := base + d*12
			if L.len >= D {
				s.winCnt[idx+int(L.startCM)]--
			}
			if C < D {
				continue
			}
			if T.len < D {
				s.winCnt[idx+int(T.startCM)]++
				for k := int8(0); k < T.nseg; k++ {
					s.winMin[idx+int(T.segCM[k])] += T.segMin[k]
				}
			}
			if L.len < D {
				for k := int8(0); k < L.nseg; k++ {
					s.winMin[idx+int(L.segCM[k])] += L.segMin[k]
				}
			}
		}
		comb := run{len: C, startCM: T.startCM}
		if C < lay.maxDurMin {
			comb.nseg, comb.segCM, comb.segMin = T.nseg, T.segCM, T.segMin
			for k := int8(0); k < L.nseg; k++ {
				comb.addSeg(L.segCM[k], L.segMin[k])
			}
		}
		if s.leadOpen[l] && !o.leadOpen[l] {
			s.leads[l] = comb
			s.leadOpen[l] = false
		}
		if o.leadOpen[l] {
			s.runs[l] = comb
		} else {
			s.runs[l] = o.runs[l]
		}
	}
}

// copyFrom makes s a deep copy of o (same Config).
func (s *CellState) copyFrom(o *CellState) {
	histH, histJ, scW, scJ, ys, ym, yd := s.histH, s.histJ, s.scW, s.scJ, s.ys, s.ym, s.yd
	winCnt, winMin, runs, leads, leadOpen, dev, rose, acc := s.winCnt, s.winMin, s.runs, s.leads, s.leadOpen, s.dev, s.rose, s.acc
	*s = *o
	s.acc = acc
	copy(s.acc, o.acc)
	s.rose = rose
	s.rose.copyFrom(&o.rose)
	s.histH, s.histJ, s.scW, s.scJ = histH, histJ, scW, scJ
	s.winCnt, s.winMin, s.runs, s.leads, s.leadOpen, s.dev = winCnt, winMin, runs, leads, leadOpen, dev
	copy(s.histH, o.histH)
	copy(s.histJ, o.histJ)
	copy(s.scW, o.scW)
	copy(s.scJ, o.scJ)
	copy(s.winCnt, o.winCnt)
	copy(s.winMin, o.winMin)
	copy(s.runs, o.runs)
	copy(s.leads, o.leads)
	copy(s.leadOpen, o.leadOpen)
	copy(s.dev, o.dev)
	s.ys = append(ys[:0], o.ys...)
	s.ym = append(ym[:0], o.ym...)
	s.yd = append(yd[:0], o.yd...)
}
