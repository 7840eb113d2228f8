package cohort

import (
	"crypto/sha256"
	"os"
	"sync/atomic"
)

// mapped is a file mapped into memory whose pages the CSV parser hands
// back to the kernel once it has read them and the hash has passed
// them, so that the file does not stay resident beside the columns
// parsed from it (a mapped 1M-row cohort is some 70 MB). Dropping a
// page of a private, read-only file mapping loses nothing: a later read
// faults it in again from the file.
type mapped struct {
	m      []byte       // the whole mapping
	page   int          // the system's page size
	shift  int          // where the parser's data starts in m (past a byte-order mark)
	hashed atomic.Int64 // bytes of m hashed so far; len(m) when none is taken
}

// newMapped wraps the mapping m; hashing says whether a hash of it is
// being taken (see sum), which parsed pages wait for before they go.
func newMapped(m []byte, hashing bool) *mapped {
	mp := &mapped{m: m, page: os.Getpagesize()}
	if !hashing {
		mp.hashed.Store(int64(len(m)))
	}
	return mp
}

// sum is the SHA-256 of the whole mapping, written in steps of 1 MiB so
// that the parser can drop the pages both have read.
func (mp *mapped) sum() [sha256.Size]byte {
	const step = 1 << 20
	h := sha256.New()
	for off := 0; off < len(mp.m); off += step {
		end := min(off+step, len(mp.m))
		h.Write(mp.m[off:end])
		mp.hashed.Store(int64(end))
	}
	var out [sha256.Size]byte
	h.Sum(out[:0])
	return out
}

// release drops the whole pages between the parser's offsets from and
// to that the hash has passed, and returns the offset up to which pages
// are gone, from which the next call starts. A nil mapped drops nothing.
func (mp *mapped) release(from, to int) int {
	if mp == nil {
		return from
	}
	shift := mp.shift
	lo, hi := from+shift, min(to+shift, int(mp.hashed.Load()))
	// Whole pages only: the first one up from lo, the last one down from
	// hi (a neighbour's worker may still read the page it shares).
	lo = (lo + mp.page - 1) / mp.page * mp.page
	hi = hi / mp.page * mp.page
	if hi <= lo {
		return from
	}
	dropPages(mp.m[lo:hi])
	return hi - shift
}
