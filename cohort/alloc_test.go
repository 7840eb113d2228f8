package cohort

import (
	"errors"
	"testing"
)

// TestLimitedAllocatorReuse checks that a reusing allocator hands a
// freed buffer out again, cleared, and that the bytes it counts as held
// return to zero when every buffer is freed.
func TestLimitedAllocatorReuse(t *testing.T) {
	a := &limitedAllocator{perCall: 1 << 20, total: 1 << 21, reuse: true}
	b := a.Allocate(1000)
	for i := range b {
		b[i] = 0xff
	}
	first := &b[0]
	a.Free(b)
	if h := a.held.Load(); h != 0 {
		t.Fatalf("held %d after freeing everything, want 0", h)
	}
	c := a.Allocate(600)
	if len(c) != 600 {
		t.Fatalf("len %d, want 600", len(c))
	}
	if &c[0] != first {
		t.Error("the freed buffer was not reused")
	}
	for i, v := range c {
		if v != 0 {
			t.Fatalf("byte %d of a reused buffer is %#x, want 0", i, v)
		}
	}
	d := a.Reallocate(2000, c) // beyond c's room: new memory, c freed
	if len(d) != 2000 || a.held.Load() != int64(cap(d)) {
		t.Errorf("after growing: len %d, held %d, want 2000 and %d", len(d), a.held.Load(), cap(d))
	}
	a.Free(d)
	if h := a.held.Load(); h != 0 {
		t.Errorf("held %d after freeing everything, want 0", h)
	}
	if len(a.freed) != 2 {
		t.Errorf("%d buffers kept, want 2", len(a.freed))
	}
}

// TestLimitedAllocatorNoReuse checks that without reuse a freed buffer
// is not handed out again.
func TestLimitedAllocatorNoReuse(t *testing.T) {
	a := &limitedAllocator{perCall: 1 << 20, total: 1 << 21}
	b := a.Allocate(1000)
	a.Free(b)
	c := a.Allocate(1000)
	if &c[0] == &b[0] || len(a.freed) != 0 {
		t.Error("a buffer was reused without reuse")
	}
}

// TestLimitedAllocatorLimits checks the refusals: one request beyond
// perCall, and requests together beyond total (freed buffers kept for
// reuse count as free).
func TestLimitedAllocatorLimits(t *testing.T) {
	refused := func(f func()) (err error) {
		defer func() {
			if p := recover(); p != nil {
				err, _ = p.(error)
			}
		}()
		f()
		return nil
	}
	a := &limitedAllocator{perCall: 1000, total: 1500, reuse: true}
	var ae allocationError
	if err := refused(func() { a.Allocate(1001) }); !errors.As(err, &ae) || ae.size != 1001 || ae.limit != 1000 {
		t.Errorf("1001 bytes of a 1000-byte limit: %v", err)
	}
	b := a.Allocate(1000)
	if err := refused(func() { a.Allocate(600) }); !errors.As(err, &ae) || ae.size != 1600 || ae.limit != 1500 {
		t.Errorf("1600 bytes held of 1500: %v", err)
	}
	a.Free(b)
	if err := refused(func() { a.Allocate(600) }); err != nil {
		t.Errorf("600 bytes after the 1000 were freed: %v", err)
	}
}
