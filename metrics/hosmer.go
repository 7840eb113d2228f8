package metrics

import (
	"cmp"
	"math"
	"slices"
	"sync"

	"gonum.org/v1/gonum/stat/distuv"
)

// HLGroup is one risk group of the Hosmer–Lemeshow test.
type HLGroup struct {
	N        int     `json:"n"`
	Observed float64 `json:"observed"`
	Expected float64 `json:"expected"`
	MinRisk  float64 `json:"min_risk"`
	MaxRisk  float64 `json:"max_risk"`
}

// HosmerLemeshowTest is the result of the Hosmer–Lemeshow test.
type HosmerLemeshowTest struct {
	Statistic float64   `json:"statistic"`
	DF        int       `json:"df"`
	P         float64   `json:"p"`
	Groups    int       `json:"groups"`
	Table     []HLGroup `json:"table,omitempty"`
}

// HosmerLemeshow computes the Hosmer–Lemeshow goodness-of-fit test
// (Hosmer & Lemeshow 1980, Communications in Statistics A10:1043–1069)
// of outcomes y (0 or 1) against predicted risks p, with g groups.
//
// Grouping is exact, so results are reproducible: the rows are sorted by
// predicted risk, stably in row order; group k (0-based) starts at sorted
// position ⌊k·n/g⌋, and a start that falls inside a run of tied risks
// moves forward past the run, so ties stay in one group; empty groups are
// dropped. The statistic is Σ (O_k − E_k)² / (E_k (1 − E_k/n_k)), with O_k
// the events, E_k the sum of risks and n_k the rows of group k. The
// degrees of freedom are groups − 2 when development is true (the model
// was fitted to these rows) and groups otherwise.
//
// HosmerLemeshow panics if y and p differ in length or g < 1.
func HosmerLemeshow(y, p []float64, g int, development bool) HosmerLemeshowTest {
	return HosmerLemeshowSorted(y, p, nil, g, development)
}

// HosmerLemeshowSorted is HosmerLemeshow with the rows already sorted by
// p (order as from SortedOrder; nil sorts here).
func HosmerLemeshowSorted(y, p []float64, order []int, g int, development bool) HosmerLemeshowTest {
	if len(y) != len(p) {
		panic("metrics: HosmerLemeshow: y and p differ in length")
	}
	if g < 1 {
		panic("metrics: HosmerLemeshow: fewer than one group")
	}
	n := len(p)
	idx := order
	if idx == nil {
		idx = SortedOrder(p)
	}
	starts := make([]int, 0, g+1)
	for k := 0; k < g; k++ {
		s := k * n / g
		for s > 0 && s < n && p[idx[s]] == p[idx[s-1]] {
			s++
		}
		if len(starts) > 0 && s <= starts[len(starts)-1] {
			continue
		}
		starts = append(starts, s)
	}
	starts = append(starts, n)
	var t HosmerLemeshowTest
	for k := 0; k+1 < len(starts); k++ {
		lo, hi := starts[k], starts[k+1]
		if lo >= hi {
			continue
		}
		grp := HLGroup{N: hi - lo, MinRisk: p[idx[lo]], MaxRisk: p[idx[hi-1]]}
		for _, i := range idx[lo:hi] {
			grp.Observed += y[i]
			grp.Expected += p[i]
		}
		t.Table = append(t.Table, grp)
		d := grp.Observed - grp.Expected
		t.Statistic += d * d / (grp.Expected * (1 - grp.Expected/float64(grp.N)))
	}
	t.Groups = len(t.Table)
	t.DF = t.Groups
	if development {
		t.DF -= 2
	}
	t.P = math.NaN()
	if t.DF >= 1 {
		t.P = distuv.ChiSquared{K: float64(t.DF)}.Survival(t.Statistic)
	}
	return t
}

// SortedOrder returns the row indices ordered by p, ties kept in row
// order (a stable sort). p must hold no NaN; −0 sorts before +0.
//
// Large inputs are sorted by a least-significant-digit radix sort on the
// IEEE-754 bit patterns (mapped so that unsigned order is numeric order),
// 11 bits per pass, skipping passes in which every key has the same
// digit. Each pass is split between two goroutines, the first half's rows
// placed before the second's within every bucket, so the sort stays
// stable.
func SortedOrder(p []float64) []int {
	return sortedOrder(p, true)
}

// SortedOrderSerial is SortedOrder on the calling goroutine alone, for
// callers that already run one sort per core.
func SortedOrderSerial(p []float64) []int {
	return sortedOrder(p, false)
}

func sortedOrder(p []float64, parallel bool) []int {
	n := len(p)
	if n >= 4096 && !parallel {
		return radixSerial(p)
	}
	if n < 4096 {
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(p[a], p[b]) })
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
	out := make([]int, n)
	for i, v := range idx {
		out[i] = int(v)
	}
	return out
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

// radixSerial is the radix sort of SortedOrder on one goroutine.
func radixSerial(p []float64) []int {
	const bits, buckets, passes = 11, 1 << 11, 6
	n := len(p)
	keys := make([]uint64, n)
	idx := make([]int32, n)
	var hist [passes][buckets]int
	for i, v := range p {
		k := radixKey(v)
		keys[i], idx[i] = k, int32(i)
		for d := 0; d < passes; d++ {
			hist[d][(k>>(d*bits))&(buckets-1)]++
		}
	}
	tk, ti := make([]uint64, n), make([]int32, n)
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
		for j, k := range keys {
			b := (k >> shift) & (buckets - 1)
			tk[h[b]], ti[h[b]] = k, idx[j]
			h[b]++
		}
		keys, tk = tk, keys
		idx, ti = ti, idx
	}
	out := make([]int, n)
	for i, v := range idx {
		out[i] = int(v)
	}
	return out
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
