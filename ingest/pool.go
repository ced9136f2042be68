package ingest

import (
	"math"
	"sync"
)

// Block buffers. A block's value arrays (Bulk, Spec) and the raw slabs its
// workers unpack are large (a 64-step block of 200 spectra of 29 x 24 holds
// 71 MB of values) and were made afresh for every block: the runtime then
// faults in and zeroes that much new memory per block, on the reader's
// goroutine, and collects it again. A consumer that calls Block.Release
// once it is done with a block lets the reader reuse its arrays: a free
// list of at most maxFree arrays of each type, any one long enough serving
// (resliced). Read empties the lists when it returns, so nothing is kept
// past the stream, and the arrays in existence are at most those of the
// blocks in flight (which the memory plan counts) and maxFree more.
type freeList[T any] struct {
	mu   sync.Mutex
	free [][]T
}

// maxFree bounds each free list: the blocks in flight of a read (the
// reader's, two queued, the workers') times a few roles.
const maxFree = 16

// get returns a slice of length n: a released one (its old values still
// in it, reused true) or, if none is long enough, a new one (zeroed).
func (l *freeList[T]) get(n int) (s []T, reused bool) {
	l.mu.Lock()
	for i := len(l.free) - 1; i >= 0; i-- {
		if s := l.free[i]; cap(s) >= n {
			l.free = append(l.free[:i], l.free[i+1:]...)
			l.mu.Unlock()
			return s[:n], true
		}
	}
	l.mu.Unlock()
	return make([]T, n), false
}

// put hands s back for reuse (dropped when the list is full).
func (l *freeList[T]) put(s []T) {
	if cap(s) == 0 {
		return
	}
	l.mu.Lock()
	if len(l.free) < maxFree {
		l.free = append(l.free, s)
	}
	l.mu.Unlock()
}

// reset drops every array of the list.
func (l *freeList[T]) reset() {
	l.mu.Lock()
	l.free = nil
	l.mu.Unlock()
}

var (
	valuePool freeList[float64] // Block.Bulk and Block.Spec
	f32Pool   freeList[float32] // raw slabs of float variables
	i16Pool   freeList[int16]   // raw slabs of short variables
)

// newValues is a block's value array of n values. A reused array is set
// to NaN (missing) first, so no value of an earlier block can stay in it
// even where a cook did not write (every layout's cook writes each value of
// its cells; this is the guard, and cheaper than the page faults of new
// memory); a new one is zero, as it always was.
func newValues(n int) []float64 {
	s, reused := valuePool.get(n)
	if reused {
		nan := math.NaN()
		for i := range s {
			s[i] = nan
		}
	}
	return s
}

// DropBlockBuffers drops the arrays released for reuse. Read calls it when
// it returns; a consumer whose workers release blocks after that (the
// stream stage's) calls it once they are done, so that no block array is
// kept into the work that follows.
func DropBlockBuffers() {
	valuePool.reset()
	f32Pool.reset()
	i16Pool.reset()
}

// Release hands the block's arrays back for reuse by the blocks read
// after it. Call it once, when nothing reads b.Bulk or b.Spec (or a slice
// of them) any more; the block holds no values afterwards.
func (b *Block) Release() {
	b.releaseSlabs()
	for _, v := range b.Bulk {
		valuePool.put(v)
	}
	valuePool.put(b.Spec)
	b.Bulk, b.Spec = nil, nil
}

// releaseSlabs hands back the raw arrays of the block's slabs, once every
// cell is cooked, and forgets the slabs.
func (b *Block) releaseSlabs() {
	for i := range b.pend {
		b.pend[i].slab.release()
	}
	b.pend = nil
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
