package monitor

import (
	"context"
	"math/rand/v2"
	"testing"
)

// BenchmarkChooseLimits1M is the limit simulation with the defaults
// (in-control ARL 10,000, 1,000 runs, both charts) on 1M risks.
func BenchmarkChooseLimits1M(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	p := make([]float64, 1_000_000)
	for i := range p {
		p[i] = 0.02 + 0.3*rng.Float64()*rng.Float64()
	}
	b.ResetTimer()
	for range b.N {
		if _, err := ChooseLimits(context.Background(), p, []float64{2, 0.5}, LimitOptions{Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}
