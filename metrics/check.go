package metrics

import "fmt"

// checkLengths panics, naming fn, when there are not as many risks as
// outcomes.
func checkLengths(fn string, y, p []float64) {
	if len(y) != len(p) {
		panic(fmt.Sprintf("metrics: %s: %d outcomes but %d risks", fn, len(y), len(p)))
	}
}

// checkLinear panics, naming fn, when there are not as many linear
// predictors as outcomes or an outcome is neither 0 nor 1.
func checkLinear(fn string, y, lp []float64) {
	if len(y) != len(lp) {
		panic(fmt.Sprintf("metrics: %s: %d outcomes but %d linear predictors", fn, len(y), len(lp)))
	}
	checkOutcomes(fn, y)
}

// checkWeights panics, naming fn, when w is not nil and not as long as y.
func checkWeights(fn string, y, w []float64) {
	if w != nil && len(w) != len(y) {
		panic(fmt.Sprintf("metrics: %s: %d outcomes but %d weights", fn, len(y), len(w)))
	}
}

// checkOutcomes panics, naming fn, at the first outcome that is neither
// 0 nor 1 (NaN included).
func checkOutcomes(fn string, y []float64) {
	for i, v := range y {
		if !isOutcome(v) {
			badOutcome(fn, i, v)
		}
	}
}

// isOutcome reports whether v is 0 or 1. v(v − 1) is 0 exactly then: v − 1
// is exact near 1, the product cannot underflow to 0 for v ≠ 0, and NaN
// and ±Inf give NaN or Inf. One comparison whose outcome is almost never
// true keeps the checking loops free of mispredicted branches, which
// "v != 0 && v != 1" on a column of 0s and 1s is not.
func isOutcome(v float64) bool { return v*(v-1) == 0 }

// badOutcome panics with the row and value of an outcome that is neither
// 0 nor 1. It is a function of its own so that the loops that check
// stay small.
func badOutcome(fn string, row int, v float64) {
	panic(fmt.Sprintf("metrics: %s: outcome %v of row %d is neither 0 nor 1", fn, v, row))
}
