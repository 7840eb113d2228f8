package resample

import (
	"cmp"
	"math"
	"math/bits"
	"slices"

	"github.com/riskaudit/riskaudit/metrics"
)

// riskOrder puts a replicate's risks in order, as metrics.Sorter does
// (row indices ascending by risk, ties in row order), reusing its buffers
// from one replicate to the next. From orderBucketsFrom risks it sorts
// by buckets instead of by Sorter's radix passes: the risks' order keys
// (Sorter's, so that −0 sorts before +0 and the order is the same) are
// spread over about n/2 buckets of equal width between the smallest and
// the largest key, in row order, and each bucket is then put in order by
// insertion (a stable sort). One counting pass and one scatter replace
// the radix sort's five or six on risks that span several powers of two.
// A bucket that holds many rows (tied or crowded risks) is sorted by a
// stable comparison sort instead.
type riskOrder struct {
	sorter metrics.Sorter
	keys   []uint64 // the order key of every row, in row order
	tk     []uint64 // the keys in bucket order
	idx    []int32  // the rows in bucket order, then in risk order
	start  []int32  // the first place of every bucket
}

// orderBucketsFrom is the number of risks from which riskOrder sorts by
// buckets (below it metrics.Sorter sorts them by comparison).
const orderBucketsFrom = 4096

// bucketInsertMax is the largest bucket put in order by insertion.
const bucketInsertMax = 48

// order returns the row indices of p ordered by p, ties in row order:
// the order of metrics.Sorter.Order. The slice is o's own, overwritten
// by the next call.
func (o *riskOrder) order(p []float64) []int32 {
	n := len(p)
	if n < orderBucketsFrom {
		return o.sorter.Order(p)
	}
	if cap(o.keys) < n {
		o.keys, o.tk, o.idx = make([]uint64, n), make([]uint64, n), make([]int32, n)
	}
	keys, tk, idx := o.keys[:n], o.tk[:n], o.idx[:n]
	lo, hi := orderKeys(p, keys)
	if lo == hi {
		for i := range idx {
			idx[i] = int32(i)
		}
		return idx
	}
	// Buckets of 2^shift keys each, at most 2^nb of them.
	nb := bits.Len(uint(n)) - 1
	shift := max(0, bits.Len64(hi-lo)-nb)
	m := int((hi-lo)>>shift) + 1
	if cap(o.start) < m+1 {
		o.start = make([]int32, m+1)
	}
	start := o.start[:m+1]
	most := scatter(keys, lo, shift, start, tk, idx)
	if most <= bucketInsertMax {
		// Every row is already in its bucket, so one insertion pass over
		// the whole moves rows only within their buckets.
		insertionSort(tk, idx)
		return idx
	}
	from := int32(0)
	for _, to := range start[:m] {
		if to-from > 1 {
			o.sortBucket(tk[from:to], idx[from:to])
		}
		from = to
	}
	return idx
}

// orderKeys writes the order key of every risk of p into keys and
// returns the smallest and the largest.
func orderKeys(p []float64, keys []uint64) (lo, hi uint64) {
	lo, hi = math.MaxUint64, 0
	for i, v := range p {
		k := orderKey(v)
		keys[i] = k
		lo, hi = min(lo, k), max(hi, k)
	}
	return lo, hi
}

// scatter puts the rows in bucket order, rows in row order within each
// bucket: the key of row i in bucket (keys[i] − lo) >> shift. start has
// one place more than there are buckets; afterwards start[b] is the end
// of bucket b (the start of bucket b + 1). It returns the size of the
// largest bucket.
func scatter(keys []uint64, lo uint64, shift int, start []int32, tk []uint64, idx []int32) int32 {
	clear(start)
	for _, k := range keys {
		start[(k-lo)>>shift+1]++
	}
	most := int32(0)
	for b := 1; b < len(start); b++ {
		most = max(most, start[b])
		start[b] += start[b-1]
	}
	for i, k := range keys {
		b := (k - lo) >> shift
		at := start[b]
		start[b]++
		tk[at], idx[at] = k, int32(i)
	}
	return most
}

// sortBucket puts one bucket's rows (keys tk, rows idx, in row order) in
// key order, ties in row order.
func (o *riskOrder) sortBucket(tk []uint64, idx []int32) {
	if len(tk) > bucketInsertMax {
		if !slices.IsSorted(tk) {
			keys := o.keys
			slices.SortStableFunc(idx, func(a, b int32) int { return cmp.Compare(keys[a], keys[b]) })
		}
		return
	}
	insertionSort(tk, idx)
}

// insertionSort puts keys tk in ascending order by insertion, moving the
// rows idx with them, ties in their order (a stable sort).
func insertionSort(tk []uint64, idx []int32) {
	for j := 1; j < len(tk); j++ {
		k, r := tk[j], idx[j]
		i := j
		for ; i > 0 && tk[i-1] > k; i-- {
			tk[i], idx[i] = tk[i-1], idx[i-1]
		}
		tk[i], idx[i] = k, r
	}
}

// orderKey maps a float64 to a uint64 whose unsigned order is the
// numeric order, as metrics.Sorter's radix sort does: negative values
// have every bit flipped, others only the sign bit.
func orderKey(v float64) uint64 {
	k := math.Float64bits(v)
	if k>>63 == 1 {
		return ^k
	}
	return k | 1<<63
}
