package model

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// Z975 is the 0.975 quantile of the standard normal distribution, the
// multiplier of 95% Wald intervals.
var Z975 = distuv.UnitNormal.Quantile(0.975)

// TermStat is the fitted coefficient of one term with its Wald statistics
// (for a Firth fit, P is the penalised likelihood-ratio test's).
type TermStat struct {
	Term      string     `json:"term"`
	Coef      float64    `json:"coef"`
	SE        float64    `json:"se"`
	Z         float64    `json:"z"`
	P         float64    `json:"p"`
	OddsRatio float64    `json:"odds_ratio"`
	ORCI      [2]float64 `json:"or_ci"`
	// PLRChi2 is the penalised likelihood-ratio statistic of a Firth fit,
	// whose P it gives.
	PLRChi2 float64 `json:"plr_chi2,omitempty"`
}

// FitStats are the statistics of a fitted model. The JSON keys are a
// stable interface.
type FitStats struct {
	Method       string                     `json:"method"`
	N            int                        `json:"n"`
	Events       int                        `json:"events"`
	Terms        []TermStat                 `json:"terms"`
	Neg2LL       float64                    `json:"neg2ll"`
	NullNeg2LL   float64                    `json:"null_neg2ll"`
	LRChi2       float64                    `json:"lr_chi2"`
	LRDF         int                        `json:"lr_df"`
	LRP          float64                    `json:"lr_p"`
	AIC          float64                    `json:"aic"`
	BIC          float64                    `json:"bic"`
	NagelkerkeR2 float64                    `json:"nagelkerke_r2"`
	HL           metrics.HosmerLemeshowTest `json:"hosmer_lemeshow"`
	Iterations   int                        `json:"iterations"`
	RowsRead     int                        `json:"rows_read"`
	Excluded     int                        `json:"rows_excluded"`
	ByColumn     []Exclusion                `json:"excluded_by_column"`
	Solver       string                     `json:"solver"`
	// PMethod names how the terms' p-values were computed: PWald, or
	// PPenalisedLR for a Firth fit.
	PMethod string `json:"p_method"`
	// CIMethod names how the odds ratios' intervals were computed: CIWald,
	// or CIProfilePenalised for a Firth fit.
	CIMethod string `json:"ci_method"`
}

// FitSchema names the layout of a FitReport.
const FitSchema = "riskaudit.fit/1"

// FitReport is a fit's statistics with what was fitted to what: the JSON
// that 'riskaudit fit --json' writes, and the development fit an audit
// keeps when it fitted a recipe. The JSON keys are a stable interface.
type FitReport struct {
	Schema     string `json:"schema"`
	Model      string `json:"model"`
	DataFile   string `json:"data_file"`
	DataSHA256 string `json:"data_sha256"`
	FitStats
	// Nested is the comparison with a nested recipe, when one was given.
	Nested *NestedTest `json:"nested,omitempty"`
}

// FitOptions control a fit.
type FitOptions struct {
	// Firth uses Firth's penalised likelihood instead of maximum
	// likelihood.
	Firth bool
	// HLGroups is the number of Hosmer–Lemeshow groups (default 10).
	HLGroups int
	// Workers bounds the goroutines (default GOMAXPROCS).
	Workers int
}

// Fitted is a recipe fitted to a matrix.
type Fitted struct {
	Design *Design
	Matrix *Matrix
	Result *logistic.Result
	Stats  FitStats
}

// The kinds of fit errors, the same values as package logistic's, so
// that callers of model can use errors.Is without importing logistic.
var (
	// ErrSeparation is the kind of a *SeparationError.
	ErrSeparation = logistic.ErrSeparation
	// ErrCollinear is the kind of a *FitError for linearly dependent
	// terms.
	ErrCollinear = logistic.ErrCollinear
	// ErrNotConverged is the kind of a *FitError for iterations that did
	// not converge.
	ErrNotConverged = logistic.ErrNotConverged
)

// SeparationError says that the outcome is separated by the named terms,
// so that maximum-likelihood estimates do not exist.
type SeparationError struct {
	Complete bool
	Terms    []string
	// Err is the *logistic.SeparationError found by the fit (with the
	// diverging columns and the rows predicted perfectly), or nil.
	Err error
}

// Error names the terms that separate the outcome.
func (e *SeparationError) Error() string {
	kind := "quasi-complete"
	if e.Complete {
		kind = "complete"
	}
	return fmt.Sprintf("%s separation: the outcome is predicted perfectly by %s, so maximum-likelihood estimates do not exist; no model was written (Firth's penalised likelihood, --firth, gives finite estimates)",
		kind, strings.Join(e.Terms, ", "))
}

// Unwrap returns the underlying error, Err.
func (e *SeparationError) Unwrap() error { return e.Err }

// Is reports whether target is ErrSeparation, the kind of every
// SeparationError.
func (e *SeparationError) Is(target error) bool { return target == ErrSeparation }

// Fit fits the design matrix m of design d.
func Fit(d *Design, m *Matrix, opt FitOptions) (*Fitted, error) {
	if m.Y == nil {
		return nil, errors.New("model: the matrix has no outcome")
	}
	res, err := logistic.Fit(logistic.Data{X: m.X, N: m.N, P: m.P, Y: m.Y},
		logistic.Options{Firth: opt.Firth, Workers: opt.Workers})
	if err != nil {
		return nil, explainFitError(err, m.Terms)
	}
	f := &Fitted{Design: d, Matrix: m, Result: res}
	f.Stats = stats(m, res, opt)
	if opt.Firth && m.N <= ProfileRows {
		penalisedLRTests(m, res, opt, &f.Stats)
	}
	return f, nil
}

// ProfileRows is the most rows for which a Firth fit gets penalised
// likelihood-ratio tests and profile intervals: each needs a few dozen
// refits, and on larger data, where they agree closely with the Wald
// ones, that would take minutes (our choice).
const ProfileRows = 200_000

// PWald and PPenalisedLR name how the p-values of FitStats.Terms were
// computed.
const (
	PWald        = "Wald"
	PPenalisedLR = "penalised likelihood ratio (Heinze & Schemper 2002)"
)

// CIWald and CIProfilePenalised name how the intervals of FitStats.Terms
// were computed.
const (
	CIWald             = "Wald"
	CIProfilePenalised = "profile penalised likelihood (Heinze & Schemper 2002)"
)

// penalisedLRTests replaces the Wald p-values of a Firth fit by
// penalised likelihood-ratio tests (Heinze & Schemper 2002, Statistics in
// Medicine 21:2409–2419): for each coefficient, the model is refitted by
// Firth's method with that coefficient held at 0 (the penalty still using
// the information of every column) and 2·(ℓ*(β̂) − ℓ*(β̂₀)) is referred to
// χ² on 1 df. Wald p-values are unreliable exactly where Firth's method
// is used, when the data nearly separate. A refit that fails leaves NaN.
func penalisedLRTests(m *Matrix, res *logistic.Result, opt FitOptions, st *FitStats) {
	st.PMethod = PPenalisedLR
	data := logistic.Data{X: m.X, N: m.N, P: m.P, Y: m.Y}
	for j := range st.Terms {
		start := append([]float64(nil), res.Coef...)
		start[j] = 0
		fixed := make([]bool, m.P)
		fixed[j] = true
		r, err := logistic.Fit(data, logistic.Options{Firth: true, Start: start, Fixed: fixed, Workers: opt.Workers})
		if err != nil {
			st.Terms[j].P, st.Terms[j].PLRChi2 = math.NaN(), math.NaN()
			continue
		}
		chi2 := math.Max(0, 2*(res.PenalizedLogLik-r.PenalizedLogLik))
		st.Terms[j].PLRChi2 = chi2
		st.Terms[j].P = ChiSquareP(chi2, 1)
	}
	st.CIMethod = CIProfilePenalised
	for j := range st.Terms {
		lo := profileBound(data, res, j, -1, opt.Workers)
		hi := profileBound(data, res, j, +1, opt.Workers)
		st.Terms[j].ORCI = [2]float64{math.Exp(lo), math.Exp(hi)}
	}
}

// profileBound is one end of the 95% profile penalised-likelihood
// interval of coefficient j (Heinze & Schemper 2002): the value b on side
// dir of the estimate where 2·(ℓ*(β̂) − max ℓ* with β_j = b) reaches
// χ²₁(0.95). It brackets the crossing by steps of one SE, doubling, then
// narrows the bracket by the Illinois method to 1e-9 of the SE. A side that never crosses within 2⁴⁰ SEs (or
// a refit that fails) gives ±Inf or NaN.
func profileBound(data logistic.Data, res *logistic.Result, j int, dir float64, workers int) float64 {
	target := res.PenalizedLogLik - chiSquare95/2
	fixed := make([]bool, data.P)
	fixed[j] = true
	start := append([]float64(nil), res.Coef...)
	pl := func(b float64) (float64, bool) {
		start[j] = b
		r, err := logistic.Fit(data, logistic.Options{Firth: true, Start: start, Fixed: fixed, Workers: workers})
		if err != nil {
			return 0, false
		}
		copy(start, r.Coef) // a warm start for the next value
		return r.PenalizedLogLik, true
	}
	b0, se := res.Coef[j], res.SE[j]
	if !(se > 0) {
		return math.NaN()
	}
	inside, outside := b0, b0
	for k := 0; ; k++ {
		if k == 40 {
			return dir * math.Inf(1)
		}
		outside = b0 + dir*se*math.Ldexp(1, k)
		v, ok := pl(outside)
		if !ok {
			return math.NaN()
		}
		if v < target {
			break
		}
		inside = outside
	}
	// The Illinois variant of regula falsi on g(b) = ℓ*(b) − target,
	// positive inside and negative outside.
	gIn, ok := pl(inside)
	if !ok {
		return math.NaN()
	}
	gIn -= target
	gOut, _ := pl(outside)
	gOut -= target
	side := 0
	for it := 0; it < 200 && math.Abs(outside-inside) > 1e-9*se; it++ {
		b := outside - gOut*(outside-inside)/(gOut-gIn)
		if !(math.Min(inside, outside) < b && b < math.Max(inside, outside)) {
			b = (inside + outside) / 2
		}
		v, ok := pl(b)
		if !ok {
			return math.NaN()
		}
		v -= target
		if v == 0 {
			return b
		}
		if v < 0 {
			outside, gOut = b, v
			if side == -1 {
				gIn /= 2
			}
			side = -1
		} else {
			inside, gIn = b, v
			if side == +1 {
				gOut /= 2
			}
			side = +1
		}
	}
	return (inside + outside) / 2
}

// chiSquare95 is the 0.95 quantile of χ² on 1 df, 1.959963984540054².
const chiSquare95 = 3.841458820694124

// FitError says that the model could not be fitted (collinear terms, no
// convergence); separation has its own SeparationError. Err is the error
// of the fit, whose kind (ErrCollinear, ErrNotConverged) errors.Is finds
// through Unwrap.
type FitError struct {
	Msg string
	Err error
}

// Error is the message.
func (e *FitError) Error() string { return e.Msg }

// Unwrap returns the underlying error.
func (e *FitError) Unwrap() error { return e.Err }

func explainFitError(err error, terms []string) error {
	var se *logistic.SeparationError
	if errors.As(err, &se) {
		var names []string
		for _, c := range se.Columns {
			if c > 0 || len(se.Columns) == 1 {
				names = append(names, terms[c])
			}
		}
		return &SeparationError{Complete: se.Complete, Terms: names, Err: err}
	}
	var ce *logistic.CollinearError
	if errors.As(err, &ce) {
		var names []string
		for _, c := range ce.Columns {
			names = append(names, terms[c])
		}
		return &FitError{Msg: fmt.Sprintf("the terms %s are linearly dependent (one is a combination of the others); drop one; no model was written", strings.Join(names, ", ")), Err: err}
	}
	if errors.Is(err, logistic.ErrNotConverged) {
		return &FitError{Msg: fmt.Sprintf("the fit did not converge (%v); no model was written", err), Err: err}
	}
	return err
}

func stats(m *Matrix, res *logistic.Result, opt FitOptions) FitStats {
	method := "maximum likelihood"
	if opt.Firth {
		method = "Firth penalised likelihood"
	}
	st := FitStats{Method: method, PMethod: PWald, CIMethod: CIWald, N: m.N, Events: m.Events(), Neg2LL: res.Deviance,
		Iterations: res.Iterations, RowsRead: m.Total, Excluded: m.Excluded, ByColumn: m.ByColumn, Solver: res.Solver}
	for j, t := range m.Terms {
		b, se := res.Coef[j], res.SE[j]
		z := b / se
		st.Terms = append(st.Terms, TermStat{
			Term: t, Coef: b, SE: se, Z: z, P: TwoSidedP(z),
			OddsRatio: math.Exp(b), ORCI: [2]float64{math.Exp(b - Z975*se), math.Exp(b + Z975*se)},
		})
	}
	st.NullNeg2LL = NullDeviance(m.Y, nil)
	// Rounding can leave a likelihood ratio of exactly nothing a hair
	// below zero (an intercept-only model, say).
	st.LRChi2 = math.Max(0, st.NullNeg2LL-st.Neg2LL)
	st.LRDF = m.P - 1
	st.LRP = ChiSquareP(st.LRChi2, st.LRDF)
	k := float64(m.P)
	st.AIC = st.Neg2LL + 2*k
	st.BIC = st.Neg2LL + k*math.Log(float64(m.N))
	st.NagelkerkeR2 = math.Max(0, Nagelkerke(st.Neg2LL, st.NullNeg2LL, m.N))
	groups := opt.HLGroups
	if groups <= 0 {
		groups = 10
	}
	p := Predict(m, res.Coef, nil)
	st.HL = metrics.HosmerLemeshow(metrics.SortByRisk(m.Y, p), groups, true)
	return st
}

// Predict returns the predicted risks expit(Xβ) of the matrix rows, into
// out when it has room.
func Predict(m *Matrix, beta []float64, out []float64) []float64 {
	if cap(out) < m.N {
		out = make([]float64, m.N)
	}
	out = out[:m.N]
	for i := range out {
		x := m.X[i*m.P : (i+1)*m.P]
		eta := 0.0
		for j, b := range beta {
			eta += x[j] * b
		}
		out[i] = logistic.Expit(eta)
	}
	return out
}

// TwoSidedP is the two-sided normal tail probability of z, 2Φ(−|z|),
// computed as erfc(|z|/√2) so that small values keep their precision.
func TwoSidedP(z float64) float64 { return math.Erfc(math.Abs(z) / math.Sqrt2) }

// ChiSquareP is the upper tail probability of x under a chi-square
// distribution with df degrees of freedom (NaN for df < 1).
func ChiSquareP(x float64, df int) float64 {
	if df < 1 {
		return math.NaN()
	}
	if x <= 0 {
		return 1
	}
	return distuv.ChiSquared{K: float64(df)}.Survival(x)
}

// NullDeviance is metrics.NullDeviance.
func NullDeviance(y, w []float64) float64 { return metrics.NullDeviance(y, w) }

// Nagelkerke is metrics.Nagelkerke.
func Nagelkerke(dev, nullDev float64, n int) float64 { return metrics.Nagelkerke(dev, nullDev, n) }
