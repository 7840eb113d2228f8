package logistic

import (
	"math"
	"testing"
)

// TestFirthFrequencyWeightsAreRows: a Firth fit with frequency weights is
// the Firth fit of the data with every row repeated its weight's number
// of times (Firth 1993: the penalty is ½ log det I with I = X'WX over the
// rows, so a row of weight m enters I, the score and the hat values m
// times). The expanded data are fitted unweighted, the path that
// model's Firth tests pin to the numpy transcription in fits.json; a
// Firth adjustment that drops the weights fits a different penalty and
// fails.
func TestFirthFrequencyWeightsAreRows(t *testing.T) {
	xs := []float64{-1.5, -0.7, -0.2, 0.1, 0.4, 0.9, 1.3, 2.0}
	ys := []float64{0, 0, 1, 0, 1, 1, 0, 1}
	wts := []float64{3, 1, 2, 0, 4, 1, 2, 3}
	var w Data
	w.N, w.P = len(xs), 2
	for _, x := range xs {
		w.X = append(w.X, 1, x)
	}
	w.Y, w.Weights = ys, wts
	var e Data
	e.P = 2
	for i, x := range xs {
		for k := 0; k < int(wts[i]); k++ {
			e.X = append(e.X, 1, x)
			e.Y = append(e.Y, ys[i])
			e.N++
		}
	}
	fw, err := Fit(w, Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	fe, err := Fit(e, Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	for j := range fe.Coef {
		if math.Abs(fw.Coef[j]-fe.Coef[j]) > 1e-8*math.Max(1, math.Abs(fe.Coef[j])) {
			t.Errorf("coefficient %d: weighted %.12g, repeated rows %.12g", j, fw.Coef[j], fe.Coef[j])
		}
	}
	// And the weighted Firth fit differs from maximum likelihood, so the
	// test would notice the adjustment vanishing.
	ml, err := Fit(w, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(ml.Coef[1]-fw.Coef[1]) < 1e-3 {
		t.Errorf("Firth and ML slopes %g and %g are too close for the test to see the penalty", fw.Coef[1], ml.Coef[1])
	}
}
