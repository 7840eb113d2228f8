package monitor

import (
	"math"
	"math/bits"
)

// pcg is the generator of math/rand/v2's PCG (a 128-bit LCG with the DXSM
// output function) with its state in two words a loop can keep in
// registers: rand.NewPCG(hi, lo) and pcg{hi, lo} give the same
// Uint64 sequence (TestPCGSameAsMathRand).
type pcg struct{ hi, lo uint64 }

// next advances the state and returns the next 64-bit draw, as
// rand.PCG.Uint64 does.
func (p pcg) next() (pcg, uint64) {
	const (
		mulHi = 2549297995355413924
		mulLo = 4865540595714422341
		incHi = 6364136223846793005
		incLo = 1442695040888963407
		cheap = 0xda942042e4dd58b5
	)
	hi, lo := bits.Mul64(p.lo, mulLo)
	hi += p.hi*mulLo + p.lo*mulHi
	lo, c := bits.Add64(lo, incLo, 0)
	hi, _ = bits.Add64(hi, incHi, c)
	u := hi ^ hi>>32
	u *= cheap
	u ^= u >> 48
	u *= lo | 1
	return pcg{hi, lo}, u
}

// walkPoint is one patient of the case mix as a walk draws it: the event
// threshold (p·2³²) and the two charts' weights, ws's four values for
// the patient in their order (chart 0 without and with the event, then
// chart 1), so that a draw reads one element and its weights by an index
// of 0 or 1 that needs no bounds check.
type walkPoint struct {
	thr uint32
	w   [4]float64
}

// walkPoints lays out the case mix's thresholds and two-chart weights
// (ws: four a patient) as a walk reads them.
func walkPoints(thr []uint32, ws []float64) []walkPoint {
	pts := make([]walkPoint, len(thr))
	for i := range pts {
		pts[i].thr = thr[i]
		copy(pts[i].w[:], ws[4*i:4*i+4])
	}
	return pts
}

// walkChart is what a walk keeps of one chart beyond its sum: the grid
// points passed (reached), the grid point the run may stop at, and the
// sums of first passages, touched only when the chart passes its next
// grid point, which is rare, so the loop keeps them out of its registers.
type walkChart struct {
	reached, stop, ng int
	sum, sq           []int64
}

// pass records that the chart's sum reached x grid steps (x ≥ reached +
// 1) at step t: the first passage of every grid point from reached up to
// ⌊x⌋ (at most ng). It returns the value of x at which the next grid
// point is passed, +Inf once all ng are.
func (c *walkChart) pass(x float64, t int64) float64 {
	top := min(int(x), c.ng)
	for g := c.reached; g < top; g++ {
		c.sum[g] += t
		c.sq[g] += t * t
	}
	c.reached = top
	return c.next()
}

// next is the value of S/step at which the chart passes its next grid
// point, +Inf once all ng are passed.
func (c *walkChart) next() float64 {
	if c.reached >= c.ng {
		return math.Inf(1)
	}
	return float64(c.reached + 1)
}

// walkRun is one simulated run of ChooseLimits for two charts, as far
// as it has gone: the generator's state, each chart's sum S and the
// value of S/step at which it passes its next grid point, the rest of
// each chart (walkChart), the next step to take (t) and the last
// (length: the horizon, or the step at which both charts had passed
// their stops).
type walkRun struct {
	rng          pcg
	s0, s1       float64
	next0, next1 float64
	c0, c1       walkChart
	t, length    int64
}

// newWalkRun starts a run drawing from rng, of at most length steps,
// that stops once chart c has passed grid point stop[c], adding its
// first passages to sum[c] and sum2[c] (ng grid points each).
func newWalkRun(rng pcg, length int64, stop []int, sum, sum2 [][]int64, ng int) walkRun {
	r := walkRun{
		rng:    rng,
		c0:     walkChart{stop: stop[0], ng: ng, sum: sum[0][:ng], sq: sum2[0][:ng]},
		c1:     walkChart{stop: stop[1], ng: ng, sum: sum[1][:ng], sq: sum2[1][:ng]},
		t:      1,
		length: length,
	}
	r.next0, r.next1 = r.c0.next(), r.c1.next()
	if r.stopped() {
		r.length = min(length, 1)
	}
	return r
}

// stopped reports whether both charts have passed their stops.
func (r *walkRun) stopped() bool {
	return r.c0.reached >= r.c0.stop && r.c1.reached >= r.c1.stop
}

// ended reports whether the run has taken its last step.
func (r *walkRun) ended() bool { return r.t > r.length }

// count counts the ended run in top[c] by the grid points chart c
// passed (the grid points not passed count the run at the horizon,
// added for all runs at once by tails).
func (r *walkRun) count(top [][]int) {
	top[0][r.c0.reached]++
	top[1][r.c1.reached]++
}

// walk takes the run's steps to its end: the loop of ChooseLimits with
// the charts' sums, next grid points and the generator's state in
// locals, which the compiler keeps in registers, and the rest of each
// chart (walkChart) read only when it passes a grid point. Every value
// computed is the same, in the same order: a draw picks the patient and
// the outcome, each chart's S = max(0, S + w) is compared with the next
// grid point (⌊S/step⌋ > reached, written as S/step ≥ reached + 1, the
// same test for S ≥ 0; never once all ng are passed), and the run stops
// at the horizon or once both charts have passed their stops (checked,
// as reached only changes there, when a chart passes a grid point, by
// ending the loop after the step).
func (r *walkRun) walk(pts []walkPoint) {
	nm := uint64(len(pts))
	rng, s0, s1, next0, next1, length := r.rng, r.s0, r.s1, r.next0, r.next1, r.length
	t := r.t
	for ; t <= length; t++ {
		var u uint64
		rng, u = rng.next()
		pt := &pts[((u>>32)*nm)>>32]
		e := 0
		if uint32(u) < pt.thr {
			e = 1
		}
		v := s0 + pt.w[e]
		if v < 0 {
			v = 0
		}
		s0 = v
		if x := v * (1 / gridStep); x >= next0 {
			next0 = r.c0.pass(x, t)
			if r.stopped() {
				length = t
			}
		}
		v = s1 + pt.w[e+2]
		if v < 0 {
			v = 0
		}
		s1 = v
		if x := v * (1 / gridStep); x >= next1 {
			next1 = r.c1.pass(x, t)
			if r.stopped() {
				length = t
			}
		}
	}
	r.rng, r.s0, r.s1, r.next0, r.next1, r.t, r.length = rng, s0, s1, next0, next1, t, length
}

// walkPair takes the steps of two runs a and b interleaved, a step of a
// then a step of b in one loop, so that the processor overlaps their
// chains of dependent operations (each run's generator, then its load,
// then its charts' sums), until one of them ends. Each run computes
// what walk computes for it, the same draws, sums and stops; the first
// passages of both go into integer sums, whose order does not change
// their value.
func walkPair(a, b *walkRun, pts []walkPoint) {
	nm := uint64(len(pts))
	// The loop counts a's steps (t); b's step is t + d. It ends after
	// step end, at which the first of them reaches its last step; a run
	// that stops shortens its length and end with it (rare, on passing a
	// grid point), which keeps the loop's live values few enough for
	// the registers.
	t, d := a.t, b.t-a.t
	end := min(a.length, b.length-d)
	ga, a0, a1, na0, na1 := a.rng, a.s0, a.s1, a.next0, a.next1
	gb, b0, b1, nb0, nb1 := b.rng, b.s0, b.s1, b.next0, b.next1
	for ; t <= end; t++ {
		var u, w uint64
		ga, u = ga.next()
		gb, w = gb.next()
		pa := &pts[((u>>32)*nm)>>32]
		pb := &pts[((w>>32)*nm)>>32]
		ea, eb := 0, 0
		if uint32(u) < pa.thr {
			ea = 1
		}
		if uint32(w) < pb.thr {
			eb = 1
		}
		v := a0 + pa.w[ea]
		if v < 0 {
			v = 0
		}
		a0 = v
		if x := v * (1 / gridStep); x >= na0 {
			na0 = a.c0.pass(x, t)
			end = a.stopAt(t, end)
		}
		v = a1 + pa.w[ea+2]
		if v < 0 {
			v = 0
		}
		a1 = v
		if x := v * (1 / gridStep); x >= na1 {
			na1 = a.c1.pass(x, t)
			end = a.stopAt(t, end)
		}
		v = b0 + pb.w[eb]
		if v < 0 {
			v = 0
		}
		b0 = v
		if x := v * (1 / gridStep); x >= nb0 {
			nb0 = b.c0.pass(x, t+d)
			end = b.stopAt(t+d, end+d) - d
		}
		v = b1 + pb.w[eb+2]
		if v < 0 {
			v = 0
		}
		b1 = v
		if x := v * (1 / gridStep); x >= nb1 {
			nb1 = b.c1.pass(x, t+d)
			end = b.stopAt(t+d, end+d) - d
		}
	}
	a.rng, a.s0, a.s1, a.next0, a.next1, a.t = ga, a0, a1, na0, na1, t
	b.rng, b.s0, b.s1, b.next0, b.next1, b.t = gb, b0, b1, nb0, nb1, t+d
}

// stopAt ends the run after step t if both charts have now passed
// their stops, and returns end (a last step of a loop that takes the
// run's steps), cut to t if so.
func (r *walkRun) stopAt(t, end int64) int64 {
	if r.stopped() {
		r.length = t
		return min(end, t)
	}
	return end
}

// walker walks the runs of one simulation of ChooseLimits for two
// charts: run i draws from PCG(seed, base + i), for at most length
// steps, and stops once chart c has passed grid point stop[c] (of ng).
type walker struct {
	pts        []walkPoint
	seed, base uint64
	length     int64
	stop       []int
	ng         int
}

// walkAll walks the runs whose numbers it receives from runs, two at a
// time interleaved (walkPair): when one ends, the next run received
// takes its place beside the other, so that nearly every step is taken
// beside another; the last run walks alone. It adds the runs' first
// passages to sum and sum2 and counts each run in top.
func (w walker) walkAll(runs <-chan int, sum, sum2 [][]int64, top [][]int) {
	start := func(r *walkRun) bool {
		run, ok := <-runs
		if ok {
			*r = newWalkRun(pcg{w.seed, w.base + uint64(run)}, w.length, w.stop, sum, sum2, w.ng)
		}
		return ok
	}
	var a, b walkRun
	okA := start(&a)
	okB := okA && start(&b)
	for okA && okB {
		walkPair(&a, &b, w.pts)
		if a.ended() {
			a.count(top)
			okA = start(&a)
		}
		if b.ended() {
			b.count(top)
			okB = start(&b)
		}
	}
	if okA {
		a.walk(w.pts)
		a.count(top)
	}
	if okB {
		b.walk(w.pts)
		b.count(top)
	}
}
