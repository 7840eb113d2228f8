package metrics

import (
	"math"
	"testing"
)

// TestNetBenefitOfTreatingEveryone: below the lowest risk the model
// treats every row, so its net benefit is exactly that of treating
// everyone (before, 57 events in 200 rows all at risk 0.2 gave the model
// a net benefit above treat-all by rounding at 10% and 20%, and the
// summary called the model useful there). The value is checked against
// the definition, E/n − (n − E)/n · t/(1 − t).
func TestNetBenefitOfTreatingEveryone(t *testing.T) {
	y, p := make([]float64, 200), make([]float64, 200)
	for i := range p {
		p[i] = 0.2
		if i < 57 {
			y[i] = 1
		}
	}
	for _, nb := range NetBenefits(SortByRisk(y, p), []float64{0.05, 0.1, 0.15, 0.2}) {
		want := 57.0/200 - 143.0/200*nb.Threshold/(1-nb.Threshold)
		if nb.Model != nb.TreatAll || math.Abs(nb.Model-want) > 1e-15 {
			t.Errorf("threshold %g: model %.17g, treat all %.17g, definition %.17g", nb.Threshold, nb.Model, nb.TreatAll, want)
		}
	}
}
