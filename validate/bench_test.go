package validate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/samplesize"
)

// BenchmarkMeasures1M is the measures of a 1M-row audit and its
// sample-size check from the cohort's own linear predictors, without the
// reading, scoring and figures of BenchmarkAudit1M (../audit): invented
// risks, a normal LP of mean -1.5 and SD 1, outcomes drawn from them.
func BenchmarkMeasures1M(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	n := 1_000_000
	y, p, lp := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		lp[i] = -1.5 + r.NormFloat64()
		p[i] = 1 / (1 + math.Exp(-lp[i]))
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	for b.Loop() {
		perf, err := AssessLogits(y, p, lp, Options{Delta: AutoDelta})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := samplesize.Compute(samplesize.Anticipated{LP: lp, Threshold: 0.1, CalIntercept: perf.Calibration.SlopeIntercept, CalSlope: perf.Calibration.Slope, C: perf.Discrimination.AUC}, samplesize.DefaultTargets()); err != nil {
			b.Fatal(err)
		}
	}
}
