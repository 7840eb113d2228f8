package monitor

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// TestCaseMixSameAsComparisonSort checks that the quantiles CaseMix takes
// by the radix sort are those of the sorted risks by slices.Sort (the
// definition in CaseMix's doc comment), with ties and below and above the
// radix sort's threshold of 4,096 rows.
func TestCaseMixSameAsComparisonSort(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		ties bool
	}{
		{"small, returned as given", 5000, false},
		{"just above MaxCaseMix", MaxCaseMix + 1, false},
		{"large", 250_000, false},
		{"large with ties", 250_000, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, uint64(tc.n)))
			p := make([]float64, tc.n)
			for i := range p {
				p[i] = 0.001 + 0.9*rng.Float64()*rng.Float64()
				if tc.ties {
					p[i] = float64(1+rng.IntN(50)) / 100
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
