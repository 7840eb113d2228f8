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
// (for a Firth fit, P is the penalised likelihood-ratio test's and the
// intervals are profile penalised-likelihood intervals).
type TermStat struct {
	Term string  `json:"term"`
	Coef float64 `json:"coef"`
	SE   float64 `json:"se"`
	Z    float64 `json:"z"`
	P    float64 `json:"p"`
	// OddsRatio is exp(Coef); it is +Inf (null in JSON) when Coef
	// exceeds ln(MaxFloat64) ≈ 709.78, and then Notes says so.
	OddsRatio float64 `json:"odds_ratio"`
	// CoefCI is the 95% interval of Coef (the log odds ratio); ORCI is
	// exp of it, whose ends can overflow where CoefCI's do not.
	CoefCI [2]float64 `json:"coef_ci"`
	ORCI   [2]float64 `json:"or_ci"`
	// PLRChi2 is the penalised likelihood-ratio statistic of a Firth fit,
	// whose P it gives.
	PLRChi2 float64 `json:"plr_chi2,omitempty"`
	// Notes say, for each value of this term that is NaN or infinite
	// (null in JSON), which it is and why: a refit that failed, an
	// interval end that could not be found, an odds ratio beyond the
	// floating-point range. Each note starts with the JSON key it
	// explains ("p: ", "or_ci: ", …).
	Notes []string `json:"notes,omitempty"`
	// Unit says what the odds ratio is per where that is not one unit of
	// the column (Design.Units): a scaled, log, spline or
	// fractional-polynomial term.
	Unit string `json:"unit,omitempty"`
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
	// Convergence states the criteria the iterations met.
	Convergence string `json:"convergence"`
	// Notes say which fit-level statistics could not be computed (NaN, or
	// null in JSON) and why, such as a Hosmer–Lemeshow test on too few
	// distinct risks. Each note starts with the JSON key it explains.
	Notes []string `json:"notes,omitempty"`
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
	units := d.Units()
	for j := range f.Stats.Terms {
		f.Stats.Terms[j].Unit = units[f.Stats.Terms[j].Term]
	}
	if opt.Firth && m.N <= ProfileRows {
		penalisedLRTests(m, res, opt, &f.Stats)
	}
	noteOverflow(&f.Stats)
	return f, nil
}

// Convergence is the rule every fit's iterations met (logistic.Options'
// defaults), as FitStats.Convergence states it.
const Convergence = "|ΔD|/(|D| + 0.1) < 1e-11 and max|Δβ| < 1e-7 on the last step, D the deviance (for Firth: the penalised deviance −2ℓ*)"

// noteOverflow notes the odds ratios and interval ends that exp turned
// into +Inf or 0 although they are finite on the log scale (coefficients
// beyond ±709.78).
func noteOverflow(st *FitStats) {
	for j := range st.Terms {
		t := &st.Terms[j]
		if math.IsInf(t.OddsRatio, 1) && !math.IsInf(t.Coef, 0) {
			t.Notes = append(t.Notes, fmt.Sprintf("odds_ratio: exp(%.6g) exceeds the largest float64 (about 1.8e308); the coefficient is the log odds ratio", t.Coef))
		}
		for k, side := range []string{"lower", "upper"} {
			c := t.CoefCI[k]
			if !math.IsNaN(c) && !math.IsInf(c, 0) && (math.IsInf(t.ORCI[k], 1) || t.ORCI[k] == 0) {
				t.Notes = append(t.Notes, fmt.Sprintf("or_ci: the %s end, exp(%.6g), is beyond the float64 range; coef_ci holds it on the log scale", side, c))
			}
		}
	}
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
// is used, when the data nearly separate. The refit starts from the
// estimate and from the intercept-only start, keeping the higher maximum;
// a test whose refit fails both ways is NaN with a note giving the
// error, and so is an interval end that profileBound cannot find.
func penalisedLRTests(m *Matrix, res *logistic.Result, opt FitOptions, st *FitStats) {
	st.PMethod = PPenalisedLR
	data := logistic.Data{X: m.X, N: m.N, P: m.P, Y: m.Y}
	for j := range st.Terms {
		t := &st.Terms[j]
		start := append([]float64(nil), res.Coef...)
		start[j] = 0
		fixed := make([]bool, m.P)
		fixed[j] = true
		// From the estimate and from the intercept-only start (nil), the
		// higher maximum (see profileBound).
		r, err := bestFixedFit(data, fixed, opt.Workers, start, nil)
		if err != nil {
			t.P, t.PLRChi2 = math.NaN(), math.NaN()
			t.Notes = append(t.Notes, fmt.Sprintf("p, plr_chi2: not computed: the refit with %s held at 0 failed (%v)", t.Term, err))
			continue
		}
		chi2 := math.Max(0, 2*(res.PenalizedLogLik-r.PenalizedLogLik))
		t.PLRChi2 = chi2
		t.P = ChiSquareP(chi2, 1)
	}
	st.CIMethod = CIProfilePenalised
	for j := range st.Terms {
		t := &st.Terms[j]
		var why [2]string
		t.CoefCI[0], why[0] = profileBound(data, res, j, -1, opt.Workers)
		t.CoefCI[1], why[1] = profileBound(data, res, j, +1, opt.Workers)
		t.ORCI = [2]float64{math.Exp(t.CoefCI[0]), math.Exp(t.CoefCI[1])}
		for k, side := range []string{"lower", "upper"} {
			switch {
			case why[k] == "":
			case math.IsNaN(t.CoefCI[k]) || math.IsInf(t.CoefCI[k], 0):
				t.Notes = append(t.Notes, fmt.Sprintf("coef_ci, or_ci: the %s end was not found: %s", side, why[k]))
			default:
				t.Notes = append(t.Notes, fmt.Sprintf("coef_ci, or_ci: the %s end %s", side, why[k]))
			}
		}
	}
}

// profileMaxIter bounds the iterations of each refit behind a penalised
// likelihood-ratio test or a profile interval: far from the estimate the
// penalised likelihood need not be concave, and the fallback steps there
// converge linearly (our choice).
const profileMaxIter = 200

// bestFixedFit refits data by Firth's method with the coefficients marked
// in fixed held at their values in each start (the fixed values must
// agree; a nil start is the default one, all zero but the intercept), and
// returns the fit with the highest penalised log-likelihood, or the
// first error when every start fails.
func bestFixedFit(data logistic.Data, fixed []bool, workers int, starts ...[]float64) (*logistic.Result, error) {
	var best *logistic.Result
	var first error
	for _, s := range starts {
		r, err := logistic.Fit(data, logistic.Options{Firth: true, Start: s, Fixed: fixed, MaxIter: profileMaxIter, Workers: workers})
		if err != nil {
			if first == nil {
				first = err
			}
			continue
		}
		if best == nil || r.PenalizedLogLik > best.PenalizedLogLik {
			best = r
		}
	}
	if best == nil {
		return nil, first
	}
	return best, nil
}

// profilePoint is a constrained maximum of the penalised likelihood, with
// coefficient j held at b.
type profilePoint struct {
	b, pl float64
	coef  []float64
}

// profileBound is one end of the 95% profile penalised-likelihood
// interval of coefficient j (Heinze & Schemper 2002): the value b on side
// dir of the estimate where 2·(ℓ*(β̂) − max ℓ* with β_j = b) reaches
// χ²₁(0.95). With β_j held far out the penalised likelihood need not be
// concave and can have several local maxima in the other coefficients
// (on sixty invented rows completely separated by three of six terms,
// two of the fourteen interval ends meet another local maximum above the
// threshold), so the end follows one well-defined branch of constrained
// maxima, the one through the estimate, followed outward in steps of a
// quarter SE that grow by a quarter each time (steps of one SE, doubling,
// jumped between branches on those rows); each refit starts on the
// straight line through the two nearest constrained maxima already found
// (under separation the other coefficients grow in proportion). The
// crossing is bracketed by the last step and the bracket narrowed by the
// Illinois method to 1e-9 of the SE. A
// refit that fails halves the outward step, up to 30 times. When the
// crossing cannot be found the end is ±Inf (no crossing within 2⁴⁰ SEs)
// or NaN (refits failed); the second result gives the reason, or says
// that refits from the estimate's other coefficients, moved or scaled to
// the end, reach a higher local maximum above the threshold there, so
// that the interval may reach further.
func profileBound(data logistic.Data, res *logistic.Result, j int, dir float64, workers int) (float64, string) {
	target := res.PenalizedLogLik - chiSquare95/2
	fixed := make([]bool, data.P)
	fixed[j] = true
	// refit maximises ℓ* with β_j = b from a start on the line through a
	// and c (at c when a is nil), or failing that at c.
	refit := func(b float64, a, c *profilePoint) (*profilePoint, error) {
		line := make([]float64, data.P)
		for k := range line {
			line[k] = c.coef[k]
			if a != nil && a.b != c.b {
				line[k] += (c.coef[k] - a.coef[k]) * (b - c.b) / (c.b - a.b)
			}
		}
		line[j] = b
		at := append([]float64(nil), c.coef...)
		at[j] = b
		starts := [][]float64{line, at}
		if a == nil {
			starts = starts[1:]
		}
		var r *logistic.Result
		var err error
		for _, start := range starts {
			if r, err = logistic.Fit(data, logistic.Options{Firth: true, Start: start, Fixed: fixed, MaxIter: profileMaxIter, Workers: workers}); err == nil {
				break
			}
		}
		if err != nil {
			return nil, err
		}
		return &profilePoint{b: b, pl: r.PenalizedLogLik, coef: r.Coef}, nil
	}
	b0, se := res.Coef[j], res.SE[j]
	if !(se > 0) || math.IsInf(se, 0) {
		return math.NaN(), fmt.Sprintf("the Wald SE that scales the search is %g", se)
	}
	est := &profilePoint{b: b0, pl: res.PenalizedLogLik, coef: res.Coef}
	var prev *profilePoint
	in, out := est, (*profilePoint)(nil)
	step := se / 4
	failures := 0
	var lastErr error
	for out == nil {
		if math.Abs(in.b+dir*step-b0) > math.Ldexp(se, 40) {
			return dir * math.Inf(1), fmt.Sprintf("the penalised log-likelihood does not fall by χ²₁(0.95)/2 within 2⁴⁰ SEs of the estimate (%.6g)", in.b)
		}
		pt, err := refit(in.b+dir*step, prev, in)
		if err != nil {
			if failures++; failures > 30 {
				return math.NaN(), fmt.Sprintf("the refits with the coefficient held beyond %.6g failed (%v)", in.b, lastErr)
			}
			lastErr = err
			step /= 2
			continue
		}
		if pt.pl < target {
			out = pt
			break
		}
		prev, in = in, pt
		step *= 1.25
	}
	// The Illinois variant of regula falsi on g(b) = ℓ*(b) − target,
	// positive inside and negative outside.
	gIn, gOut := in.pl-target, out.pl-target
	side := 0
	for it := 0; it < 200 && math.Abs(out.b-in.b) > 1e-9*se; it++ {
		b := out.b - gOut*(out.b-in.b)/(gOut-gIn)
		if !(math.Min(in.b, out.b) < b && b < math.Max(in.b, out.b)) {
			b = (in.b + out.b) / 2
		}
		pt, err := refit(b, in, out)
		if err != nil {
			return math.NaN(), fmt.Sprintf("the refit with the coefficient held at %.6g failed (%v)", b, err)
		}
		v := pt.pl - target
		if v == 0 {
			return b, otherMaximum(data, res, j, b, target, fixed, workers)
		}
		if v < 0 {
			out, gOut = pt, v
			if side == -1 {
				gIn /= 2
			}
			side = -1
		} else {
			in, gIn = pt, v
			if side == +1 {
				gOut /= 2
			}
			side = +1
		}
	}
	b := (in.b + out.b) / 2
	return b, otherMaximum(data, res, j, b, target, fixed, workers)
}

// otherMaximum refits with β_j held at the interval end b from the
// estimate's other coefficients as they are, scaled by b/β̂_j and at 0, and
// returns a note when either reaches a local maximum above target (by
// more than 1e-6 relative), where the branch through the estimate has
// already fallen to it; otherwise "".
func otherMaximum(data logistic.Data, res *logistic.Result, j int, b, target float64, fixed []bool, workers int) string {
	moved := append([]float64(nil), res.Coef...)
	moved[j] = b
	zero := make([]float64, data.P)
	zero[j] = b
	starts := [][]float64{moved, zero}
	if bj := res.Coef[j]; bj != 0 {
		scaled := append([]float64(nil), res.Coef...)
		for k := range scaled {
			scaled[k] *= b / bj
		}
		scaled[j] = b
		starts = append(starts, scaled)
	}
	r, err := bestFixedFit(data, fixed, workers, starts...)
	if err != nil || r.PenalizedLogLik <= target+1e-6*(1+math.Abs(target)) {
		return ""
	}
	return fmt.Sprintf("is where the branch of constrained maxima through the estimate reaches the threshold; with the coefficient held at %.6g the penalised likelihood has another local maximum above it (%.4g higher), so the profile interval may reach further", b, r.PenalizedLogLik-target)
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
	if errors.Is(err, logistic.ErrNotConverged) && errors.As(err, &ce) {
		// The step's system became singular part way: a coefficient
		// running off without bound, not terms dependent in the data.
		var names []string
		for _, c := range ce.Columns {
			names = append(names, terms[c])
		}
		// Of the kind ErrNotConverged only: the terms are not dependent.
		return &FitError{Msg: fmt.Sprintf("the fit did not converge: the iterations lost the term %s, whose coefficient grows without bound — quasi-complete separation, as when a level has few patients, all with one outcome; merge or drop that level, drop the term, or fit with --firth (Firth's penalised likelihood); no model was written", strings.Join(names, ", ")),
			Err: fmt.Errorf("%w (%v)", logistic.ErrNotConverged, ce)}
	}
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
		Iterations: res.Iterations, RowsRead: m.Total, Excluded: m.Excluded, ByColumn: m.ByColumn, Solver: res.Solver,
		Convergence: Convergence}
	for j, t := range m.Terms {
		b, se := res.Coef[j], res.SE[j]
		z := b / se
		ci := [2]float64{b - Z975*se, b + Z975*se}
		st.Terms = append(st.Terms, TermStat{
			Term: t, Coef: b, SE: se, Z: z, P: TwoSidedP(z),
			OddsRatio: math.Exp(b), CoefCI: ci, ORCI: [2]float64{math.Exp(ci[0]), math.Exp(ci[1])},
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
	if note := hlNote(st.HL); note != "" {
		st.Notes = append(st.Notes, note)
	}
	return st
}

// hlNote says why a Hosmer–Lemeshow test on the fitting data has no
// statistic or no p-value, or is "" when it has both: too few groups of
// distinct risks for a degree of freedom (groups − 2 < 1), or groups
// whose risks are all 0 or all 1 to double precision, where the group's
// variance E(1 − E/n) is 0 and its term 0/0 or x/0.
func hlNote(hl metrics.HosmerLemeshowTest) string {
	degenerate := 0
	for _, g := range hl.Table {
		if g.Expected == 0 || g.Expected == float64(g.N) {
			degenerate++
		}
	}
	switch {
	case degenerate > 0 && (math.IsNaN(hl.Statistic) || math.IsInf(hl.Statistic, 0)):
		return fmt.Sprintf("hosmer_lemeshow: not computed: in %d of the %d risk groups every predicted risk is 0 or 1 to double precision (the fit nearly separates the outcome), so the group's variance is 0", degenerate, hl.Groups)
	case hl.DF < 1:
		return fmt.Sprintf("hosmer_lemeshow: not computed: the predicted risks have too few distinct values for more than %d risk groups, which leave %d degrees of freedom", hl.Groups, hl.DF)
	case math.IsNaN(hl.Statistic) || math.IsNaN(hl.P):
		return "hosmer_lemeshow: not computed: the statistic is not a number"
	}
	return ""
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
