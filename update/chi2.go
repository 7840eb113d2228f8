package update

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// chi2Survival is the upper tail of a chi-square distribution.
func chi2Survival(x float64, df int) float64 {
	if x <= 0 {
		return 1
	}
	if df < 1 {
		return math.NaN()
	}
	return distuv.ChiSquared{K: float64(df)}.Survival(x)
}
