package ingest

import (
	"math"
	"sync"
)

// Block buffers. A block's value arrays (Bulk, Spec) and the raw slabs its
// workers unpack are large (a 64-step block of 200 spectra of 29 x 24 holds
// 71 MB of values) and were made afresh for every block: the runtime then
// faults in and zeroes that much new memory per block, on the reader's
// goroutine, and collects it again (in the spectral benchmark a fifth of
// the reader's time). A consumer that calls Block.Release once it is done
// with a block lets the reader reuse its arrays. The pools are sync.Pools,
// one per length, so what is not reused is collected like any garbage:
// they hold at most the blocks that were alive at the same time.
type slicePool[T any] struct {
	mu    sync.Mutex
	byLen map[int]*sync.Pool
}

func (p *slicePool[T]) pool(n int) *sync.Pool {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.byLen == nil {
		p.byLen = map[int]*sync.Pool{}
	}
	q := p.byLen[n]
	if q == nil {
		q = &sync.Pool{}
		p.byLen[n] = q
	}
	return q
}

// get returns a slice of length n: a released one (its old values still
// in it) or, if none, a new one (zeroed).
func (p *slicePool[T]) get(n int) (s []T, reused bool) {
	if v, _ := p.pool(n).Get().(*[]T); v != nil {
		return *v, true
	}
	return make([]T, n), false
}

// put hands s back for reuse by a get of the same length.
func (p *slicePool[T]) put(s []T) {
	if len(s) > 0 {
		p.pool(len(s)).Put(&s)
	}
}

var (
	valuePool slicePool[float64] // Block.Bulk and Block.Spec
	f32Pool   slicePool[float32] // raw slabs of float variables
	i16Pool   slicePool[int16]   // raw slabs of short variables
)

// newValues is a block's value array of n values, every one NaN (missing)
// until cooked. A reused array is set to NaN, as a new one would be 0: so
// no value of an earlier block can stay in it even where a cook did not
// write (every layout's cook writes each value of its cells; this is the
// guard, and cheaper than the page faults of new memory).
func newValues(n int) []float64 {
	s, _ := valuePool.get(n)
	nan := math.NaN()
	for i := range s {
		s[i] = nan
	}
	return s
}

// Release hands the block's arrays back for reuse by the blocks read
// after it. Call it once, when nothing reads b.Bulk or b.Spec (or a slice
// of them) any more; the block holds no values afterwards.
func (b *Block) Release() {
	for i := range b.pend {
		b.pend[i].slab.release()
	}
	for _, v := range b.Bulk {
		valuePool.put(v)
	}
	valuePool.put(b.Spec)
	b.Bulk, b.Spec, b.pend = nil, nil, nil
}

// release hands the slab's raw array back (nil: nothing).
func (s *rawSlab) release() {
	if s == nil {
		return
	}
	f32Pool.put(s.f32)
	i16Pool.put(s.i16)
	s.f32, s.i16 = nil, nil
}
