package cohort

import (
	"fmt"
	"os"
	"sync"
	"sync/atomic"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// limitedAllocator is the memory the columnar readers decode into, with
// limits that a damaged file's lengths cannot pass: one allocation at
// most perCall bytes, and at most total bytes held at once. A refused
// allocation panics with allocationError, which the readers' recover
// boundaries turn into an error; without it, a length read from a
// damaged header (such as a compressed buffer claiming 256 GB) would end
// the process with an out-of-memory fault no recover can catch.
//
// With reuse set, buffers the reader frees are kept (a few, see
// keepFreed) and handed out again, cleared, instead of fresh memory: a
// Parquet load makes the same few page buffers for every column chunk
// it reads, and frees them when the chunk is closed, so a 10M-row load
// would otherwise leave some 30 MB of them for the collector.
type limitedAllocator struct {
	perCall, total int64
	held           atomic.Int64 // bytes handed out and not freed
	reuse          bool

	mu    sync.Mutex
	freed [][]byte // buffers freed, for reuse
}

// keepFreed is how many freed buffers a reusing allocator keeps.
const keepFreed = 16

// allocationError is the panic value of a refused allocation.
type allocationError struct{ size, limit int64 }

func (e allocationError) Error() string {
	return fmt.Sprintf("the file asks for %d bytes at once, beyond the %d its size allows", e.size, e.limit)
}

// newLimitedAllocator sets the limits from the file's size: one buffer
// may hold 64 times the whole file, and at least 16 MiB (the readers
// decode 65,536 rows at a time, so a buffer of a sound file is a small
// fraction of that); all buffers together 256 times the file, and at
// least 256 MiB. A file whose size cannot be read gets the minimums.
// reuse says whether freed buffers are handed out again.
func newLimitedAllocator(path string, reuse bool) *limitedAllocator {
	var size int64
	if st, err := os.Stat(path); err == nil {
		size = st.Size()
	}
	return &limitedAllocator{perCall: max(16<<20, 64*size), total: max(256<<20, 256*size), reuse: reuse}
}

// check refuses a request of size bytes beyond the limits, and counts
// size as held.
func (a *limitedAllocator) check(size int) {
	if s := int64(size); s < 0 || s > a.perCall {
		panic(allocationError{s, a.perCall})
	}
	if h := a.held.Add(int64(size)); h > a.total {
		a.held.Add(-int64(size))
		panic(allocationError{h, a.total})
	}
}

// Allocate returns size zeroed bytes, within the limits.
func (a *limitedAllocator) Allocate(size int) []byte {
	a.check(size)
	return a.fresh(size)
}

// fresh is a buffer of size bytes whose size check has counted them:
// a freed one or new memory.
func (a *limitedAllocator) fresh(size int) []byte {
	b := a.take(size)
	if b == nil {
		b = memory.DefaultAllocator.Allocate(size)
	}
	a.held.Add(int64(cap(b)) - int64(size))
	return b
}

// take is the smallest freed buffer that holds size bytes, cleared and
// cut to size, or nil.
func (a *limitedAllocator) take(size int) []byte {
	if !a.reuse {
		return nil
	}
	a.mu.Lock()
	defer a.mu.Unlock()
	best := -1
	for i, b := range a.freed {
		if cap(b) >= size && (best < 0 || cap(b) < cap(a.freed[best])) {
			best = i
		}
	}
	if best < 0 {
		return nil
	}
	b := a.freed[best][:size]
	last := len(a.freed) - 1
	a.freed[best] = a.freed[last]
	a.freed[last] = nil
	a.freed = a.freed[:last]
	clear(b)
	return b
}

// Reallocate resizes b, within the limits: b itself when it has room,
// otherwise a new buffer holding b's bytes, b freed.
func (a *limitedAllocator) Reallocate(size int, b []byte) []byte {
	a.check(size)
	if size <= cap(b) {
		a.held.Add(-int64(size))
		return b[:size]
	}
	nb := a.fresh(size)
	copy(nb, b)
	a.Free(b)
	return nb
}

// Free returns b, which a reusing allocator may keep.
func (a *limitedAllocator) Free(b []byte) {
	a.held.Add(-int64(cap(b)))
	if !a.reuse || cap(b) == 0 {
		return
	}
	a.mu.Lock()
	defer a.mu.Unlock()
	if len(a.freed) < keepFreed {
		a.freed = append(a.freed, b[:0])
	}
}
