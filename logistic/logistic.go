// Package logistic fits logistic regression models by maximum likelihood,
// or by Firth's penalised likelihood, with Newton–Raphson iterations
// (iteratively reweighted least squares).
//
// The model is logit P(y=1 | x) = offset + x'β. Rows may carry frequency
// weights, so that a bootstrap sample can be fitted as counts over the
// original rows without copying the data.
//
// A fit that cannot be made fails with one of three kinds, each a
// sentinel error for errors.Is: ErrSeparation (a *SeparationError, which
// names the diverging columns), ErrCollinear (a *CollinearError, which
// names the dependent columns) and ErrNotConverged (wrapped with the
// number of iterations). Other errors report inconsistent input.
//
// References: McCullagh & Nelder (1989), Generalized Linear Models, 2nd
// ed., ch. 4 (IRLS); Firth (1993), "Bias reduction of maximum likelihood
// estimates", Biometrika 80:27–38.
package logistic

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Data is the input of a fit. X holds N rows of P values, row after row;
// the caller includes a column of ones when an intercept is wanted.
type Data struct {
	X    []float64
	N, P int
	// Y holds the outcomes, 0 or 1.
	Y []float64
	// Weights are frequency weights (nil means 1 for every row). A zero
	// weight leaves the row out.
	Weights []float64
	// Offset is added to the linear predictor (nil means 0).
	Offset []float64
	// Rows, when not nil, lists in ascending order every row of nonzero
	// weight (Weights must be set), so that the passes of a fit visit
	// only those instead of testing each row's weight: for weights with
	// many zeros in no pattern, such as a bootstrap's counts. The fit is
	// the same with or without it.
	Rows []int32
}

// Options control the iterations. The zero value is usable.
type Options struct {
	// MaxIter bounds the Newton iterations (default 50).
	MaxIter int
	// TolDeviance is the convergence bound on |ΔD| / (|D| + 0.1), where D
	// is the deviance, or for a Firth fit the penalised deviance
	// −2ℓ* = D − log det X'WX (default 1e-11).
	TolDeviance float64
	// TolCoef is the convergence bound on max_j |Δβ_j| / max(1, |β_j|)
	// of the last step (default 1e-7): an absolute change for
	// coefficients up to 1 in size, a relative one beyond (under
	// separation a Firth estimate can reach the thousands, where the
	// penalised likelihood is flat along the separating direction and
	// its rounding, not the iterations, limits the absolute precision).
	// Both bounds must be met. Newton's method converges quadratically,
	// so the estimate after a step of size s is within about s² of the
	// maximum.
	TolCoef float64
	// Firth selects Firth's penalised likelihood ℓ*(β) = ℓ(β) +
	// ½ log det X'WX. Its maximum is finite even when the outcome is
	// separated (Heinze & Schemper 2002), and it is found by Newton steps
	// on ℓ* with its exact Hessian where the negated Hessian is positive
	// definite, otherwise by Firth's modified-score step I⁻¹U* (Firth
	// 1993; Heinze & Schemper 2002), each halved until ℓ* does not fall.
	Firth bool
	// Start is the starting β (default 0 for every coefficient).
	Start []float64
	// Fixed, when not nil, marks coefficients held at their Start value
	// (0 without Start): Newton steps move only the others, while a Firth
	// penalty still uses the information of every column, as a
	// penalised likelihood-ratio test requires (Heinze & Schemper 2002).
	Fixed []bool
	// Workers bounds the goroutines used (default GOMAXPROCS).
	Workers int
	// StartRows, when not nil, holds the linear predictor at Start of
	// every row of the data (offset included) and e^−|η|, as
	// NewStartRows computes them: the first pass reads them instead of
	// computing them, for many fits of the same rows from the same Start
	// with different weights (a bootstrap's refits). Rows that do not
	// belong to Start give a wrong fit: the caller keeps them together.
	// It is not used without Start.
	StartRows *StartRows
	// CoefOnly leaves out the covariance (Result.Cov and Result.SE are
	// nil) for a caller that needs only the coefficients and the
	// deviance. A maximum-likelihood fit then takes the pass after a
	// step within TolCoef, which is usually the last, without the
	// information matrix, and takes it again with the information only
	// if the iterations go on; the coefficients and the deviance are the
	// same as without CoefOnly.
	CoefOnly bool
	// Workspace, when not nil, lends the fit its buffers, kept for the
	// next fit given the same Workspace (see Workspace).
	Workspace *Workspace
}

// A Workspace holds the buffers of a fit's passes over the rows for the
// next fit, for a caller that fits many times on one goroutine (a
// bootstrap worker refits once a replicate). With Data.Rows and one
// worker, the fit copies the listed rows' X there once, column after
// column, and every pass reads those columns instead of gathering each
// row's X again; the fit is the same with or without a Workspace. The
// zero value is ready to use; a Workspace serves one fit at a time.
type Workspace struct {
	buf  []float64 // the pass's block scratch, (2P + 1)·block values
	cols []float64 // the listed rows' X, column after column
}

// Result is a fitted model.
type Result struct {
	// Coef holds β.
	Coef []float64
	// Cov is the estimated covariance of β: the inverse of the Fisher
	// information X'WX at β, P×P row after row.
	Cov []float64
	// SE holds the square roots of Cov's diagonal.
	SE []float64
	// Deviance is −2 times the (unpenalised) log-likelihood at β.
	Deviance float64
	// PenalizedLogLik is the log-likelihood plus ½ log det X'WX, the
	// objective of a Firth fit (also set for maximum likelihood).
	PenalizedLogLik float64
	// Iterations counts the Newton steps taken.
	Iterations int
	// Halvings counts the step halvings taken.
	Halvings int
	// Solver names the linear solver of the last step: "cholesky" or
	// "svd" (used when X'WX is ill-conditioned).
	Solver string
	// NewtonSteps counts the steps of a Firth fit taken with the exact
	// Hessian of the penalised log-likelihood; the other Iterations −
	// NewtonSteps steps were modified-score steps I⁻¹U*.
	NewtonSteps int
}

// ErrNotConverged is returned (wrapped) when the iterations do not meet
// the convergence bounds within MaxIter steps and no separation is found.
var ErrNotConverged = errors.New("logistic: iterations did not converge")

// ErrSeparation is the kind of a *SeparationError: errors.Is(err,
// ErrSeparation) holds for a fit that failed by separation.
var ErrSeparation = errors.New("logistic: separation")

// ErrCollinear is the kind of a *CollinearError: errors.Is(err,
// ErrCollinear) holds for a design matrix without full column rank.
var ErrCollinear = errors.New("logistic: linearly dependent columns")

// SeparationError reports complete or quasi-complete separation: a
// combination of predictors that predicts some or all outcomes perfectly,
// so that maximum-likelihood estimates do not exist (Albert & Anderson
// 1984, Biometrika 71:1–10).
type SeparationError struct {
	// Complete is true when every row is predicted perfectly.
	Complete bool
	// Columns are the indices of the X columns whose coefficients diverge.
	Columns []int
	// Rows counts the rows predicted perfectly.
	Rows int
}

// Error says which columns separate the outcome and in how many rows.
func (e *SeparationError) Error() string {
	kind := "quasi-complete"
	if e.Complete {
		kind = "complete"
	}
	return fmt.Sprintf("logistic: %s separation (%d rows predicted perfectly; columns %v diverge)", kind, e.Rows, e.Columns)
}

// Is reports whether target is ErrSeparation.
func (e *SeparationError) Is(target error) bool { return target == ErrSeparation }

// CollinearError reports a design matrix without full column rank.
type CollinearError struct {
	// Columns are the X columns that take part in the dependence.
	Columns []int
}

// Error names the collinear columns.
func (e *CollinearError) Error() string {
	return fmt.Sprintf("logistic: columns %v are linearly dependent", e.Columns)
}

// Is reports whether target is ErrCollinear.
func (e *CollinearError) Is(target error) bool { return target == ErrCollinear }

func (o *Options) defaults(p int) {
	if o.MaxIter <= 0 {
		o.MaxIter = 50
	}
	if o.TolDeviance <= 0 {
		o.TolDeviance = 1e-11
	}
	if o.TolCoef <= 0 {
		o.TolCoef = 1e-7
	}
	if o.Workers <= 0 {
		o.Workers = runtime.GOMAXPROCS(0)
	}
}

// Fit fits the model to d.
func Fit(d Data, opt Options) (*Result, error) {
	if d.N <= 0 || d.P <= 0 || len(d.X) != d.N*d.P || len(d.Y) != d.N {
		return nil, fmt.Errorf("logistic: inconsistent data: N=%d P=%d len(X)=%d len(Y)=%d", d.N, d.P, len(d.X), len(d.Y))
	}
	if d.Weights != nil && len(d.Weights) != d.N || d.Offset != nil && len(d.Offset) != d.N {
		return nil, errors.New("logistic: weights or offset of the wrong length")
	}
	if err := d.checkRows(); err != nil {
		return nil, err
	}
	opt.defaults(d.P)
	p := d.P
	beta := make([]float64, p)
	if opt.Start != nil {
		copy(beta, opt.Start)
	} else if m, ok := interceptStart(d); ok && (opt.Fixed == nil || !opt.Fixed[0]) {
		beta[0] = m
	}
	ev := newEvaluator(d, opt.Workers)
	ev.useWorkspace(opt.Workspace)
	if opt.Start != nil && opt.StartRows != nil {
		if len(opt.StartRows.Eta) != d.N || len(opt.StartRows.Z) != d.N {
			return nil, errors.New("logistic: StartRows of the wrong length")
		}
		ev.start = opt.StartRows
	}
	st, err := ev.eval(beta, opt.Firth, true)
	ev.start = nil
	if err != nil {
		return nil, err
	}
	// Without the covariance, a maximum-likelihood step within TolCoef
	// is evaluated without the information (see Options.CoefOnly).
	lean := opt.CoefOnly && !opt.Firth
	res := &Result{}
	trial := make([]float64, p)
	var lastStep []float64
	converged := false
	var stepErr error
	if opt.Fixed != nil && len(opt.Fixed) != p {
		return nil, errors.New("logistic: Fixed must mark every coefficient")
	}
	for it := 1; it <= opt.MaxIter; it++ {
		// A Firth fit tries Newton's step on the penalised log-likelihood
		// (quadratic convergence, which the modified-score step lacks
		// under separation, where it slows to hundreds of steps); the
		// modified-score step I⁻¹U* is the fallback where the negated
		// Hessian is not positive definite or the Newton step finds no
		// ascent. Either way the step is halved until ℓ* does not fall.
		var step []float64
		var solver string
		newton := false
		if opt.Firth {
			if j, err := ev.firthHessian(st); err == nil {
				step, newton = newtonStep(j, st.score, opt.Fixed, p)
				solver = "cholesky"
			}
		}
		if !newton {
			var err error
			step, solver, err = freeStep(st.info, st.score, opt.Fixed, p)
			if err != nil {
				if it == 1 {
					return nil, err
				}
				// The information can lose rank late in the iterations when
				// fitted risks reach 0 or 1: a sign of separation.
				stepErr = err
				break
			}
		}
		res.Iterations = it
		next, h := ev.halve(beta, step, st, opt.Firth, trial, 40, opt.TolCoef, lean)
		res.Halvings += h
		if next == nil && newton {
			var err error
			if step, solver, err = freeStep(st.info, st.score, opt.Fixed, p); err != nil {
				stepErr = err
				break
			}
			newton = false
			next, h = ev.halve(beta, step, st, opt.Firth, trial, 40, opt.TolCoef, false)
			res.Halvings += h
		}
		if next == nil {
			break
		}
		res.Solver = solver
		if newton {
			res.NewtonSteps++
		}
		maxStep := 0.0
		for j := range trial {
			maxStep = math.Max(maxStep, math.Abs(trial[j]-beta[j])/math.Max(1, math.Abs(beta[j])))
		}
		lastStep = make([]float64, p)
		for j := range trial {
			lastStep[j] = trial[j] - beta[j]
		}
		// The deviance, penalised for Firth: −2 times the objective. A
		// change within the rounding of the objective counts as none.
		change := math.Abs(next.objective - st.objective)
		devChange := 2 * change / (math.Abs(2*next.objective) + 0.1)
		if opt.Firth && change <= math.Max(st.rounding, next.rounding) {
			devChange = 0
		}
		copy(beta, trial)
		st = next
		if devChange < opt.TolDeviance && maxStep < opt.TolCoef {
			converged = true
			break
		}
		if !opt.Firth && st.deviance < 1e-10*float64(d.N) {
			break // every row fitted perfectly: complete separation
		}
		if st.lean {
			// The iterations go on: the same pass with the information.
			if st, err = ev.eval(beta, false, true); err != nil {
				return nil, err
			}
		}
	}
	if !converged {
		if sep := ev.separation(beta, lastStep); sep != nil && !opt.Firth {
			return nil, sep
		}
		if stepErr != nil {
			return nil, fmt.Errorf("%w in %d iterations: %w", ErrNotConverged, res.Iterations, stepErr)
		}
		return nil, fmt.Errorf("%w in %d iterations", ErrNotConverged, res.Iterations)
	}
	res.Coef = beta
	if !opt.CoefOnly {
		cov, err := invert(st.info, p)
		if err != nil {
			return nil, err
		}
		res.Cov = cov
		res.SE = make([]float64, p)
		for j := range res.SE {
			res.SE[j] = math.Sqrt(cov[j*p+j])
		}
	}
	res.Deviance = st.deviance
	res.PenalizedLogLik = -st.deviance/2 + st.halfLogDet
	return res, nil
}

// halve tries beta + scale·step for scale = 1, ½, ¼, … (at most max
// halvings) and returns the first state whose objective (the
// log-likelihood, penalised for Firth) is not below st's by more than
// the rounding of either (state.rounding), with the halvings taken; trial holds the
// accepted coefficients. A step already within the coefficients'
// convergence bound tiny (max_j |step_j| / max(1, |β_j|) < tiny) is
// taken whole whenever its objective is finite: the objective changes by
// less than its rounding there (under separation log det X'WX comes
// from an ill-conditioned matrix), and halving cannot help. It returns
// nil when every trial falls. With lean set, such a small step is
// evaluated without the information and score (state.lean).
func (e *evaluator) halve(beta, step []float64, st *state, firth bool, trial []float64, max int, tiny float64, lean bool) (*state, int) {
	small := true
	for j, s := range step {
		small = small && math.Abs(s)/math.Max(1, math.Abs(beta[j])) < tiny
	}
	lean = lean && small && !firth
	scale := 1.0
	for h := 0; h <= max; h++ {
		for j := range trial {
			trial[j] = beta[j] + scale*step[j]
		}
		next, err := e.eval(trial, firth, !lean)
		if err == nil && lean {
			next.lean = true
		}
		if err == nil && (small || next.objective >= st.objective-math.Max(st.rounding, next.rounding)) {
			return next, h
		}
		scale /= 2
	}
	return nil, max
}

// newtonStep is the Newton step J⁻¹U over the coefficients not fixed,
// where J is the negated Hessian of the objective; ok is false when J
// (restricted to the free coefficients) is not positive definite or is
// ill-conditioned (condition number of 1e12 or more), where the step
// would not be an ascent direction to trust.
func newtonStep(j, score []float64, fixed []bool, p int) (step []float64, ok bool) {
	var free []int
	for i := 0; i < p; i++ {
		if fixed == nil || !fixed[i] {
			free = append(free, i)
		}
	}
	step = make([]float64, p)
	q := len(free)
	if q == 0 {
		return step, true
	}
	sub, ss := make([]float64, q*q), make([]float64, q)
	for a, i := range free {
		ss[a] = score[i]
		for b, k := range free {
			sub[a*q+b] = j[i*p+k]
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(mat.NewSymDense(q, sub)) || !(ch.Cond() < 1e12) {
		return nil, false
	}
	var x mat.VecDense
	if err := ch.SolveVecTo(&x, mat.NewVecDense(q, ss)); err != nil {
		return nil, false
	}
	for a, i := range free {
		step[i] = x.AtVec(a)
	}
	return step, true
}

// interceptStart gives logit(ȳ), the intercept-only estimate, as the
// start for column 0 when that column is all ones and there is no offset.
func interceptStart(d Data) (float64, bool) {
	if d.Offset != nil {
		return 0, false
	}
	sw, sy := 0.0, 0.0
	for i := 0; i < d.N; i++ {
		if d.X[i*d.P] != 1 {
			return 0, false
		}
		w := 1.0
		if d.Weights != nil {
			w = d.Weights[i]
		}
		sw += w
		sy += w * d.Y[i]
	}
	if sy <= 0 || sy >= sw {
		return 0, false
	}
	return Logit(sy / sw), true
}

// LinearPredictor writes Xβ plus the offset of every row into out (which
// must hold N values) and returns it.
func (d Data) LinearPredictor(beta, out []float64) []float64 {
	for i := range out {
		x := d.X[i*d.P : (i+1)*d.P]
		eta := 0.0
		if d.Offset != nil {
			eta = d.Offset[i]
		}
		for j, b := range beta {
			eta += x[j] * b
		}
		out[i] = eta
	}
	return out
}

// Deviance returns −2 log-likelihood of the model with coefficients beta
// on d, without fitting.
func Deviance(d Data, beta []float64) float64 {
	ev := newEvaluator(d, 1)
	st, _ := ev.eval(beta, false, false)
	return st.deviance
}

// solve returns the Newton step info⁻¹·score: by Cholesky when info is
// well conditioned, otherwise by a truncated SVD. A rank-deficient info is
// a CollinearError.
// freeStep is the Newton step info⁻¹·score over the coefficients not
// fixed (all when fixed is nil); fixed ones do not move.
func freeStep(info, score []float64, fixed []bool, p int) ([]float64, string, error) {
	if fixed == nil {
		return solve(info, score, p)
	}
	var free []int
	for j, f := range fixed {
		if !f {
			free = append(free, j)
		}
	}
	step := make([]float64, p)
	q := len(free)
	if q == 0 {
		return step, "none", nil
	}
	sub, ss := make([]float64, q*q), make([]float64, q)
	for a, i := range free {
		ss[a] = score[i]
		for b, j := range free {
			sub[a*q+b] = info[i*p+j]
		}
	}
	x, solver, err := solve(sub, ss, q)
	if err != nil {
		return nil, "", err
	}
	for a, i := range free {
		step[i] = x[a]
	}
	return step, solver, nil
}

func solve(info, score []float64, p int) ([]float64, string, error) {
	sym := mat.NewSymDense(p, append([]float64(nil), info...))
	var ch mat.Cholesky
	b := mat.NewVecDense(p, append([]float64(nil), score...))
	if ch.Factorize(sym) && ch.Cond() < 1e10 {
		var x mat.VecDense
		if err := ch.SolveVecTo(&x, b); err == nil {
			return x.RawVector().Data, "cholesky", nil
		}
	}
	var svd mat.SVD
	if !svd.Factorize(sym, mat.SVDFull) {
		return nil, "", errors.New("logistic: SVD of the information matrix failed")
	}
	vals := svd.Values(nil)
	tol := vals[0] * 1e-13 * float64(p)
	rank := 0
	for _, v := range vals {
		if v > tol {
			rank++
		}
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	if rank < p {
		return nil, "", &CollinearError{Columns: nullColumns(&v, rank, p)}
	}
	// x = V Σ⁻¹ U' b
	x := make([]float64, p)
	for k := 0; k < rank; k++ {
		c := 0.0
		for i := 0; i < p; i++ {
			c += u.At(i, k) * score[i]
		}
		c /= vals[k]
		for i := 0; i < p; i++ {
			x[i] += v.At(i, k) * c
		}
	}
	return x, "svd", nil
}

// nullColumns returns the columns with a non-negligible weight in the
// null space spanned by the right singular vectors rank..p-1.
func nullColumns(v *mat.Dense, rank, p int) []int {
	var cols []int
	for i := 0; i < p; i++ {
		w := 0.0
		for k := rank; k < p; k++ {
			w = math.Max(w, math.Abs(v.At(i, k)))
		}
		if w > 1e-6 {
			cols = append(cols, i)
		}
	}
	return cols
}

// invert returns info⁻¹, by Cholesky or, failing that, by SVD.
func invert(info []float64, p int) ([]float64, error) {
	sym := mat.NewSymDense(p, append([]float64(nil), info...))
	var ch mat.Cholesky
	out := make([]float64, p*p)
	if ch.Factorize(sym) {
		var inv mat.SymDense
		if err := ch.InverseTo(&inv); err == nil {
			for i := 0; i < p; i++ {
				for j := 0; j < p; j++ {
					out[i*p+j] = inv.At(i, j)
				}
			}
			return out, nil
		}
	}
	for j := 0; j < p; j++ {
		e := make([]float64, p)
		e[j] = 1
		col, _, err := solve(info, e, p)
		if err != nil {
			return nil, err
		}
		for i := 0; i < p; i++ {
			out[i*p+j] = col[i]
		}
	}
	return out, nil
}

// state is what one pass over the rows yields at some β.
type state struct {
	deviance   float64
	halfLogDet float64 // ½ log det X'WX, for Firth's penalty
	objective  float64 // log-likelihood, penalised for Firth
	// rounding bounds the error of objective from rounding: 1e-12 of
	// its size, and for Firth ½·P·cond(X'WX)·ε more, the error of a log
	// determinant from a Cholesky factor of a matrix whose entries carry
	// a relative error ε (Higham 2002, Accuracy and Stability of
	// Numerical Algorithms, 2nd ed., §10.1, with the first-order
	// perturbation of log det). Under separation X'WX is ill-conditioned
	// and this term dominates.
	rounding float64
	info     []float64
	score    []float64
	inv      []float64 // info⁻¹, for Firth
	// mu and q hold, for Firth, each row's fitted risk and x'I⁻¹x (for
	// the Hessian, which would otherwise recompute them).
	mu, q []float64
	// lean marks a state evaluated without info and score.
	lean bool
}

type evaluator struct {
	d       Data
	workers int
	// bufs[k] is worker k's scratch for pass, made once per evaluator
	// so that the passes of a fit allocate nothing per pass.
	bufs [][]float64
	// start, when not nil, gives pass each row's η and e^−|η| (the
	// first pass of a fit with Options.StartRows).
	start *StartRows
	// cols, when not nil, holds the X of the rows of d.Rows column after
	// column (column j of the r-th listed row at j·len(d.Rows) + r), for
	// one worker's passes.
	cols []float64
}

// useWorkspace takes the pass scratch from ws and, for one worker over
// listed rows, copies their X into ws's columns.
func (e *evaluator) useWorkspace(ws *Workspace) {
	if ws == nil {
		return
	}
	p := e.d.P
	if cap(ws.buf) < (2*p+1)*block {
		ws.buf = make([]float64, (2*p+1)*block)
	}
	e.bufs = [][]float64{ws.buf[:(2*p+1)*block]}
	if e.workers != 1 || e.d.Rows == nil || p <= 3 {
		return // passSmall gathers nothing
	}
	m := len(e.d.Rows)
	if cap(ws.cols) < m*p {
		ws.cols = make([]float64, m*p)
	}
	cols := ws.cols[:m*p]
	for j := 0; j < p; j++ {
		col, x := cols[j*m:(j+1)*m], e.d.X[j:]
		for r, i := range e.d.Rows {
			col[r] = x[int(i)*p]
		}
	}
	e.cols = cols
}

func newEvaluator(d Data, workers int) *evaluator {
	if d.N < 20000 {
		workers = 1
	}
	return &evaluator{d: d, workers: workers}
}

// chunk accumulates over rows [lo, hi).
type chunk struct {
	dev   float64
	info  []float64
	score []float64
	// s2 and t are the sums of firthHessPass.
	s2, t []float64
	// buf is the worker's scratch for pass: (2P + 1)·block values.
	buf []float64
}

// eval computes the deviance, the information X'WX and the score at beta.
// For Firth it adds the hat-value adjustment to the score, which needs a
// second pass with the inverse information.
func (e *evaluator) eval(beta []float64, firth, withDerivs bool) (*state, error) {
	p := e.d.P
	var mu []float64
	if firth && withDerivs {
		mu = make([]float64, e.d.N)
	}
	parts := e.run(withDerivs, func(lo, hi int, c *chunk) { e.pass(beta, lo, hi, c, withDerivs, mu) })
	st := &state{info: make([]float64, p*p), score: make([]float64, p)}
	for _, c := range parts {
		st.deviance += c.dev
		if withDerivs {
			for j := range st.score {
				st.score[j] += c.score[j]
			}
			for j := range st.info {
				st.info[j] += c.info[j]
			}
		}
	}
	if math.IsNaN(st.deviance) || math.IsInf(st.deviance, 0) {
		return nil, errors.New("logistic: the deviance is not finite")
	}
	st.objective = -st.deviance / 2
	st.rounding = 1e-12 * (1 + math.Abs(st.objective))
	if !withDerivs {
		return st, nil
	}
	// Fill the lower triangle.
	for i := 0; i < p; i++ {
		for j := 0; j < i; j++ {
			st.info[i*p+j] = st.info[j*p+i]
		}
	}
	if firth {
		inv, hld, cond, err := invertLogDet(st.info, p)
		if err != nil {
			return nil, err
		}
		st.halfLogDet = hld
		st.inv = inv
		st.objective += hld
		st.rounding += float64(p) * cond * epsilon / 2
		st.mu, st.q = mu, make([]float64, e.d.N)
		adj := e.run(false, func(lo, hi int, c *chunk) { e.firthPass(mu, inv, st.q, lo, hi, c) })
		for _, c := range adj {
			for j := range st.score {
				st.score[j] += c.score[j]
			}
		}
	}
	return st, nil
}

// invertLogDet returns info⁻¹, ½ log det info and the condition number
// of info (gonum's estimate in the 1-norm).
func invertLogDet(info []float64, p int) ([]float64, float64, float64, error) {
	sym := mat.NewSymDense(p, append([]float64(nil), info...))
	var ch mat.Cholesky
	if !ch.Factorize(sym) {
		return nil, 0, 0, errors.New("logistic: the information matrix is not positive definite")
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, 0, 0, fmt.Errorf("logistic: inverting the information matrix: %w", err)
	}
	out := make([]float64, p*p)
	for i := 0; i < p; i++ {
		for j := 0; j < p; j++ {
			out[i*p+j] = inv.At(i, j)
		}
	}
	return out, ch.LogDet() / 2, ch.Cond(), nil
}

// epsilon is the unit roundoff of float64, 2⁻⁵³.
const epsilon = 0x1p-53

// run splits the rows between the workers and returns their chunks,
// each with the worker's scratch for pass when withBuf is set (made once
// per evaluator; a pass without derivatives, such as Deviance's, needs
// none).
func (e *evaluator) run(withBuf bool, f func(lo, hi int, c *chunk)) []*chunk {
	p, n := e.d.P, e.d.N
	w := e.workers
	parts := make([]*chunk, w)
	if len(e.bufs) != w {
		e.bufs = make([][]float64, w)
	}
	var wg sync.WaitGroup
	for k := 0; k < w; k++ {
		if withBuf && e.bufs[k] == nil {
			e.bufs[k] = make([]float64, (2*p+1)*block)
		}
		parts[k] = &chunk{info: make([]float64, p*p), score: make([]float64, p), buf: e.bufs[k]}
		lo, hi := n*k/w, n*(k+1)/w
		if w == 1 {
			f(lo, hi, parts[k])
			continue
		}
		wg.Add(1)
		go func(c *chunk) {
			defer wg.Done()
			f(lo, hi, c)
		}(parts[k])
	}
	wg.Wait()
	return parts
}

// block is the number of rows gathered, column by column, before their
// contributions to X'WX and the score are added with vector dot products.
const block = 256

// pass accumulates the deviance and, if asked, the upper triangle of X'WX
// and the score X'(w(y − μ)) over rows [lo, hi).
func (e *evaluator) pass(beta []float64, lo, hi int, c *chunk, derivs bool, muOut []float64) {
	d := e.d
	p := d.P
	if derivs && p <= 3 {
		e.passSmall(beta, lo, hi, c, muOut)
		return
	}
	var xc, wx, rv, vb []float64
	if derivs {
		xc = c.buf[:p*block]                  // the block's X, column after column
		wx = c.buf[p*block : 2*p*block]       // the same, times the IRLS weight
		rv = c.buf[2*p*block : (2*p+1)*block] // w(y − μ)
		vb = xc[:block]                       // the IRLS weights, when xc is not used
	}
	// With the listed rows' columns (one worker over d.Rows: k is then
	// the row's place in d.Rows) the block's X is read from them.
	var cols []float64
	if e.cols != nil && d.Rows != nil && e.workers == 1 {
		cols = e.cols
	}
	nb := 0
	acc := newDevSum()
	start := e.start
	// With d.Rows the loop runs over the listed rows in [lo, hi).
	sub := d.rowsIn(lo, hi)
	first, last := lo, hi
	if sub != nil {
		first, last = 0, len(sub)
	}
	for k := first; k < last; k++ {
		i := k
		if sub != nil {
			i = int(sub[k])
		}
		// The row and its deviance term, written out here (not called) to
		// keep this innermost loop free of calls.
		wt := 1.0
		if d.Weights != nil {
			if wt = d.Weights[i]; wt == 0 {
				continue
			}
		}
		x := d.X[i*p : (i+1)*p]
		var eta, z float64
		if start != nil {
			eta, z = start.Eta[i], start.Z[i]
		} else {
			if d.Offset != nil {
				eta = d.Offset[i]
			}
			for j, b := range beta {
				eta += x[j] * b
			}
			z = math.Exp(-math.Abs(eta))
		}
		y := d.Y[i]
		if wt == 1 {
			acc.lin += positive(eta) - y*eta
			acc.prod *= 1 + z
			if acc.n++; acc.n >= 256 {
				acc = acc.flushed()
			}
		} else {
			acc = acc.addWeighted(wt, eta, y, z)
		}
		if !derivs {
			continue
		}
		mu := expitFrom(z, eta)
		if muOut != nil {
			muOut[i] = mu
		}
		v := wt * mu * (1 - mu)
		rv[nb] = wt * (y - mu)
		if cols != nil {
			// The columns hold the block's X: keep the weight alone.
			vb[nb] = v
		} else {
			for j, xj := range x {
				xc[j*block+nb] = xj
				wx[j*block+nb] = v * xj
			}
		}
		nb++
		if nb == block {
			c.flushBlock(xc, wx, rv, vb, cols, k+1-nb, nb, p)
			nb = 0
		}
	}
	if derivs && nb > 0 {
		c.flushBlock(xc, wx, rv, vb, cols, last-nb, nb, p)
	}
	c.dev = acc.total()
}

// flushBlock adds a block of nb rows to the score and X'WX: gathered by
// pass when cols is nil, else the rows from place at of the listed rows,
// whose X cols holds, and whose IRLS weights are in vb (the products
// v·x are made here, column by column, the same products as pass's).
func (c *chunk) flushBlock(xc, wx, rv, vb, cols []float64, at, nb, p int) {
	if cols == nil {
		c.addBlock(xc, block, 0, wx, rv, nb, p)
		return
	}
	m := len(cols) / p
	vs := vb[:nb]
	for j := 0; j < p; j++ {
		xj := cols[j*m+at : j*m+at+nb]
		wj := wx[j*block : j*block+nb]
		for r, v := range vs {
			wj[r] = v * xj[r]
		}
	}
	c.addBlock(cols, m, at, wx, rv, nb, p)
}

// addBlock adds the contributions of a block of nb rows to the score
// and the upper triangle of X'WX: column j of the rows' X is
// xs[j·stride + at:][:nb], wx holds the same times the IRLS weight
// (column after column, block values apart) and rv the working
// residuals w(y − μ).
func (c *chunk) addBlock(xs []float64, stride, at int, wx, rv []float64, nb, p int) {
	for j := 0; j < p; j++ {
		cj := xs[j*stride+at : j*stride+at+nb]
		c.score[j] += floats.Dot(rv[:nb], cj)
		wj := wx[j*block : j*block+nb]
		for k := j; k < p; k++ {
			c.info[j*p+k] += floats.Dot(wj, xs[k*stride+at:k*stride+at+nb])
		}
	}
}

// passSmall is pass with derivatives for at most three columns, where
// adding each row's products directly beats gathering blocks.
func (e *evaluator) passSmall(beta []float64, lo, hi int, c *chunk, muOut []float64) {
	d := e.d
	p := d.P
	var info [9]float64
	var score [3]float64
	acc := newDevSum()
	for i := lo; i < hi; i++ {
		// The row and its deviance term, written out here (not called) to
		// keep this innermost loop free of calls.
		wt := 1.0
		if d.Weights != nil {
			if wt = d.Weights[i]; wt == 0 {
				continue
			}
		}
		x := d.X[i*p : (i+1)*p]
		eta := 0.0
		if d.Offset != nil {
			eta = d.Offset[i]
		}
		for j, b := range beta {
			eta += x[j] * b
		}
		y := d.Y[i]
		z := math.Exp(-math.Abs(eta))
		if wt == 1 {
			acc.lin += positive(eta) - y*eta
			acc.prod *= 1 + z
			if acc.n++; acc.n >= 256 {
				acc = acc.flushed()
			}
		} else {
			acc = acc.addWeighted(wt, eta, y, z)
		}
		mu := expitFrom(z, eta)
		if muOut != nil {
			muOut[i] = mu
		}
		v := wt * mu * (1 - mu)
		r := wt * (y - mu)
		for j, xj := range x {
			score[j] += r * xj
			vx := v * xj
			for k := j; k < p; k++ {
				info[j*3+k] += vx * x[k]
			}
		}
	}
	for j := 0; j < p; j++ {
		c.score[j] += score[j]
		for k := j; k < p; k++ {
			c.info[j*p+k] += info[j*3+k]
		}
	}
	c.dev = acc.total()
}

// devSum accumulates −log-likelihood terms softplus(η) − yη. The sum of
// log(1 + z), z = e^−|η|, is taken as the log of a running product, one
// logarithm per 256 factors: each factor lies in (1, 2], so the product
// stays finite, and the absolute error per row stays near 1e-16. A row
// with a small whole weight k (a bootstrap count) contributes k factors.
type devSum struct {
	lin, prod float64
	n         int
}

func newDevSum() devSum { return devSum{prod: 1} }

// addWeighted adds a row of weight wt (with z = e^−|η|). The sum is a
// value, not a pointer, so that a pass keeps it in registers.
func (a devSum) addWeighted(wt, eta, y, z float64) devSum {
	a.lin += wt * (positive(eta) - y*eta)
	if k := int(wt); float64(k) == wt && k <= 8 {
		for ; k > 0; k-- {
			a.prod *= 1 + z
			if a.n++; a.n >= 256 {
				a = a.flushed()
			}
		}
		return a
	}
	a.lin += wt * log1pUnit(z)
	return a
}

// flushed takes the logarithm of the running product into the sum.
func (a devSum) flushed() devSum {
	a.lin += math.Log(a.prod)
	a.prod, a.n = 1, 0
	return a
}

// positive is max(η, 0), the value of math.Max(η, 0) for every η but
// NaN (0 here, NaN there; a NaN η makes the row's term y·η, and so the
// deviance, NaN either way). math.Max is an assembly routine on amd64,
// a call per row in the passes; this is inlined.
func positive(eta float64) float64 {
	if eta > 0 {
		return eta
	}
	return 0
}

// expitFrom is expit(η) from z = e^−|η|.
func expitFrom(z, eta float64) float64 {
	if eta < 0 {
		return z / (1 + z)
	}
	return 1 / (1 + z)
}

// total is the deviance, 2 × the accumulated sum.
func (a devSum) total() float64 { return 2 * (a.lin + math.Log(a.prod)) }

// firthPass adds Firth's adjustment Σ w·h·(½ − μ)·x to the score, where
// h = μ(1 − μ)·q is the hat value of the row and q = x' I⁻¹ x, which it
// writes into qOut; mu holds the rows' fitted risks, from pass.
func (e *evaluator) firthPass(mu, inv, qOut []float64, lo, hi int, c *chunk) {
	d := e.d
	p := d.P
	for i := lo; i < hi; i++ {
		wt := 1.0
		if d.Weights != nil {
			wt = d.Weights[i]
			if wt == 0 {
				continue
			}
		}
		x := d.X[i*p : i*p+p]
		q := 0.0
		for j := 0; j < p; j++ {
			s := 0.0
			row := inv[j*p : j*p+p]
			for k := 0; k < p; k++ {
				s += row[k] * x[k]
			}
			q += x[j] * s
		}
		qOut[i] = q
		m := mu[i]
		a := wt * m * (1 - m) * q * (0.5 - m)
		for j := 0; j < p; j++ {
			c.score[j] += a * x[j]
		}
	}
}

// firthHessian returns J = −∇²ℓ*(β), the negated Hessian of Firth's
// penalised log-likelihood ℓ* = ℓ + ½ log det I at the state st of beta
// (which holds I = X'WX and I⁻¹), P×P row after row. With m the row's
// weight, w = μ(1 − μ), w' = dw/dη = w(1 − 2μ), w″ = d²w/dη² =
// w(1 − 6w), q = x'I⁻¹x and M_r = Σ m·w'·x_r·xx' (= ∂I/∂β_r),
//
//	J = I − ½ Σ m·w″·q·xx' + ½ [tr(I⁻¹M_r I⁻¹M_s)]_rs,
//
// from ∂² ½ log det I = ½ tr(I⁻¹ ∂²I) − ½ tr(I⁻¹ ∂I I⁻¹ ∂I) (Magnus &
// Neudecker 1999, Matrix Differential Calculus, ch. 8). It costs about
// P³/6 multiply-adds per row, against P² for I.
func (e *evaluator) firthHessian(st *state) ([]float64, error) {
	if st.inv == nil || st.mu == nil {
		return nil, errors.New("logistic: no Firth state for the Hessian")
	}
	p := e.d.P
	parts := e.run(false, func(lo, hi int, c *chunk) { e.firthHessPass(st.mu, st.q, lo, hi, c) })
	s2 := make([]float64, p*p)
	t := make([]float64, p*p*p)
	for _, c := range parts {
		if c.t == nil {
			continue
		}
		floats.Add(s2, c.s2)
		floats.Add(t, c.t)
	}
	// The pass fills T[r][a][b] for r ≤ a ≤ b only; T is symmetric in
	// its three indices.
	full := make([]float64, p*p*p)
	for r := 0; r < p; r++ {
		for a := 0; a < p; a++ {
			for b := 0; b < p; b++ {
				i, j, k := sort3(r, a, b)
				full[(r*p+a)*p+b] = t[(i*p+j)*p+k]
			}
		}
	}
	// N_r = I⁻¹ M_r.
	inv := st.inv
	n := make([]float64, p*p*p)
	for r := 0; r < p; r++ {
		m := full[r*p*p : (r+1)*p*p]
		nr := n[r*p*p : (r+1)*p*p]
		for a := 0; a < p; a++ {
			for k := 0; k < p; k++ {
				if v := inv[a*p+k]; v != 0 {
					floats.AddScaled(nr[a*p:(a+1)*p], v, m[k*p:(k+1)*p])
				}
			}
		}
	}
	j := make([]float64, p*p)
	for r := 0; r < p; r++ {
		nr := n[r*p*p : (r+1)*p*p]
		for s := r; s < p; s++ {
			ns := n[s*p*p : (s+1)*p*p]
			tr := 0.0
			for a := 0; a < p; a++ {
				for b := 0; b < p; b++ {
					tr += nr[a*p+b] * ns[b*p+a]
				}
			}
			i := r
			if s < r {
				i = s
			}
			v := st.info[r*p+s] - s2[i*p+max(r, s)]/2 + tr/2
			j[r*p+s], j[s*p+r] = v, v
		}
	}
	for _, v := range j {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, errors.New("logistic: the Hessian of the penalised log-likelihood is not finite")
		}
	}
	return j, nil
}

// sort3 returns a, b, c in increasing order.
func sort3(a, b, c int) (int, int, int) {
	if a > b {
		a, b = b, a
	}
	if b > c {
		b, c = c, b
	}
	if a > b {
		a, b = b, a
	}
	return a, b, c
}

// firthHessPass accumulates, over rows [lo, hi), the upper triangle of
// Σ m·w″·q·xx' into c.s2 and Σ m·w'·x_r·x_a·x_b for r ≤ a ≤ b into
// c.t (see firthHessian), gathering rows in blocks as pass does; mu and
// q are the rows' fitted risks and x'I⁻¹x, from eval.
func (e *evaluator) firthHessPass(mu, q []float64, lo, hi int, c *chunk) {
	d := e.d
	p := d.P
	c.s2 = make([]float64, p*p)
	c.t = make([]float64, p*p*p)
	xc := make([]float64, p*block) // the block's X, column after column
	w1 := make([]float64, block)   // m·w'
	w2 := make([]float64, block)   // m·w″·q
	u1 := make([]float64, block)   // m·w'·x_r
	u2 := make([]float64, block)   // m·w″·q·x_r
	u3 := make([]float64, block)   // m·w'·x_r·x_a
	nb := 0
	flush := func() {
		for r := 0; r < p; r++ {
			xr := xc[r*block : r*block+nb]
			for k := range nb {
				u1[k] = w1[k] * xr[k]
				u2[k] = w2[k] * xr[k]
			}
			for a := r; a < p; a++ {
				xa := xc[a*block : a*block+nb]
				c.s2[r*p+a] += floats.Dot(u2[:nb], xa)
				for k := range nb {
					u3[k] = u1[k] * xa[k]
				}
				for b := a; b < p; b++ {
					c.t[(r*p+a)*p+b] += floats.Dot(u3[:nb], xc[b*block:b*block+nb])
				}
			}
		}
		nb = 0
	}
	for i := lo; i < hi; i++ {
		wt := 1.0
		if d.Weights != nil {
			if wt = d.Weights[i]; wt == 0 {
				continue
			}
		}
		x := d.X[i*p : i*p+p]
		m := mu[i]
		w := m * (1 - m)
		w1[nb] = wt * w * (1 - 2*m)
		w2[nb] = wt * w * (1 - 6*w) * q[i]
		for j, xj := range x {
			xc[j*block+nb] = xj
		}
		nb++
		if nb == block {
			flush()
		}
	}
	if nb > 0 {
		flush()
	}
}

// separation inspects the last iterate: rows whose fitted probability is
// within 1e-8 of their outcome are predicted perfectly; when such rows
// exist and coefficients are still moving, the estimates are diverging.
func (e *evaluator) separation(beta, lastStep []float64) *SeparationError {
	if lastStep == nil {
		return nil
	}
	d := e.d
	p := d.P
	perfect, used := 0, 0
	for i := 0; i < d.N; i++ {
		if d.Weights != nil && d.Weights[i] == 0 {
			continue
		}
		used++
		eta := 0.0
		if d.Offset != nil {
			eta = d.Offset[i]
		}
		for j, b := range beta {
			eta += d.X[i*p+j] * b
		}
		if d.Y[i] == 1 && eta > 18.4 || d.Y[i] == 0 && eta < -18.4 {
			perfect++
		}
	}
	maxStep := 0.0
	for _, s := range lastStep {
		maxStep = math.Max(maxStep, math.Abs(s))
	}
	if perfect == 0 || maxStep < 1e-3 && perfect < used {
		return nil
	}
	var cols []int
	for j, s := range lastStep {
		if math.Abs(s) > 1e-2*maxStep {
			cols = append(cols, j)
		}
	}
	return &SeparationError{Complete: perfect == used, Columns: cols, Rows: perfect}
}

// Expit is the logistic function 1 / (1 + e^−x), computed without
// overflow for either sign of x.
func Expit(x float64) float64 {
	if x >= 0 {
		return 1 / (1 + math.Exp(-x))
	}
	z := math.Exp(x)
	return z / (1 + z)
}

// Logit is log(p / (1 − p)), computed as log(p) − log1p(−p) for accuracy
// near both ends.
func Logit(p float64) float64 { return math.Log(p) - math.Log1p(-p) }

// log1pUnit is log(1 + z) for 0 ≤ z ≤ 1, by the correction
// log(u)·z/(u − 1) with u = 1 + z, which is accurate to a few ulps
// (Goldberg 1991, "What every computer scientist should know about
// floating-point arithmetic", Theorem 4) and faster than math.Log1p.
func log1pUnit(z float64) float64 {
	u := 1 + z
	if u == 1 {
		return z
	}
	return math.Log(u) * z / (u - 1)
}

// softplus is log(1 + e^x), without overflow.
func softplus(x float64) float64 {
	if x > 0 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
}
