package cohort

import (
	"fmt"
	"os"
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
type limitedAllocator struct {
	perCall, total int64
	held           atomic.Int64
}

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
func newLimitedAllocator(path string) *limitedAllocator {
	var size int64
	if st, err := os.Stat(path); err == nil {
		size = st.Size()
	}
	return &limitedAllocator{perCall: max(16<<20, 64*size), total: max(256<<20, 256*size)}
}

func (a *limitedAllocator) check(size int) {
	if s := int64(size); s < 0 || s > a.perCall {
		panic(allocationError{s, a.perCall})
	}
	if h := a.held.Add(int64(size)); h > a.total {
		a.held.Add(-int64(size))
		panic(allocationError{h, a.total})
	}
}

// Allocate returns size fresh bytes, within the limits.
func (a *limitedAllocator) Allocate(size int) []byte {
	a.check(size)
	return memory.DefaultAllocator.Allocate(size)
}

// Reallocate resizes b, within the limits.
func (a *limitedAllocator) Reallocate(size int, b []byte) []byte {
	a.check(size)
	nb := memory.DefaultAllocator.Reallocate(size, b)
	a.held.Add(int64(cap(nb)) - int64(size) - int64(cap(b)))
	return nb
}

// Free returns b.
func (a *limitedAllocator) Free(b []byte) {
	a.held.Add(-int64(cap(b)))
	memory.DefaultAllocator.Free(b)
}
