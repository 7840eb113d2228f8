// Package update chooses how much to change a model that does not fit a
// new cohort, in increasing order of change: recalibration in the large,
// logistic recalibration, model revision — by the closed testing
// procedure of Vergouwe et al. (2017, Statistics in Medicine
// 36:4529–4539), keeping the simplest update the data do not reject.
package update

import (
	"fmt"

	"github.com/riskaudit/riskaudit/logistic"
)

// The methods, in increasing order of change.
const (
	Original      = "original model (no update)"
	InTheLarge    = "recalibration in the large"
	Recalibration = "logistic recalibration"
	Revision      = "model revision"
)

// Step is one candidate model.
type Step struct {
	Method string `json:"method"`
	// Params counts the parameters estimated on the new cohort.
	Params int     `json:"parameters"`
	Neg2LL float64 `json:"neg2ll"`
	// AIC is −2 log-likelihood + 2 × Params.
	AIC float64 `json:"aic"`
}

// Test is a likelihood-ratio test of a simpler update against the
// revision.
type Test struct {
	Simpler  string  `json:"simpler"`
	LRChi2   float64 `json:"lr_chi2"`
	DF       int     `json:"df"`
	P        float64 `json:"p"`
	Rejected bool    `json:"rejected"`
}

// Result is the closed testing procedure's outcome.
type Result struct {
	Alpha float64 `json:"alpha"`
	Steps []Step  `json:"steps"`
	Tests []Test  `json:"tests"`
	// Chosen is the method kept.
	Chosen string `json:"chosen"`
	// Coef are the updated model's coefficients, in the original terms'
	// order (intercept first).
	Coef []float64 `json:"coefficients"`
	// Fit holds what the bootstrap of the chosen update needs: its design,
	// offset and fitted parameters.
	Fit Fit `json:"-"`
}

// Fit describes the chosen update as a logistic model on the cohort.
type Fit struct {
	X      []float64
	P      int
	Offset []float64
	Coef   []float64
}

// ClosedTest updates the model with coefficients beta (intercept first)
// on the design matrix X (n rows of p values, intercept column first) with
// outcomes y. With lp = Xβ the original linear predictor:
//
//	recalibration in the large   logit p = a + lp            (1 parameter)
//	logistic recalibration       logit p = a + b·lp          (2)
//	model revision               logit p = lp + X γ          (p; lp as offset)
//
// The revision is first tested against the original model (df p); when
// that is rejected at level alpha, each simpler update is tested against
// the revision in increasing order of change (df p − 1, then p − 2), and
// the first that is not rejected is kept; the revision is kept when all
// are rejected.
func ClosedTest(x []float64, n, p int, y, beta []float64, alpha float64) (*Result, error) {
	if alpha <= 0 || alpha >= 1 {
		alpha = 0.05
	}
	lp := logistic.Data{X: x, N: n, P: p}.LinearPredictor(beta, make([]float64, n))
	ones := make([]float64, n)
	x2 := make([]float64, 2*n)
	for i, v := range lp {
		ones[i] = 1
		x2[2*i], x2[2*i+1] = 1, v
	}
	d0 := logistic.Deviance(logistic.Data{X: ones, N: n, P: 1, Y: y, Offset: lp}, []float64{0})
	f1, err := logistic.Fit(logistic.Data{X: ones, N: n, P: 1, Y: y, Offset: lp}, logistic.Options{})
	if err != nil {
		return nil, fmt.Errorf("recalibration in the large: %w", err)
	}
	f2, err := logistic.Fit(logistic.Data{X: x2, N: n, P: 2, Y: y}, logistic.Options{Start: []float64{0, 1}})
	if err != nil {
		return nil, fmt.Errorf("logistic recalibration: %w", err)
	}
	f3, err := logistic.Fit(logistic.Data{X: x, N: n, P: p, Y: y, Offset: lp}, logistic.Options{})
	if err != nil {
		return nil, fmt.Errorf("model revision: %w", err)
	}
	r := &Result{Alpha: alpha}
	for _, s := range []struct {
		m string
		k int
		d float64
	}{{Original, 0, d0}, {InTheLarge, 1, f1.Deviance}, {Recalibration, 2, f2.Deviance}, {Revision, p, f3.Deviance}} {
		r.Steps = append(r.Steps, Step{Method: s.m, Params: s.k, Neg2LL: s.d, AIC: s.d + 2*float64(s.k)})
	}
	test := func(simpler string, d float64, df int) Test {
		lr := d - f3.Deviance
		pv := chiSquareP(lr, df)
		return Test{Simpler: simpler, LRChi2: lr, DF: df, P: pv, Rejected: pv < alpha}
	}
	chosen := Revision
	for _, t := range []Test{test(Original, d0, p), test(InTheLarge, f1.Deviance, p-1), test(Recalibration, f2.Deviance, p-2)} {
		if t.DF < 1 {
			continue
		}
		r.Tests = append(r.Tests, t)
		if !t.Rejected {
			chosen = t.Simpler
			break
		}
	}
	r.Chosen = chosen
	r.Coef = append([]float64(nil), beta...)
	switch chosen {
	case InTheLarge:
		r.Coef[0] += f1.Coef[0]
		r.Fit = Fit{X: ones, P: 1, Offset: lp, Coef: f1.Coef}
	case Recalibration:
		a, b := f2.Coef[0], f2.Coef[1]
		for j := range r.Coef {
			r.Coef[j] *= b
		}
		r.Coef[0] += a
		r.Fit = Fit{X: x2, P: 2, Coef: f2.Coef}
	case Revision:
		for j := range r.Coef {
			r.Coef[j] += f3.Coef[j]
		}
		r.Fit = Fit{X: x, P: p, Offset: lp, Coef: f3.Coef}
	}
	return r, nil
}

func chiSquareP(x float64, df int) float64 { return chi2Survival(x, df) }
