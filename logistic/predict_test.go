package logistic

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestPredictMatchesItsParts: Predict's linear predictor, risks and
// deviance are bit for bit those of LinearPredictor, Expit and Deviance,
// with and without weights and offset, at risks far in both tails.
func TestPredictMatchesItsParts(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 2))
	n, p := 1500, 3
	d := Data{X: make([]float64, n*p), N: n, P: p, Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		d.X[i*p], d.X[i*p+1], d.X[i*p+2] = 1, 6*r.NormFloat64(), r.Float64()
		if r.Float64() < 0.3 {
			d.Y[i] = 1
		}
	}
	w := make([]float64, n)
	off := make([]float64, n)
	for i := range w {
		w[i] = float64(r.IntN(4))
		off[i] = r.NormFloat64()
	}
	w[7] = 2.5 // a weight that is not a small count
	beta := []float64{-0.4, 1.3, 0.7}
	for _, c := range []struct {
		name string
		w, o []float64
	}{{"plain", nil, nil}, {"weights", w, nil}, {"offset", nil, off}, {"both", w, off}} {
		d := d
		d.Weights, d.Offset = c.w, c.o
		lp, risk, z := make([]float64, n), make([]float64, n), make([]float64, n)
		dev := d.Predict(beta, lp, risk, z)
		want := d.LinearPredictor(beta, make([]float64, n))
		for i := range lp {
			if lp[i] != want[i] || risk[i] != Expit(want[i]) || z[i] != math.Exp(-math.Abs(want[i])) {
				t.Fatalf("%s: row %d: η %v p %v z %v, want %v and %v", c.name, i, lp[i], risk[i], z[i], want[i], Expit(want[i]))
			}
		}
		if dev2 := d.Predict(beta, lp, risk, nil); dev2 != dev {
			t.Errorf("%s: deviance %v without z, %v with", c.name, dev2, dev)
		}
		if wd := Deviance(d, beta); dev != wd {
			t.Errorf("%s: deviance %v, Deviance %v", c.name, dev, wd)
		}
	}
}
