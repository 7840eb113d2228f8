package monitor

import "math/rand/v2"

// walk2 is one simulated run of ChooseLimits for two charts: the loop
// of ChooseLimits with the charts' sums, grid points reached and stops
// held in locals rather than slices indexed by chart, which the
// compiler keeps in registers. Every value computed is the same, in the
// same order: a draw picks the patient and the outcome, each chart's
// S = max(0, S + w) is compared with the next grid point (⌊S/step⌋ >
// reached, written as S/step ≥ reached + 1, the same test for S ≥ 0),
// and the run stops at the horizon or once both charts have passed
// their stops. On return reached holds each chart's grid points passed,
// and sum and sum2 have the run's first passages added.
func walk2(rng *rand.PCG, thr []uint32, ws []float64, nm uint64, length int64, stop, reached []int, sum, sum2 [][]int64, ng int) {
	s0, s1 := 0.0, 0.0
	r0, r1 := reached[0], reached[1]
	st0, st1 := stop[0], stop[1]
	sum0, sum1 := sum[0][:ng], sum[1][:ng]
	sq0, sq1 := sum2[0][:ng], sum2[1][:ng]
	next0, next1 := float64(r0+1), float64(r1+1)
	for t := int64(1); t <= length; t++ {
		u := rng.Uint64()
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
