package metrics

import (
	"errors"
	"fmt"
	"math"
	"runtime"

	"github.com/riskaudit/riskaudit/logistic"
)

// Estimate is a coefficient with its standard error and 95% Wald
// interval.
type Estimate struct {
	Value float64
	SE    float64
	CI    [2]float64
}

func wald(v, se float64) Estimate {
	return Estimate{Value: v, SE: se, CI: [2]float64{v - z975*se, v + z975*se}}
}

// ClampedLogits returns logit(p) for every risk, with risks below eps or
// above 1 − eps (those of exactly 0 or 1 among them) first clamped to
// [eps, 1 − eps], and the number clamped; the logits are new slices, in
// row order. It panics on a risk outside [0, 1] or NaN: callers check
// their input and report the offending line.
func ClampedLogits(p []float64, eps float64) ([]float64, int) {
	out := make([]float64, len(p))
	clamped := 0
	for i, v := range p {
		if !(v >= 0 && v <= 1) {
			panic(fmt.Sprintf("metrics: ClampedLogits: risk %v outside [0, 1]", v))
		}
		if v < eps {
			v, clamped = eps, clamped+1
		} else if v > 1-eps {
			v, clamped = 1-eps, clamped+1
		}
		out[i] = logistic.Logit(v)
	}
	return out, clamped
}

// CalibrationInTheLarge is the intercept a of the logistic model
// logit P(y = 1) = a + logit(p), with logit(p) as an offset (slope fixed
// at 1), fitted by maximum likelihood to outcomes y; a = 0 when risks are
// right on average, a > 0 when they are too low (Cox 1958, Biometrika
// 45:562–565; Van Calster et al. 2016, Journal of Clinical Epidemiology
// 74:167–176). lp holds logit(p), in the rows' order (any order; see
// ClampedLogits). The standard error is the inverse square root of the
// information at the estimate, and the interval Wald's.
//
// CalibrationInTheLarge panics if y and lp differ in length or an
// outcome is neither 0 nor 1. It returns an error when the model cannot
// be fitted: no rows, or outcomes all the same (the estimate runs to
// ±∞).
func CalibrationInTheLarge(y, lp []float64) (Estimate, error) {
	checkLinear("CalibrationInTheLarge", y, lp)
	n := len(y)
	// Start from the difference of the mean outcome and the mean risk on
	// the logit scale, close to the estimate when risks are not extreme.
	ybar, pbar := sum(y)/float64(n), 0.0
	for _, v := range lp {
		pbar += logistic.Expit(v)
	}
	pbar /= float64(n)
	start := 0.0
	if ybar > 0 && ybar < 1 {
		start = math.Log(ybar/(1-ybar)) - math.Log(pbar/(1-pbar))
	}
	a, info, err := interceptNewton(y, lp, nil, start, 2, nil)
	if err == nil {
		return wald(a, 1/math.Sqrt(info)), nil
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = 1
	}
	res, err := logistic.Fit(logistic.Data{X: x, N: n, P: 1, Y: y, Offset: lp}, logistic.Options{Start: []float64{start}})
	if err != nil {
		return Estimate{}, fmt.Errorf("calibration-in-the-large: %w", err)
	}
	return wald(res.Coef[0], res.SE[0]), nil
}

// CalibrationSlope is the coefficient b of the logistic model
// logit P(y = 1) = a + b·logit(p), with a free intercept, fitted by
// maximum likelihood to outcomes y; b = 1 for ideal spread, b < 1 when
// risks are too extreme (overfitting), b > 1 when too moderate (Cox
// 1958; Van Calster et al. 2016). It returns the slope and the intercept
// of that model, with standard errors from the inverse information and
// Wald intervals. lp holds logit(p), in the rows' order (any order).
//
// CalibrationSlope panics if y and lp differ in length or an outcome is
// neither 0 nor 1. It returns an error when the model cannot be fitted:
// no rows, outcomes all the same, or every lp equal.
func CalibrationSlope(y, lp []float64) (slope, intercept Estimate, err error) {
	checkLinear("CalibrationSlope", y, lp)
	if a, b, cov, ok := slopeNewton(y, lp, nil, 2); ok {
		return wald(b, math.Sqrt(cov[2])), wald(a, math.Sqrt(cov[0])), nil
	}
	n := len(y)
	x := make([]float64, 2*n)
	for i, v := range lp {
		x[2*i], x[2*i+1] = 1, v
	}
	// Start from perfect calibration, intercept 0 and slope 1.
	res, err := logistic.Fit(logistic.Data{X: x, N: n, P: 2, Y: y}, logistic.Options{Start: []float64{0, 1}})
	if err != nil {
		return Estimate{}, Estimate{}, fmt.Errorf("calibration slope: %w", err)
	}
	return wald(res.Coef[1], res.SE[1]), wald(res.Coef[0], res.SE[0]), nil
}

// OE is the ratio of observed to expected events, O/E = Σy / Σp over the
// n rows (in any order), with the 95% interval
// exp(ln(O/E) ± 1.96·√((1 − O/n)/O)): the delta-method standard error of
// ln O for a binomial count, with E treated as fixed (as in Debray et
// al. 2017, BMJ 356:i6460). It also returns O and E. The interval is NaN
// when there are no events (O/E is then 0), and everything but O and E
// is NaN when there are no rows.
//
// OE panics if y and p differ in length or an outcome is neither 0 nor 1.
func OE(y, p []float64) (oe float64, ci [2]float64, observed, expected float64) {
	checkLengths("OE", y, p)
	checkOutcomes("OE", y)
	observed, expected = sum(y), sum(p)
	oe = observed / expected
	n := float64(len(y))
	if observed == 0 {
		return oe, [2]float64{math.NaN(), math.NaN()}, observed, expected
	}
	h := z975 * math.Sqrt((1-observed/n)/observed)
	return oe, [2]float64{oe * math.Exp(-h), oe * math.Exp(h)}, observed, expected
}

// CalibrationWeighted returns calibration-in-the-large and the
// calibration slope (coefficients only, as CalibrationInTheLarge and
// CalibrationSlope define them) of outcomes y and linear predictors
// lp = logit(p), with every row counted w times (w nil counts each
// once), as for a bootstrap sample given by counts; a row of weight 0
// takes no part.
//
// workers bounds the goroutines it runs on: 1 is the calling goroutine
// only (for callers that already run one goroutine per core), 0 means
// GOMAXPROCS, and at most two are used. From 50,000 rows the sums are
// taken over two halves whatever workers is, and the safeguarded fit it
// falls back on when Newton's steps do not settle runs on the calling
// goroutine, so the result does not depend on workers.
//
// CalibrationWeighted panics if y, lp and w (when not nil) differ in
// length or an outcome is neither 0 nor 1. It returns an error when
// either model cannot be fitted, as the unweighted functions do.
func CalibrationWeighted(y, lp, w []float64, workers int) (citl, slope float64, err error) {
	var ws CalibrationWorkspace
	return ws.Weighted(y, lp, w, workers)
}

// CalibrationWorkspace holds the scratch of CalibrationWeighted (one
// value per row), so that repeated calls, such as a bootstrap's, allocate
// it once. The zero value is ready; a workspace serves one goroutine at a
// time.
type CalibrationWorkspace struct{ e []float64 }

// Weighted is CalibrationWeighted in the workspace's scratch, with the
// same results.
func (ws *CalibrationWorkspace) Weighted(y, lp, w []float64, workers int) (citl, slope float64, err error) {
	checkLinear("CalibrationWeighted", y, lp)
	checkWeights("CalibrationWeighted", y, w)
	return ws.weighted(y, lp, nil, nil, w, workers)
}

// weighted is Weighted on checked inputs; p, when not nil, holds
// logistic.Expit of every linear predictor, so that it is not computed
// again.
// z, when not nil, holds e^−|lp| of every row (only its rows of
// negative lp are read, where it is e^lp).
func (ws *CalibrationWorkspace) weighted(y, lp, p, z, w []float64, workers int) (citl, slope float64, err error) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	n := len(y)
	sw, sy, sp := 0.0, 0.0, 0.0
	for i, v := range lp {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		sw += wi
		sy += wi * y[i]
		if p != nil {
			sp += wi * p[i]
		} else {
			sp += wi * logistic.Expit(v)
		}
	}
	start := 0.0
	if ybar, pbar := sy/sw, sp/sw; ybar > 0 && ybar < 1 && pbar > 0 && pbar < 1 {
		start = math.Log(ybar/(1-ybar)) - math.Log(pbar/(1-pbar))
	}
	if cap(ws.e) < n {
		ws.e = make([]float64, n)
	}
	citl, _, err = interceptNewtonFrom(y, lp, z, w, start, workers, ws.e[:n])
	if err != nil {
		return 0, 0, fmt.Errorf("calibration-in-the-large: %w", err)
	}
	if _, b, _, ok := slopeNewtonFrom(y, lp, p, w, workers); ok {
		return citl, b, nil
	}
	// Newton's method without step halving did not settle: take the
	// safeguarded fit.
	x := make([]float64, 2*n)
	for i, v := range lp {
		x[2*i], x[2*i+1] = 1, v
	}
	opt := logistic.Options{Workers: 1, Start: []float64{0, 1}}
	r2, err := logistic.Fit(logistic.Data{X: x, N: n, P: 2, Y: y, Weights: w}, opt)
	if err != nil {
		return 0, 0, fmt.Errorf("calibration slope: %w", err)
	}
	return citl, r2.Coef[1], nil
}

// slopeNewton fits logit P(y) = a + b·lp by plain Newton steps from
// (0, 1), with no log-likelihood evaluations: one exponential per row per
// step, the rows summed as rowSums does with workers. It returns a, b and
// the inverse information (var a, cov, var b) at the last step, whose
// size (below 1e-10) leaves it exact to that order; it reports false when
// the steps do not settle within 50 iterations or the information
// degenerates.
func slopeNewton(y, lp, w []float64, workers int) (a, b float64, cov [3]float64, ok bool) {
	return slopeNewtonFrom(y, lp, nil, w, workers)
}

// slopeNewtonFrom is slopeNewton given, when p is not nil, the risks
// expit(lp) of the rows: the risks of the first step, at (0, 1), where
// expit(a + b·lp) is exactly expit(lp), so that step takes no
// exponential.
func slopeNewtonFrom(y, lp, p, w []float64, workers int) (a, b float64, cov [3]float64, ok bool) {
	a, b = 0.0, 1.0
	for it := 0; it < 50; it++ {
		first := p
		if it > 0 {
			first = nil
		}
		s := rowSums(len(lp), workers, func(lo, hi int) [5]float64 {
			return slopeSums(y, lp, first, w, a, b, lo, hi)
		})
		s0, s1, i00, i01, i11 := s[0], s[1], s[2], s[3], s[4]
		det := i00*i11 - i01*i01
		if !(det > 1e-300) {
			return 0, 0, cov, false
		}
		da := (i11*s0 - i01*s1) / det
		db := (i00*s1 - i01*s0) / det
		if m := math.Max(math.Abs(da), math.Abs(db)); m > 5 {
			da, db = da*5/m, db*5/m
		}
		a, b = a+da, b+db
		if math.Abs(da) < 1e-10 && math.Abs(db) < 1e-10 {
			return a, b, [3]float64{i11 / det, -i01 / det, i00 / det}, true
		}
	}
	return 0, 0, cov, false
}

// slopeSums is one step's sums of slopeNewtonFrom over rows [lo, hi),
// at intercept a and slope b (mu, when not nil, holds the risks there):
// the score Σr, Σr·lp and the information Σq, Σq·lp, Σq·lp², with
// r = w(y − μ) and q = w·μ(1 − μ). The sums are scalar locals, not an
// array, so that they stay in registers; the risks of a block of rows
// are made first (slopeRisks), so that the exponentials' calls do not
// interrupt the sums. The operations and their order are the same
// either way.
func slopeSums(y, lp, mu, w []float64, a, b float64, lo, hi int) [5]float64 {
	var t0, t1, t2, t3, t4 float64
	var buf [slopeBlock]float64
	for from := lo; from < hi; from += slopeBlock {
		to := min(from+slopeBlock, hi)
		ms := buf[:to-from]
		if mu != nil {
			ms = mu[from:to]
		} else {
			slopeRisks(lp[from:to], a, b, ms)
		}
		ys, vs := y[from:to:to], lp[from:to:to]
		for r, m := range ms {
			wi := 1.0
			if w != nil {
				if wi = w[from+r]; wi == 0 {
					continue
				}
			}
			v := vs[r]
			rr := wi * (ys[r] - m)
			q := wi * m * (1 - m)
			t0 += rr
			t1 += rr * v
			t2 += q
			t3 += q * v
			t4 += q * v * v
		}
	}
	return [5]float64{t0, t1, t2, t3, t4}
}

// slopeBlock is the number of rows whose risks slopeSums makes at once.
const slopeBlock = 256

// slopeRisks writes logistic.Expit(a + b·v) of every v of lp into ms,
// written out: Expit's two branches' exponentials are this one, e^−|x|.
func slopeRisks(lp []float64, a, b float64, ms []float64) {
	ms = ms[:len(lp)]
	for r, v := range lp {
		x := a + b*v
		z := math.Exp(-math.Abs(x))
		if x >= 0 {
			ms[r] = 1 / (1 + z)
		} else {
			ms[r] = z / (1 + z)
		}
	}
}

// rowSplit is the number of rows from which rowSums sums two halves.
const rowSplit = 50000

// rowSums adds the sums f gives over [0, n): from rowSplit rows in two
// halves, the second on a goroutine of its own when workers ≥ 2 and on
// the calling goroutine after the first when workers is 1. The halves
// are added in order, so the result depends neither on scheduling nor on
// workers.
func rowSums(n, workers int, f func(lo, hi int) [5]float64) [5]float64 {
	if n < rowSplit {
		return f(0, n)
	}
	if workers == 1 {
		first, second := f(0, n/2), f(n/2, n)
		for k := range first {
			first[k] += second[k]
		}
		return first
	}
	var second [5]float64
	done := make(chan struct{})
	go func() {
		second = f(n/2, n)
		close(done)
	}()
	first := f(0, n/2)
	<-done
	for k := range first {
		first[k] += second[k]
	}
	return first
}

// interceptNewton solves the one score equation Σ w(y − expit(a + lp)) =
// 0 of the intercept-only model with offset lp by Newton's method, and
// returns a with the information Σ w·μ(1 − μ) at it. With E = exp(lp)
// computed once, each step needs no exponential per row:
// expit(a + lp) = E·eᵃ/(1 + E·eᵃ). The log-likelihood is strictly concave
// in a, so the steps are only bounded (to ±5 on the logit scale), not
// halved. workers is as for rowSums; e, when not nil, is scratch of
// len(lp) values for E.
func interceptNewton(y, lp, w []float64, a float64, workers int, e []float64) (float64, float64, error) {
	return interceptNewtonFrom(y, lp, nil, w, a, workers, e)
}

// interceptNewtonFrom is interceptNewton given, when z is not nil,
// e^−|lp| of every row: on a row of lp in [−700, 0) that is E = e^lp
// itself, so E is computed only for the other rows.
func interceptNewtonFrom(y, lp, z, w []float64, a float64, workers int, e []float64) (float64, float64, error) {
	if e == nil {
		e = make([]float64, len(lp))
	}
	for i, v := range lp {
		if z != nil && v < 0 && v >= -700 {
			e[i] = z[i]
			continue
		}
		e[i] = math.Exp(math.Max(-700, math.Min(700, v)))
	}
	sums := func(a float64) (score, info float64) {
		ea := math.Exp(a)
		s := rowSums(len(e), workers, func(lo, hi int) [5]float64 {
			return interceptSums(y, e, w, ea, lo, hi)
		})
		return s[0], s[1]
	}
	for it := 0; it < 100; it++ {
		score, info := sums(a)
		if info <= 0 {
			return 0, 0, errors.New("no information about the intercept")
		}
		step := math.Max(-5, math.Min(5, score/info))
		a += step
		if math.Abs(step) < 1e-10 {
			_, info = sums(a)
			return a, info, nil
		}
	}
	return 0, 0, logistic.ErrNotConverged
}

// interceptSums is one step's sums of interceptNewtonFrom over rows
// [lo, hi) at eᵃ = ea: the score Σw(y − μ) and the information
// Σw·μ(1 − μ) (the other three of the five are 0), with μ = E·eᵃ/(1 + E·eᵃ)
// from e holding E = e^lp. The sums are scalar locals, as in slopeSums.
func interceptSums(y, e, w []float64, ea float64, lo, hi int) [5]float64 {
	var t0, t1 float64
	for i := lo; i < hi; i++ {
		wi := 1.0
		if w != nil {
			if wi = w[i]; wi == 0 {
				continue
			}
		}
		q := e[i] * ea
		mu := q / (1 + q)
		if math.IsInf(q, 1) {
			mu = 1
		}
		t0 += wi * (y[i] - mu)
		t1 += wi * mu * (1 - mu)
	}
	return [5]float64{t0, t1}
}
