package metrics

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// TestSorterReused checks Sorter.Order, called again and again on one
// Sorter with inputs of changing size (below and above the radix sort's
// 4,096 rows, with ties, negative values and −0), against a stable sort
// by Go's sort.SliceStable.
func TestSorterReused(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	var s Sorter
	for _, n := range []int{10, 5000, 3000, 20000, 1, 4096, 0} {
		p := make([]float64, n)
		for i := range p {
			switch r.IntN(4) {
			case 0:
				p[i] = float64(r.IntN(5)) - 2 // ties, negatives
			case 1:
				p[i] = math.Copysign(0, -1) // −0, equal to the +0 of case 0
			default:
				p[i] = r.NormFloat64()
			}
		}
		want := make([]int, n)
		for i := range want {
			want[i] = i
		}
		sort.SliceStable(want, func(a, b int) bool { return p[want[a]] < p[want[b]] })
		got := s.Order(p)
		if len(got) != n {
			t.Fatalf("n = %d: %d indices", n, len(got))
		}
		for i := range got {
			// −0 and +0 are equal to sort.SliceStable, which keeps them in
			// row order, but Order puts −0 first: compare the values.
			if p[got[i]] != p[want[i]] {
				t.Fatalf("n = %d: position %d holds %v, the stable sort %v", n, i, p[got[i]], p[want[i]])
			}
		}
		// The order is SortedOrderSerial's exactly.
		ref := SortedOrderSerial(p)
		for i := range got {
			if int(got[i]) != ref[i] {
				t.Fatalf("n = %d: position %d is row %d, SortedOrderSerial's row %d", n, i, got[i], ref[i])
			}
		}
	}
}
