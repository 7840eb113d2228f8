package monitor

import "math/bits"

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

// walk2 is one simulated run of ChooseLimits for two charts: the loop
// of ChooseLimits with the charts' sums, grid points reached and stops,
// and the generator's state (pcg), held in locals rather than slices
// indexed by chart, which the compiler keeps in registers. Every value computed is the same, in the
// same order: a draw picks the patient and the outcome, each chart's
// S = max(0, S + w) is compared with the next grid point (⌊S/step⌋ >
// reached, written as S/step ≥ reached + 1, the same test for S ≥ 0),
// and the run stops at the horizon or once both charts have passed
// their stops. On return reached holds each chart's grid points passed,
// and sum and sum2 have the run's first passages added.
func walk2(rng pcg, thr []uint32, ws []float64, nm uint64, length int64, stop, reached []int, sum, sum2 [][]int64, ng int) {
	s0, s1 := 0.0, 0.0
	r0, r1 := reached[0], reached[1]
	st0, st1 := stop[0], stop[1]
	sum0, sum1 := sum[0][:ng], sum[1][:ng]
	sq0, sq1 := sum2[0][:ng], sum2[1][:ng]
	next0, next1 := float64(r0+1), float64(r1+1)
	for t := int64(1); t <= length; t++ {
		var u uint64
		rng, u = rng.next()
		i := int(((u >> 32) * nm) >> 32)
		off := 4 * i
		if uint32(u) < thr[i] {
			off++
		}
		w := ws[off : off+3 : off+3]
		v := s0 + w[0]
		if v < 0 {
			v = 0
		}
		s0 = v
		if x := v * (1 / gridStep); x >= next0 && r0 < ng {
			top := min(int(x), ng)
			for g := r0; g < top; g++ {
				sum0[g] += t
				sq0[g] += t * t
			}
			r0 = top
			next0 = float64(r0 + 1)
		}
		v = s1 + w[2]
		if v < 0 {
			v = 0
		}
		s1 = v
		if x := v * (1 / gridStep); x >= next1 && r1 < ng {
			top := min(int(x), ng)
			for g := r1; g < top; g++ {
				sum1[g] += t
				sq1[g] += t * t
			}
			r1 = top
			next1 = float64(r1 + 1)
		}
		if r0 >= st0 && r1 >= st1 {
			break
		}
	}
	reached[0], reached[1] = r0, r1
}
