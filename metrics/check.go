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
		if v != 0 && v != 1 {
			badOutcome(fn, i, v)
		}
	}
}

// badOutcome panics with the row and value of an outcome that is neither
// 0 nor 1. It is a function of its own so that the loops that check
// stay small.
func badOutcome(fn string, row int, v float64) {
	panic(fmt.Sprintf("metrics: %s: outcome %v of row %d is neither 0 nor 1", fn, v, row))
}
