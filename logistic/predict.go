package logistic

import "math"

// Predict writes the linear predictor x'β plus the offset of every row of
// d into lp, its risk expit(η) into p and, when z is not nil, e^−|η|
// into z (each must hold N values), and
// returns −2 log-likelihood of the model with coefficients beta on d's
// rows (counted by d's weights when set), as Deviance does. One
// exponential per row serves both the deviance and the risk: with
// z = e^−|η|, the risk is 1/(1 + z) for η ≥ 0 and z/(1 + z) otherwise,
// which are Expit's own operations, and the deviance terms are those of
// Deviance, summed in the same order. So lp, p and the deviance are
// exactly those of LinearPredictor, Expit and Deviance.
func (d Data) Predict(beta, lp, p, z []float64) float64 {
	pd := d.P
	acc := newDevSum()
	for i := range lp {
		x := d.X[i*pd : (i+1)*pd]
		eta := 0.0
		if d.Offset != nil {
			eta = d.Offset[i]
		}
		for j, b := range beta {
			eta += x[j] * b
		}
		lp[i] = eta
		e := math.Exp(-math.Abs(eta))
		p[i] = expitFrom(e, eta)
		if z != nil {
			z[i] = e
		}
		wt := 1.0
		if d.Weights != nil {
			if wt = d.Weights[i]; wt == 0 {
				continue
			}
		}
		y := d.Y[i]
		if wt == 1 {
			acc.lin += positive(eta) - y*eta
			acc.prod *= 1 + e
			if acc.n++; acc.n >= 256 {
				acc = acc.flushed()
			}
		} else {
			acc = acc.addWeighted(wt, eta, y, e)
		}
	}
	return 0 + acc.total()
}

// StartRows holds, for a start β, the linear predictor η of every row of
// a design (offset included) and e^−|η|, for Options.StartRows.
type StartRows struct {
	Eta, Z []float64
}

// NewStartRows computes the StartRows of beta on d's rows, with the
// operations of Fit's own pass, so that a fit given them is exactly the
// fit without them.
func NewStartRows(d Data, beta []float64) *StartRows {
	s := &StartRows{Eta: d.LinearPredictor(beta, make([]float64, d.N)), Z: make([]float64, d.N)}
	for i, eta := range s.Eta {
		s.Z[i] = math.Exp(-math.Abs(eta))
	}
	return s
}
