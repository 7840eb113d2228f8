package metrics

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
)

// TestWeightedRisksSameAsWeighted: given the risks, WeightedRisks gives
// exactly Weighted's calibration-in-the-large and slope, with and
// without weights, on linear predictors of both signs (a quarter
// positive) and a few below −700, where z is not e^lp's clamp.
func TestWeightedRisksSameAsWeighted(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 1))
	n := 4000
	y, lp, p, z, w := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range lp {
		lp[i] = -1 + 1.5*r.NormFloat64()
		p[i] = logistic.Expit(lp[i])
		z[i] = math.Exp(-math.Abs(lp[i]))
		if r.Float64() < logistic.Expit(0.2+0.8*lp[i]) {
			y[i] = 1
		}
		w[i] = float64(r.IntN(3))
	}
	check := func(extreme bool, weights []float64) {
		var a, b CalibrationWorkspace
		c1, s1, err1 := a.Weighted(y, lp, weights, 1)
		c2, s2, err2 := b.WeightedRisks(y, lp, p, z, weights, 1)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if c1 != c2 || s1 != s2 {
			t.Errorf("weights %v, extreme %v: Weighted %v %v, WeightedRisks %v %v", weights != nil, extreme, c1, s1, c2, s2)
		}
		if !extreme && (s1 > 0.9 || s1 < 0.7) {
			t.Errorf("slope %v: the simulated slope is 0.8", s1)
		}
	}
	check(false, nil)
	check(false, w)
	for _, i := range []int{5, 900, 3001} {
		lp[i] = -750 - float64(i)
		p[i] = logistic.Expit(lp[i])
		z[i] = math.Exp(-math.Abs(lp[i]))
	}
	check(true, nil)
	check(true, w)
}
