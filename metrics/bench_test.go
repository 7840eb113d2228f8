package metrics

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
)

// cohort1M draws 1M risks from a logistic model and outcomes from them.
func cohort1M() (y, p []float64) {
	r := rand.New(rand.NewPCG(9, 10))
	n := 1_000_000
	y, p = make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = logistic.Expit(-2 + 1.2*r.NormFloat64())
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	return y, p
}

// BenchmarkDeLong1M is the AUC with its DeLong SE on 1M rows, sorting
// included.
func BenchmarkDeLong1M(b *testing.B) {
	y, p := cohort1M()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		AUC(SortByRisk(y, p))
	}
}

// BenchmarkLowess1M is the flexible calibration curve on 1M rows with
// the default δ, sorting included.
func BenchmarkLowess1M(b *testing.B) {
	y, p := cohort1M()
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range p {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		FlexibleCalibration(SortByRisk(y, p), LowessOptions{Delta: DefaultDelta(lo, hi, len(p))})
	}
}

// BenchmarkSortedOrder1M sorts 1M risks.
func BenchmarkSortedOrder1M(b *testing.B) {
	_, p := cohort1M()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		SortedOrder(p)
	}
}

// BenchmarkCalibrationSlope1M fits the calibration slope on 1M rows.
func BenchmarkCalibrationSlope1M(b *testing.B) {
	y, p := cohort1M()
	lp, _ := ClampedLogits(p, 1e-10)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, _, err := CalibrationSlope(y, lp); err != nil {
			b.Fatal(err)
		}
	}
}
