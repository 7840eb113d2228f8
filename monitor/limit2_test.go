package monitor

import (
	"context"
	"math/rand/v2"
	"testing"
)

// TestWalk2SameAsGeneralLoop: the two-chart loops (walkers' runs, two
// at a time interleaved by walkPair, an odd count's last alone by walk)
// give the limits of ChooseLimits' loop for any number of charts. A
// third chart that repeats the first leaves the runs' stopping unchanged
// (its stop is the first chart's), so the first two limits of {R, R', R}
// come from the general loop and must equal those of {R, R'} from the
// two-chart loops exactly: h, its Monte Carlo error, the ARL, runs and
// censored runs.
func TestWalk2SameAsGeneralLoop(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		rs   []float64
		arl  float64
		runs int
	}{
		{"default odds, ARL 2,000", 3000, []float64{2, 0.5}, 2000, 300},
		{"odds 1.5 and 1/3, ARL 500", 800, []float64{1.5, 1.0 / 3}, 500, 300},
		{"default odds, ARL 1,000, odd runs", 2000, []float64{2, 0.5}, 1000, 301},
		{"odds 3 and 0.7, ARL 300, odd runs", 500, []float64{3, 0.7}, 300, 127},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(3, uint64(tc.n)))
			p := make([]float64, tc.n)
			for i := range p {
				p[i] = 0.01 + 0.4*rng.Float64()*rng.Float64()
			}
			opt := LimitOptions{ARL: tc.arl, Runs: tc.runs, Seed: 5}
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
					t.Errorf("chart %d: the two-chart loops give %+v, the general loop %+v", c, two[c], three[c])
				}
			}
			if two[0].H <= 0 || two[0].Runs != tc.runs {
				t.Errorf("limit %+v: want h > 0 from %d runs", two[0], tc.runs)
			}
		})
	}
}

// TestWalkPairSameAsWalk: runs walked two at a time (walkPair), a run
// that ends replaced by the next beside the other, which is then part
// way through, and the last walked alone, end as each walked alone
// (walk) ends, the generator's state, sums, grid points passed and last
// step alike, whichever lane ends first, also when a run goes to the
// horizon; and walkAll adds to the shared sums of first passages and
// counts by grid points passed what the runs add alone.
func TestWalkPairSameAsWalk(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	const n, ng, runs = 400, 4000, 7
	thr := make([]uint32, n)
	ws := make([]float64, 4*n)
	for i := range n {
		p := 0.01 + 0.5*rng.Float64()*rng.Float64()
		thr[i] = uint32(p * (1 << 32))
		ws[4*i], ws[4*i+1] = Weights(p, 2)
		ws[4*i+2], ws[4*i+3] = Weights(p, 0.5)
	}
	pts := walkPoints(thr, ws)
	sums := func() [][]int64 { return [][]int64{make([]int64, ng), make([]int64, ng)} }
	var firstLane, secondLane, horizon int
	for i := range 40 {
		w := walker{pts: pts, seed: 9, base: uint64(100 * i), length: int64(500 + 300*(i%4)),
			stop: []int{150 + 60*(i%5), 100 + 30*(i%3)}, ng: ng}
		start := func(run int, sum, sq [][]int64) walkRun {
			return newWalkRun(pcg{w.seed, w.base + uint64(run)}, w.length, w.stop, sum, sq, ng)
		}
		// Alone: each run into the sums and counts of all.
		soloSum, soloSq := sums(), sums()
		soloTop := [][]int{make([]int, ng+1), make([]int, ng+1)}
		solo := make([]walkRun, runs)
		for r := range solo {
			solo[r] = start(r, soloSum, soloSq)
			solo[r].walk(pts)
			solo[r].count(soloTop)
			if !solo[r].stopped() {
				horizon++
			}
		}
		// Two lanes, as walkAll walks them, keeping every run.
		sum, sq := sums(), sums()
		lanes := make([]walkRun, runs)
		lane := [2]int{0, 1}
		lanes[0], lanes[1] = start(0, sum, sq), start(1, sum, sq)
		for next := 2; ; {
			walkPair(&lanes[lane[0]], &lanes[lane[1]], pts)
			refilled := false
			for l := range lane {
				if lanes[lane[l]].ended() && next < runs {
					if l == 0 {
						firstLane++
					} else {
						secondLane++
					}
					lanes[next] = start(next, sum, sq)
					lane[l], next, refilled = next, next+1, true
				}
			}
			if !refilled {
				break
			}
		}
		for _, l := range lane {
			lanes[l].walk(pts)
		}
		for r, got := range lanes {
			want := solo[r]
			if got.rng != want.rng || got.s0 != want.s0 || got.s1 != want.s1 || got.t != want.t || got.length != want.length ||
				got.c0.reached != want.c0.reached || got.c1.reached != want.c1.reached {
				t.Fatalf("case %d, run %d: in lanes ends at step %d (S %v, %v; %d, %d grid points), alone at step %d (S %v, %v; %d, %d)",
					i, r, got.length, got.s0, got.s1, got.c0.reached, got.c1.reached,
					want.length, want.s0, want.s1, want.c0.reached, want.c1.reached)
			}
		}
		// walkAll itself, fed the runs' numbers.
		allSum, allSq := sums(), sums()
		allTop := [][]int{make([]int, ng+1), make([]int, ng+1)}
		numbers := make(chan int, runs)
		for r := range runs {
			numbers <- r
		}
		close(numbers)
		w.walkAll(numbers, allSum, allSq, allTop)
		for c := range 2 {
			for g := range ng {
				if sum[c][g] != soloSum[c][g] || allSum[c][g] != soloSum[c][g] {
					t.Fatalf("case %d, chart %d, grid point %d: sums %d in lanes, %d by walkAll, %d alone", i, c, g, sum[c][g], allSum[c][g], soloSum[c][g])
				}
				if sq[c][g] != soloSq[c][g] || allSq[c][g] != soloSq[c][g] {
					t.Fatalf("case %d, chart %d, grid point %d: sums of squares %d in lanes, %d by walkAll, %d alone", i, c, g, sq[c][g], allSq[c][g], soloSq[c][g])
				}
			}
			for g := range ng + 1 {
				if allTop[c][g] != soloTop[c][g] {
					t.Fatalf("case %d, chart %d: %d runs passed %d grid points by walkAll, %d alone", i, c, allTop[c][g], g, soloTop[c][g])
				}
			}
		}
	}
	// The cases must include either lane ending first and a run cut at
	// the horizon, or the comparisons above did not test a run joining
	// another part way through.
	if firstLane == 0 || secondLane == 0 || horizon == 0 {
		t.Fatalf("cases: the first lane refilled %d times, the second %d, %d runs to the horizon; want each > 0", firstLane, secondLane, horizon)
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
