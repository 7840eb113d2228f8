package metrics

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"sync"
)

// Sorted is a cohort's outcomes and predicted risks in ascending order of
// risk, ties kept in row order (the order of a stable sort). It is the
// one input of every measure that walks the rows in risk order — AUC,
// AUCValue, ROC, HosmerLemeshow, RiskGroups, FlexibleCalibration,
// ThresholdCounts, NetBenefits and Classify — so that a cohort is sorted
// once, by SortByRisk, however many of them are computed, and none of
// them sorts or copies the rows again.
//
// A Sorted is made only by SortByRisk or AsSorted, which check what the
// measures then rely on: as many outcomes as risks, every outcome 0 or 1,
// the risks ascending and none NaN. The zero value holds no rows.
type Sorted struct {
	y, p []float64
}

// SortByRisk returns the rows of outcomes y and risks p sorted by p,
// ties kept in row order, in new slices (16 bytes a row, beside the
// sort's own temporary 24). The sort is SortedOrder's, on two goroutines
// for large inputs. The "risks" may be any values that order the rows,
// such as linear predictors; ±Inf are allowed.
//
// SortByRisk panics if y and p differ in length, if an outcome is
// neither 0 nor 1, or if a risk is NaN.
func SortByRisk(y, p []float64) Sorted {
	checkLengths("SortByRisk", y, p)
	idx := sortedIdx(p, true)
	s := Sorted{y: make([]float64, len(y)), p: make([]float64, len(p))}
	for r, i := range idx {
		o, v := y[i], p[i]
		if !isOutcome(o) {
			badOutcome("SortByRisk", int(i), o)
		}
		if v != v {
			panic(fmt.Sprintf("metrics: SortByRisk: risk of row %d is NaN", i))
		}
		s.y[r], s.p[r] = o, v
	}
	return s
}

// AsSorted wraps outcomes y and risks p that are already in ascending
// order of p, as resampling loops build them, without copying: the
// Sorted shares their storage, so they must not change while it is in
// use. It reads every row once to check them.
//
// AsSorted panics if y and p differ in length, if an outcome is neither
// 0 nor 1, or if p is not ascending or holds NaN.
func AsSorted(y, p []float64) Sorted {
	checkLengths("AsSorted", y, p)
	for i, v := range p {
		if o := y[i]; !isOutcome(o) {
			badOutcome("AsSorted", i, o)
		}
		if v != v || i > 0 && !(v >= p[i-1]) {
			panic(fmt.Sprintf("metrics: AsSorted: risks not ascending at row %d", i))
		}
	}
	return Sorted{y: y, p: p}
}

// Len returns the number of rows.
func (s Sorted) Len() int { return len(s.p) }

// Y returns the outcomes in risk order. The slice is the Sorted's own
// storage: read it, do not change it.
func (s Sorted) Y() []float64 { return s.y }

// P returns the risks in ascending order. The slice is the Sorted's own
// storage: read it, do not change it.
func (s Sorted) P() []float64 { return s.p }

// SortedOrder returns the row indices ordered by p, ties kept in row
// order (a stable sort). p must hold no NaN; −0 sorts before +0 (as in
// IEEE 754's totalOrder), whatever the number of rows.
//
// Large inputs are sorted by a least-significant-digit radix sort on the
// IEEE-754 bit patterns (mapped so that unsigned order is numeric order),
// 11 bits per pass, skipping passes in which every key has the same
// digit. Each pass is split between two goroutines, the first half's rows
// placed before the second's within every bucket, so the sort stays
// stable.
func SortedOrder(p []float64) []int {
	return widen(sortedIdx(p, true))
}

// SortedOrderSerial is SortedOrder on the calling goroutine alone, for
// callers that already run one sort per core.
func SortedOrderSerial(p []float64) []int {
	return widen(sortedIdx(p, false))
}

// SortedOrder32 is SortedOrder as 32-bit indices, half the memory of
// ints, for a caller that only reads them (p must have fewer than 2³¹
// rows).
func SortedOrder32(p []float64) []int32 {
	return sortedIdx(p, true)
}

// compareKeys orders two values as the sorts do: by their radix keys,
// numeric order with −0 before +0.
func compareKeys(a, b float64) int {
	return cmp.Compare(radixKey(a), radixKey(b))
}

// widen returns the indices of idx as ints.
func widen(idx []int32) []int {
	out := make([]int, len(idx))
	for i, v := range idx {
		out[i] = int(v)
	}
	return out
}

// sortedIdx is the order of SortedOrder as 32-bit indices: a stable
// comparison sort below 4096 rows, the radix sort from there, on two
// goroutines when parallel is true.
func sortedIdx(p []float64, parallel bool) []int32 {
	n := len(p)
	if n >= 4096 && !parallel {
		return radixSerial(p)
	}
	if n < 4096 {
		idx := make([]int32, n)
		for i := range idx {
			idx[i] = int32(i)
		}
		slices.SortStableFunc(idx, func(a, b int32) int { return compareKeys(p[a], p[b]) })
		return idx
	}
	const bits, buckets, passes = 11, 1 << 11, 6
	keys := make([]uint64, n)
	idx := make([]int32, n)
	half := n / 2
	var hist [2][passes][buckets]int
	var wg sync.WaitGroup
	for h := 0; h < 2; h++ {
		wg.Add(1)
		go func(h int) {
			defer wg.Done()
			lo, hi := h*half, n
			if h == 0 {
				hi = half
			}
			hh := &hist[h]
			for i := lo; i < hi; i++ {
				k := radixKey(p[i])
				keys[i] = k
				idx[i] = int32(i)
				for d := 0; d < passes; d++ {
					hh[d][(k>>(d*bits))&(buckets-1)]++
				}
			}
		}(h)
	}
	wg.Wait()
	last := lastPass(n, func(d, b int) int { return hist[0][d][b] + hist[1][d][b] })
	tk, ti := make([]uint64, n), make([]int32, n)
	for d := 0; d < passes; d++ {
		h0, h1 := &hist[0][d], &hist[1][d]
		skip := false
		sum := 0
		for b := 0; b < buckets; b++ {
			c0, c1 := h0[b], h1[b]
			if c0+c1 == n {
				skip = true
				break
			}
			h0[b], h1[b] = sum, sum+c0
			sum += c0 + c1
		}
		if skip {
			continue
		}
		// The histograms were counted on the original halves; a pass
		// scatters the current order, whose halves hold other rows, so
		// recount the second half's digits for this pass.
		if d > 0 {
			recount(keys, half, d*bits, h0, h1)
		}
		shift := d * bits
		for h := 0; h < 2; h++ {
			wg.Add(1)
			go func(h int) {
				defer wg.Done()
				off := h0
				lo, hi := 0, half
				if h == 1 {
					off, lo, hi = h1, half, n
				}
				if d == last {
					// No pass reads the keys after this one.
					for j := lo; j < hi; j++ {
						b := (keys[j] >> shift) & (buckets - 1)
						ti[off[b]] = idx[j]
						off[b]++
					}
					return
				}
				for j := lo; j < hi; j++ {
					k := keys[j]
					b := (k >> shift) & (buckets - 1)
					pos := off[b]
					off[b]++
					tk[pos], ti[pos] = k, idx[j]
				}
			}(h)
		}
		wg.Wait()
		keys, tk = tk, keys
		idx, ti = ti, idx
	}
	return idx
}

// lastPass is the last of the radix sort's six passes that moves the
// keys, −1 when none does: a pass is skipped when every one of the n
// keys has the same digit, count(d, b) being the number of keys whose
// digit in pass d is b.
func lastPass(n int, count func(d, b int) int) int {
	const buckets, passes = 1 << 11, 6
	for d := passes - 1; d >= 0; d-- {
		same := false
		for b := 0; b < buckets && !same; b++ {
			same = count(d, b) == n
		}
		if !same {
			return d
		}
	}
	return -1
}

// recount sets the bucket offsets of both halves for the digit at shift
// from the keys in their current order: h0 for keys[:half], h1 for the
// rest.
func recount(keys []uint64, half int, shift int, h0, h1 *[1 << 11]int) {
	const buckets = 1 << 11
	var c0, c1 [buckets]int
	for _, k := range keys[:half] {
		c0[(k>>shift)&(buckets-1)]++
	}
	for _, k := range keys[half:] {
		c1[(k>>shift)&(buckets-1)]++
	}
	sum := 0
	for b := 0; b < buckets; b++ {
		h0[b], h1[b] = sum, sum+c0[b]
		sum += c0[b] + c1[b]
	}
}

// A Sorter puts risks in order as SortedOrderSerial does, reusing its
// buffers from one call to the next, for a caller that sorts many times
// (a bootstrap worker sorts once a replicate). The zero value is ready
// to use; a Sorter is not safe for concurrent use.
type Sorter struct {
	keys, tk []uint64
	idx, ti  []int32
}

// Order returns the row indices of p ordered by p, ties in row order, as
// SortedOrderSerial does, as 32-bit indices. The slice is the Sorter's
// own: the next call overwrites it.
func (s *Sorter) Order(p []float64) []int32 {
	n := len(p)
	if cap(s.idx) < n {
		s.keys, s.tk = make([]uint64, n), make([]uint64, n)
		s.idx, s.ti = make([]int32, n), make([]int32, n)
	}
	if n < 4096 {
		idx := s.idx[:n]
		for i := range idx {
			idx[i] = int32(i)
		}
		slices.SortStableFunc(idx, func(a, b int32) int { return compareKeys(p[a], p[b]) })
		return idx
	}
	return s.radix(p)
}

// radixSerial is the radix sort of SortedOrder on one goroutine.
func radixSerial(p []float64) []int32 {
	var s Sorter
	n := len(p)
	s.keys, s.tk = make([]uint64, n), make([]uint64, n)
	s.idx, s.ti = make([]int32, n), make([]int32, n)
	return s.radix(p)
}

// radix is the radix sort of SortedOrder on one goroutine, in s's
// buffers (each with room for len(p) values).
func (s *Sorter) radix(p []float64) []int32 {
	const bits, buckets, passes = 11, 1 << 11, 6
	n := len(p)
	keys := s.keys[:n]
	idx := s.idx[:n]
	var hist [passes][buckets]int
	for i, v := range p {
		k := radixKey(v)
		keys[i], idx[i] = k, int32(i)
		for d := 0; d < passes; d++ {
			hist[d][(k>>(d*bits))&(buckets-1)]++
		}
	}
	last := lastPass(n, func(d, b int) int { return hist[d][b] })
	tk, ti := s.tk[:n], s.ti[:n]
	for d := 0; d < passes; d++ {
		h := &hist[d]
		skip := false
		sum := 0
		for b := range h {
			if h[b] == n {
				skip = true
				break
			}
			c := h[b]
			h[b] = sum
			sum += c
		}
		if skip {
			continue
		}
		shift := d * bits
		if d == last {
			// No pass reads the keys after this one.
			for j, k := range keys {
				b := (k >> shift) & (buckets - 1)
				ti[h[b]] = idx[j]
				h[b]++
			}
			idx, ti = ti, idx
			break
		}
		for j, k := range keys {
			b := (k >> shift) & (buckets - 1)
			tk[h[b]], ti[h[b]] = k, idx[j]
			h[b]++
		}
		keys, tk = tk, keys
		idx, ti = ti, idx
	}
	s.keys, s.tk, s.idx, s.ti = keys[:cap(keys)], tk[:cap(tk)], idx[:cap(idx)], ti[:cap(ti)]
	return idx
}

// radixKey maps a float64 to a uint64 whose unsigned order is the
// numeric order: negative values have every bit flipped, others only the
// sign bit.
func radixKey(v float64) uint64 {
	k := math.Float64bits(v)
	if k>>63 == 1 {
		return ^k
	}
	return k | 1<<63
}
