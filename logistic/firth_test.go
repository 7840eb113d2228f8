package logistic

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// separated draws n rows of an intercept, k standard-normal predictors
// and, when levels > 1, the indicators of a categorical predictor with
// that many levels (the first the reference), with the outcome 1 exactly
// when the first predictor, plus ties broken by the second, is positive:
// complete separation by a numeric predictor. With quasi, a tenth of the
// rows have the first predictor set to 0 and a random outcome, so the
// separation is quasi-complete.
func separated(n, k, levels int, quasi bool, seed uint64) Data {
	r := rand.New(rand.NewPCG(seed, 11))
	p := 1 + k + max(levels-1, 0)
	d := Data{N: n, P: p, X: make([]float64, n*p), Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := d.X[i*p : (i+1)*p]
		x[0] = 1
		for j := 1; j <= k; j++ {
			x[j] = r.NormFloat64()
		}
		if levels > 1 {
			if l := r.IntN(levels); l > 0 {
				x[k+l] = 1
			}
		}
		s := x[1]
		if k > 1 {
			s += 0.5 * x[2]
		}
		if s > 0 {
			d.Y[i] = 1
		}
		if quasi && i%10 == 0 {
			x[1] = 0
			if k > 1 {
				x[2] = 0
			}
			d.Y[i] = float64(r.IntN(2))
		}
	}
	return d
}

// categoricalSeparated is complete separation by a categorical predictor:
// an intercept, a noise predictor and the indicator of level B, every B
// row an event and every A row a non-event.
func categoricalSeparated(n int, seed uint64) Data {
	r := rand.New(rand.NewPCG(seed, 12))
	d := Data{N: n, P: 3}
	for i := 0; i < n; i++ {
		b := float64(r.IntN(2))
		d.X = append(d.X, 1, r.NormFloat64(), b)
		d.Y = append(d.Y, b)
	}
	return d
}

// penalised is Firth's penalised log-likelihood ℓ(β) + ½ log det X'WX,
// computed here directly from its definition (Firth 1993), independently
// of the package's evaluator.
func penalised(d Data, beta []float64) float64 {
	p := d.P
	info := mat.NewSymDense(p, nil)
	ll := 0.0
	for i := 0; i < d.N; i++ {
		x := d.X[i*p : (i+1)*p]
		eta := 0.0
		for j := range x {
			eta += x[j] * beta[j]
		}
		ll += d.Y[i]*eta - softplus(eta)
		mu := Expit(eta)
		w := mu * (1 - mu)
		for a := 0; a < p; a++ {
			for b := a; b < p; b++ {
				info.SetSym(a, b, info.At(a, b)+w*x[a]*x[b])
			}
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(info) {
		return math.Inf(-1)
	}
	return ll + ch.LogDet()/2
}

// TestFirthConvergesUnderSeparation: Firth's penalised likelihood has a
// finite maximum when the outcome is separated (Heinze & Schemper 2002,
// Statistics in Medicine 21:2409–2419), so the fit must converge on
// completely and quasi-completely separated data with one, two and six
// terms, numeric and categorical, of several sizes (the modified-score
// iteration alone took 60 to 80 steps on some of these and did not
// converge in 50). At the estimate the modified score X'(y − μ + h(½ −
// μ)) is 0 and no move along a coordinate raises ℓ*, computed by its
// definition.
func TestFirthConvergesUnderSeparation(t *testing.T) {
	for _, tc := range []struct {
		name string
		d    Data
	}{
		{"one term, complete, 40 rows", separated(40, 1, 0, false, 1)},
		{"one term, quasi-complete, 40 rows", separated(40, 1, 0, true, 2)},
		{"two terms categorical, complete, 30 rows", categoricalSeparated(30, 3)},
		{"six terms, complete, 60 rows", separated(60, 4, 3, false, 4)},
		{"six terms, quasi-complete, 60 rows", separated(60, 4, 3, true, 5)},
		{"six terms, complete, 2000 rows", separated(2000, 4, 3, false, 6)},
		{"six terms, complete, 20000 rows", separated(20000, 4, 3, false, 7)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := tc.d
			if _, err := Fit(d, Options{}); err == nil {
				t.Fatal("maximum likelihood should fail on separated data")
			}
			res, err := Fit(d, Options{Firth: true})
			if err != nil {
				t.Fatalf("Firth: %v", err)
			}
			ev := newEvaluator(d, 1)
			st, err := ev.eval(res.Coef, true, true)
			if err != nil {
				t.Fatal(err)
			}
			for j, s := range st.score {
				if math.Abs(s) > 1e-6 {
					t.Errorf("modified score %d = %g at %v", j, s, res.Coef)
				}
			}
			best := penalised(d, res.Coef)
			if math.Abs(best-res.PenalizedLogLik) > 1e-8*(1+math.Abs(best)) {
				t.Errorf("penalised log-likelihood %.12g, by its definition %.12g", res.PenalizedLogLik, best)
			}
			for j := range res.Coef {
				for _, h := range []float64{-1e-3, 1e-3} {
					b := append([]float64(nil), res.Coef...)
					b[j] += h * math.Max(1, math.Abs(b[j]))
					if v := penalised(d, b); v > best+1e-9*(1+math.Abs(best)) {
						t.Errorf("moving coefficient %d by %g raises ℓ* from %.12g to %.12g", j, h, best, v)
					}
				}
			}
			if res.Iterations > 30 {
				t.Errorf("%d iterations", res.Iterations)
			}
		})
	}
}

// TestFirthHessianMatchesDifferences: the exact Hessian of the penalised
// log-likelihood equals central differences of the modified score, which
// is its gradient, on data with and without separation and with weights.
func TestFirthHessianMatchesDifferences(t *testing.T) {
	w := simulate(300, []float64{-0.5, 1, -0.5, 0.25}, 8)
	r := rand.New(rand.NewPCG(9, 9))
	w.Weights = make([]float64, w.N)
	for i := range w.Weights {
		w.Weights[i] = float64(r.IntN(3))
	}
	for _, tc := range []struct {
		name string
		d    Data
		beta []float64
	}{
		{"no separation", simulate(500, []float64{-1, 0.5, -0.25, 1}, 3), []float64{-0.8, 0.4, -0.3, 0.9}},
		{"separated", separated(80, 2, 3, false, 10), []float64{0.2, 3, 1.5, -0.3, 0.4}},
		{"weights", w, []float64{-0.4, 0.9, -0.6, 0.3}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ev := newEvaluator(tc.d, 1)
			st, err := ev.eval(tc.beta, true, true)
			if err != nil {
				t.Fatal(err)
			}
			j, err := ev.firthHessian(st)
			if err != nil {
				t.Fatal(err)
			}
			p := tc.d.P
			for s := 0; s < p; s++ {
				const h = 1e-5
				b := append([]float64(nil), tc.beta...)
				b[s] += h
				up, err := ev.eval(b, true, true)
				if err != nil {
					t.Fatal(err)
				}
				b[s] -= 2 * h
				down, err := ev.eval(b, true, true)
				if err != nil {
					t.Fatal(err)
				}
				for r := 0; r < p; r++ {
					// J = −∂U*/∂β.
					fd := -(up.score[r] - down.score[r]) / (2 * h)
					if math.Abs(fd-j[r*p+s]) > 1e-5*(1+math.Abs(fd)) {
						t.Errorf("J[%d][%d] = %.10g, by differences %.10g", r, s, j[r*p+s], fd)
					}
				}
			}
		})
	}
}

// TestFirthFixedUnderSeparation: with the separating coefficient held
// far from its estimate (as a profile interval does), the refit still
// converges, and its maximum is below the free one.
func TestFirthFixedUnderSeparation(t *testing.T) {
	d := separated(2000, 4, 3, false, 6)
	free, err := Fit(d, Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []float64{-2, 2, 8} {
		t.Run(fmt.Sprintf("%+g SE", k), func(t *testing.T) {
			start := append([]float64(nil), free.Coef...)
			start[1] += k * free.SE[1]
			fixed := make([]bool, d.P)
			fixed[1] = true
			held, err := Fit(d, Options{Firth: true, Start: start, Fixed: fixed})
			if err != nil {
				t.Fatal(err)
			}
			if held.Coef[1] != start[1] || !(held.PenalizedLogLik < free.PenalizedLogLik) {
				t.Errorf("held at %g: coefficient %g, ℓ* %g against %g free", start[1], held.Coef[1], held.PenalizedLogLik, free.PenalizedLogLik)
			}
		})
	}
}
