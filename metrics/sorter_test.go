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

// TestLowessWorkspaceReused checks that a LowessWorkspace used again and
// again, on inputs of changing size and δ, gives exactly the curve of
// Lowess (whose values lowess_test.go checks against statsmodels).
func TestLowessWorkspaceReused(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	var w LowessWorkspace
	for _, c := range []struct {
		n     int
		delta float64
	}{{3000, 0.01}, {200, 0}, {1, 0}, {5000, 0.05}, {2, 0}, {1200, 0.1}} {
		x, y := make([]float64, c.n), make([]float64, c.n)
		for i := range x {
			x[i] = float64(r.IntN(400)) / 400 // ties
			if r.Float64() < x[i] {
				y[i] = 1
			}
		}
		sort.Float64s(x)
		opt := LowessOptions{Delta: c.delta, Workers: 1}
		want := Lowess(x, y, opt)
		got := w.Lowess(x, y, opt)
		if got.FitPoints != want.FitPoints {
			t.Errorf("n = %d: %d fits, Lowess %d", c.n, got.FitPoints, want.FitPoints)
		}
		for i := range x {
			if got.Fit[i] != want.Fit[i] || got.SE[i] != want.SE[i] {
				t.Fatalf("n = %d, row %d: fit %v SE %v, Lowess %v and %v", c.n, i, got.Fit[i], got.SE[i], want.Fit[i], want.SE[i])
			}
		}
	}
}

// TestSortedOrderSignedZero checks every sort's order against Go's
// sort.SliceStable by IEEE 754's totalOrder (−0 before +0, otherwise
// numeric order; IEEE 754-2008 §5.10), index for index, on both sides of
// the radix sort's 4,096 rows: −0 comes before +0 whatever the number of
// rows, ties kept in row order.
func TestSortedOrderSignedZero(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	var s Sorter
	for _, n := range []int{10, 4095, 4096, 20000} {
		p := make([]float64, n)
		for i := range p {
			switch r.IntN(3) {
			case 0:
				p[i] = 0
			case 1:
				p[i] = math.Copysign(0, -1)
			default:
				p[i] = float64(r.IntN(5)) - 2
			}
		}
		want := make([]int, n)
		for i := range want {
			want[i] = i
		}
		sort.SliceStable(want, func(a, b int) bool {
			x, y := p[want[a]], p[want[b]]
			return x < y || x == y && math.Signbit(x) && !math.Signbit(y)
		})
		sorts := map[string][]int{"SortedOrder": SortedOrder(p), "SortedOrderSerial": SortedOrderSerial(p),
			"SortedOrder32": widen(SortedOrder32(p)), "Sorter.Order": widen(s.Order(p))}
		for name, got := range sorts {
			for i := range want {
				if got[i] != want[i] {
					t.Fatalf("n = %d, %s: position %d is row %d (%v), totalOrder's row %d (%v)", n, name, i, got[i], p[got[i]], want[i], p[want[i]])
				}
			}
		}
	}
}
