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

// walkPoint is one patient of the case mix as walk2 draws it: the event
// threshold (p·2³²) and the two charts' weights, ws's four values for
// the patient in their order (chart 0 without and with the event, then
// chart 1), so that a draw reads one element and its weights by an index
// of 0 or 1 that needs no bounds check.
type walkPoint struct {
	thr uint32
	w   [4]float64
}

// walkPoints lays out the case mix's thresholds and two-chart weights
// (ws: four a patient) as walk2 reads them.
func walkPoints(thr []uint32, ws []float64) []walkPoint {
	pts := make([]walkPoint, len(thr))
	for i := range pts {
		pts[i].thr = thr[i]
		copy(pts[i].w[:], ws[4*i:4*i+4])
	}
	return pts
}

// walkChart is what walk2 keeps of one chart beyond its sum: the grid
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
	if top >= c.ng {
		return math.Inf(1)
	}
	return float64(top + 1)
}

// walk2 is one simulated run of ChooseLimits for two charts: the loop
// of ChooseLimits with the charts' sums, next grid points and the
// generator's state (pcg) in locals, which the compiler keeps in
// registers, and the rest of each chart (walkChart) read only when it
// passes a grid point. Every value computed is the same, in the same
// order: a draw picks the patient and the outcome, each chart's S =
// max(0, S + w) is compared with the next grid point (⌊S/step⌋ >
// reached, written as S/step ≥ reached + 1, the same test for S ≥ 0;
// never once all ng are passed), and the run stops at the horizon or
// once both charts have passed their stops (checked, as reached only
// changes there, when a chart passes a grid point, by ending the loop
// after the step). On return reached holds each chart's grid points
// passed, and sum and sum2 have the run's first passages added.
func walk2(rng pcg, pts []walkPoint, length int64, stop, reached []int, sum, sum2 [][]int64, ng int) {
	c0 := walkChart{reached: reached[0], stop: stop[0], ng: ng, sum: sum[0][:ng], sq: sum2[0][:ng]}
	c1 := walkChart{reached: reached[1], stop: stop[1], ng: ng, sum: sum[1][:ng], sq: sum2[1][:ng]}
	next := func(c *walkChart) float64 {
		if c.reached >= c.ng {
			return math.Inf(1)
		}
		return float64(c.reached + 1)
	}
	next0, next1 := next(&c0), next(&c1)
	if c0.reached >= c0.stop && c1.reached >= c1.stop {
		length = min(length, 1)
	}
	nm := uint64(len(pts))
	s0, s1 := 0.0, 0.0
	for t := int64(1); t <= length; t++ {
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
			next0 = c0.pass(x, t)
			if c0.reached >= c0.stop && c1.reached >= c1.stop {
				length = t
			}
		}
		v = s1 + pt.w[e+2]
		if v < 0 {
			v = 0
		}
		s1 = v
		if x := v * (1 / gridStep); x >= next1 {
			next1 = c1.pass(x, t)
			if c0.reached >= c0.stop && c1.reached >= c1.stop {
				length = t
			}
		}
	}
	reached[0], reached[1] = c0.reached, c1.reached
}
