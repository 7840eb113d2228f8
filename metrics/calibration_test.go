package metrics

import (
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
)

// TestCalibrationWeightedSameWhateverTheWorkers checks that the worker
// count changes where the sums run, not their value: above the 50,000
// rows at which the sums split into halves, one worker must give the
// bits of two.
func TestCalibrationWeightedSameWhateverTheWorkers(t *testing.T) {
	r := rand.New(rand.NewPCG(41, 42))
	n := 3 * rowSplit / 2
	y, lp, w := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range lp {
		lp[i] = -1.5 + r.NormFloat64()
		// Miscalibrated on purpose: CITL and slope away from 0 and 1.
		if r.Float64() < logistic.Expit(0.3+0.8*lp[i]) {
			y[i] = 1
		}
	}
	for k := 0; k < n; k++ {
		w[r.IntN(n)]++
	}
	for _, weights := range [][]float64{nil, w} {
		citl1, slope1, err := CalibrationWeighted(y, lp, weights, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, workers := range []int{0, 2, 8} {
			citl, slope, err := CalibrationWeighted(y, lp, weights, workers)
			if err != nil {
				t.Fatal(err)
			}
			if citl != citl1 || slope != slope1 {
				t.Errorf("weighted %v, %d workers: CITL %v slope %v; one worker: %v and %v",
					weights != nil, workers, citl, slope, citl1, slope1)
			}
		}
		if citl1 < 0.05 || slope1 > 0.95 {
			t.Errorf("weighted %v: CITL %v and slope %v; the data were drawn with intercept shift 0.3 and slope 0.8",
				weights != nil, citl1, slope1)
		}
	}
}
