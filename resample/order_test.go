package resample

import (
	"cmp"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
)

// TestRiskOrderIsStableSort: riskOrder gives the order of Go's own
// stable sort (slices.SortStableFunc, ascending by risk, ties in row
// order) on risks spread over several powers of two, on risks with many
// ties, on risks rounded to three decimals (ties within small buckets),
// on risks crowded in a narrow band with a few far away (buckets of
// hundreds of rows), on all-equal risks and below the size where it
// sorts by buckets; the same workspace serves every call, as a
// bootstrap worker's does.
func TestRiskOrderIsStableSort(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 7))
	cases := map[string]func(n int) []float64{
		"spread": func(n int) []float64 {
			p := make([]float64, n)
			for i := range p {
				p[i] = logistic.Expit(-2 + 1.5*r.NormFloat64())
			}
			return p
		},
		"ties": func(n int) []float64 {
			p := make([]float64, n)
			for i := range p {
				p[i] = logistic.Expit(float64(r.IntN(9)) - 4)
			}
			return p
		},
		"rounded": func(n int) []float64 {
			p := make([]float64, n)
			for i := range p {
				p[i] = math.Round(1e3*logistic.Expit(-1+r.NormFloat64())) / 1e3
			}
			return p
		},
		"crowded": func(n int) []float64 {
			p := make([]float64, n)
			for i := range p {
				p[i] = 0.3 + 1e-9*r.Float64()
				if i%1000 == 0 {
					p[i] = r.Float64()
				}
			}
			return p
		},
		"equal": func(n int) []float64 {
			p := make([]float64, n)
			for i := range p {
				p[i] = 0.25
			}
			return p
		},
	}
	var o riskOrder
	for name, gen := range cases {
		for _, n := range []int{100, 4095, 4096, 10000, 70001} {
			p := gen(n)
			want := make([]int32, n)
			for i := range want {
				want[i] = int32(i)
			}
			slices.SortStableFunc(want, func(a, b int32) int { return cmp.Compare(p[a], p[b]) })
			if got := o.order(p); !slices.Equal(got, want) {
				t.Errorf("%s, %d risks: the order differs from the stable sort's", name, n)
			}
		}
	}
}
