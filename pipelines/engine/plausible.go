package engine

import "sync"

// maxSeaHm0M bounds the significant wave height of any sea, m. The largest
// significant wave heights measured or hindcast are near 20 m (common
// practice; quoted from memory: the record buoy measurement recognised by
// the WMO is 19 m), so a spectrum that integrates to more than 30 m is not
// a sea state but a density read other than it is stored (a linear density
// decoded as a logarithm, cm2 read as m2, per degree read as per radian).
// Such a spectrum is refused, not flagged: an atlas built on it is wrong.
const maxSeaHm0M = 30.0

// notSea remembers the first spectrum (lowest record step, then cell) of a
// run whose Hm0 exceeds maxSeaHm0M; workers note theirs concurrently.
type notSea struct {
	mu         sync.Mutex
	found      bool
	step, cell int
	hm0        float64
}

func (n *notSea) note(step, cell int, hm0 float64) {
	n.mu.Lock()
	if !n.found || step < n.step || step == n.step && cell < n.cell {
		n.found, n.step, n.cell, n.hm0 = true, step, cell, hm0
	}
	n.mu.Unlock()
}

// checkSea refuses the run once a spectrum beyond any sea was read
// (ingest.Catalog.NotASea names the file, the variable and the keys).
func (e *engine) checkSea() error {
	e.beyond.mu.Lock()
	defer e.beyond.mu.Unlock()
	if !e.beyond.found {
		return nil
	}
	return e.cat.NotASea(e.beyond.step, e.beyond.cell, e.beyond.hm0, maxSeaHm0M)
}
