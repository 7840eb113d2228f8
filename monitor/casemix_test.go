package monitor

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestCaseMixSameAsComparisonSort checks that the quantiles CaseMix takes
// by selection (selectSorted), or by the radix sort for values it does
// not take, are those of the sorted risks by slices.Sort (the definition
// in CaseMix's doc comment): with ties, one value throughout (one
// bucket), values of both signs spread over many binary orders, zeros
// (the radix sort), and below and above MaxCaseMix.
func TestCaseMixSameAsComparisonSort(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		ties bool
		make func(rng *rand.Rand) float64
	}{
		{"small, returned as given", 5000, false, nil},
		{"just above MaxCaseMix", MaxCaseMix + 1, false, nil},
		{"large", 250_000, false, nil},
		{"large with ties", 250_000, true, nil},
		{"one value", 50_000, false, func(*rand.Rand) float64 { return 0.125 }},
		{"both signs, wide", 80_000, false, func(rng *rand.Rand) float64 {
			return (rng.Float64() - 0.3) * math.Exp(40*rng.NormFloat64())
		}},
		{"zeros, by the radix sort", 60_000, false, func(rng *rand.Rand) float64 { return float64(rng.IntN(3)) / 4 }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, uint64(tc.n)))
			p := make([]float64, tc.n)
			for i := range p {
				p[i] = 0.001 + 0.9*rng.Float64()*rng.Float64()
				if tc.ties {
					p[i] = float64(1+rng.IntN(50)) / 100
				}
				if tc.make != nil {
					p[i] = tc.make(rng)
				}
			}
			orig := slices.Clone(p)
			got := CaseMix(p)
			if !slices.Equal(p, orig) {
				t.Fatal("CaseMix changed its input")
			}
			want := p
			if tc.n > MaxCaseMix {
				sorted := slices.Clone(p)
				slices.Sort(sorted)
				want = make([]float64, MaxCaseMix)
				for k := range want {
					want[k] = sorted[(2*k+1)*tc.n/(2*MaxCaseMix)]
				}
			}
			if !slices.Equal(got, want) {
				t.Fatalf("CaseMix differs from the quantiles of slices.Sort (n = %d)", tc.n)
			}
		})
	}
}
