package monitor

import (
	"context"
	"math/rand/v2"
	"testing"
)

// TestWalk2SameAsGeneralLoop: the two-chart loop (walk2) gives the
// limits of ChooseLimits' loop for any number of charts. A third chart
// that repeats the first leaves the runs' stopping unchanged (its stop
// is the first chart's), so the first two limits of {R, R', R} come from
// the general loop and must equal those of {R, R'} from walk2 exactly:
// h, its Monte Carlo error, the ARL, runs and censored runs.
func TestWalk2SameAsGeneralLoop(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		rs   []float64
		arl  float64
	}{
		{"default odds, ARL 2,000", 3000, []float64{2, 0.5}, 2000},
		{"odds 1.5 and 1/3, ARL 500", 800, []float64{1.5, 1.0 / 3}, 500},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(3, uint64(tc.n)))
			p := make([]float64, tc.n)
			for i := range p {
				p[i] = 0.01 + 0.4*rng.Float64()*rng.Float64()
			}
			opt := LimitOptions{ARL: tc.arl, Runs: 300, Seed: 5}
			two, err := ChooseLimits(context.Background(), p, tc.rs, opt)
			if err != nil {
				t.Fatal(err)
			}
			three, err := ChooseLimits(context.Background(), p, append(tc.rs[:2:2], tc.rs[0]), opt)
			if err != nil {
				t.Fatal(err)
			}
			for c := range 2 {
				if two[c] != three[c] {
					t.Errorf("chart %d: walk2 gives %+v, the general loop %+v", c, two[c], three[c])
				}
			}
			if two[0].H <= 0 || two[0].Runs != 300 {
				t.Errorf("limit %+v: want h > 0 from 300 runs", two[0])
			}
		})
	}
}

// TestPCGSameAsMathRand: the simulation's own copy of the generator
// (pcg) draws the sequence of the standard library's math/rand/v2 PCG
// from the same seeds, so the runs are those of rand.NewPCG(Seed, run).
func TestPCGSameAsMathRand(t *testing.T) {
	for _, seed := range [][2]uint64{{0, 0}, {1, 0}, {1, 1 << 62}, {^uint64(0), 12345}} {
		ref := rand.NewPCG(seed[0], seed[1])
		p := pcg{seed[0], seed[1]}
		for i := range 10000 {
			var u uint64
			p, u = p.next()
			if want := ref.Uint64(); u != want {
				t.Fatalf("seeds %v, draw %d: pcg gives %#x, math/rand/v2 %#x", seed, i+1, u, want)
			}
		}
	}
}
