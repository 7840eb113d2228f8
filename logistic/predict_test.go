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

// TestStartRowsAndCoefOnlySameFit: a fit given the rows at its start
// (NewStartRows) and asked for the coefficients only has exactly the
// coefficients, deviance and iterations of the plain fit, with and
// without weights, offset and Firth; with a loose TolCoef the lean passes
// are followed by further iterations, which must retake them with the
// information.
func TestStartRowsAndCoefOnlySameFit(t *testing.T) {
	r := rand.New(rand.NewPCG(6, 1))
	n, p := 3000, 4
	d := Data{X: make([]float64, n*p), N: n, P: p, Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := d.X[i*p : (i+1)*p]
		x[0], x[1], x[2], x[3] = 1, r.NormFloat64(), r.NormFloat64(), float64(r.IntN(2))
		if r.Float64() < Expit(-1+0.7*x[1]-0.4*x[2]+0.5*x[3]) {
			d.Y[i] = 1
		}
	}
	w, off := make([]float64, n), make([]float64, n)
	for i := range w {
		w[i] = float64(r.IntN(3))
		off[i] = 0.2 * r.NormFloat64()
	}
	start := []float64{-0.8, 0.5, -0.2, 0.3}
	for _, c := range []struct {
		name  string
		w, o  []float64
		firth bool
		tol   float64
	}{{"plain", nil, nil, false, 0}, {"weights", w, nil, false, 0}, {"offset and weights", w, off, false, 0},
		{"firth", w, nil, true, 0}, {"loose TolCoef", w, off, false, 0.3}} {
		d := d
		d.Weights, d.Offset = c.w, c.o
		opt := Options{Start: start, Firth: c.firth, TolCoef: c.tol, Workers: 1}
		if c.tol > 0 {
			opt.TolDeviance = 1e-30 // met only by a step of no change
		}
		want, err := Fit(d, opt)
		if err != nil {
			t.Fatal(c.name, err)
		}
		opt.StartRows = NewStartRows(Data{X: d.X, N: n, P: p, Offset: d.Offset}, start)
		opt.CoefOnly = true
		got, err := Fit(d, opt)
		if err != nil {
			t.Fatal(c.name, err)
		}
		if got.Deviance != want.Deviance || got.Iterations != want.Iterations || got.Cov != nil || got.SE != nil {
			t.Errorf("%s: deviance %v in %d iterations (cov %v), want %v in %d", c.name, got.Deviance, got.Iterations, got.Cov != nil, want.Deviance, want.Iterations)
		}
		for j := range want.Coef {
			if got.Coef[j] != want.Coef[j] {
				t.Errorf("%s: β%d = %v, want %v", c.name, j, got.Coef[j], want.Coef[j])
			}
		}
		if want.Iterations < 3 {
			t.Errorf("%s: %d iterations: the start should be some steps away", c.name, want.Iterations)
		}
	}
	if _, err := Fit(d, Options{Start: start, StartRows: &StartRows{Eta: make([]float64, 3), Z: make([]float64, 3)}}); err == nil {
		t.Error("StartRows of 3 rows for 3000: no error")
	}
}
