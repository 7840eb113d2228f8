// Package resample estimates how optimistic a model's apparent
// performance is, by the optimism-corrected bootstrap (Efron 1983,
// Journal of the American Statistical Association 78:316–331; Harrell,
// Lee & Mark 1996, Statistics in Medicine 15:361–387), and gives
// percentile intervals for measures without an analytic one.
//
// Bootstrap samples are frequency weights over the original rows (how
// often each row was drawn), so no replicate copies the design matrix.
// Every replicate draws from its own random stream, made from the seed
// and the replicate's number, so the results are the same whatever the
// number of workers.
package resample

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"sync"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// Problem is a recipe's fit to the development rows: the design matrix
// (categorical levels and spline knots fixed from all rows), the outcomes
// and the coefficients fitted to all rows.
type Problem struct {
	X    []float64
	N, P int
	Y    []float64
	// Coef are the coefficients fitted to every row; each refit starts
	// from them.
	Coef  []float64
	Firth bool
	// Offset, when not nil, is added to the linear predictor of every row
	// (as when updating a model with its original linear predictor).
	Offset []float64
}

// Options control the bootstrap.
type Options struct {
	// B is the number of replicates.
	B int
	// Seed makes the draws reproducible.
	Seed uint64
	// Workers bounds the goroutines (default GOMAXPROCS).
	Workers int
	// ICIDelta is the LOWESS δ of the ICI inside the bootstrap, as a
	// share of the range of the risks smoothed (default 0.1: about ten
	// local fits per curve, interpolated between; the curve of span 0.75
	// bends little over a tenth of its range, and the apparent ICI that
	// the optimism is taken from is made the same way).
	ICIDelta float64
	// Log, when not nil, receives one line per replicate: the 0-based
	// indices of the rows drawn, in the order drawn, comma-separated.
	Log io.Writer
	// Progress, when not nil, is called with the replicates done so far.
	Progress func(done int)
}

// feed sends 0, 1, …, n−1 to the workers that range over the channel it
// returns, stopping early when ctx is done, and then closes it.
func feed(ctx context.Context, n int) <-chan int {
	next := make(chan int)
	go func() {
		defer close(next)
		for b := 0; b < n; b++ {
			select {
			case next <- b:
			case <-ctx.Done():
				return
			}
		}
	}()
	return next
}

// Measures are the measures corrected for optimism.
type Measures struct {
	AUC         float64
	Slope       float64
	CITL        float64
	Brier       float64
	ScaledBrier float64
	R2          float64
	ICI         float64
}

func (m Measures) sub(o Measures) Measures {
	return Measures{m.AUC - o.AUC, m.Slope - o.Slope, m.CITL - o.CITL, m.Brier - o.Brier,
		m.ScaledBrier - o.ScaledBrier, m.R2 - o.R2, m.ICI - o.ICI}
}

// Result is the outcome of the optimism bootstrap.
type Result struct {
	B    int
	Seed uint64
	// Failed counts the replicates whose refit failed (separation, no
	// convergence, a level absent from the sample); they are left out.
	Failed int
	// Reasons counts the failures by kind.
	Reasons map[string]int
	// Apparent is the performance of the full fit on its own rows,
	// Optimism the mean over the replicates of (performance on the
	// bootstrap sample − performance on the original rows), and Corrected
	// Apparent − Optimism.
	Apparent, Optimism, Corrected Measures
	// ICIDelta is the δ share used for every ICI here.
	ICIDelta float64
}

// FailedShare is the share of replicates that failed.
func (r *Result) FailedShare() float64 { return float64(r.Failed) / float64(r.B) }

// Optimism runs the optimism-corrected bootstrap of pr.
//
// For b = 1 … B: draw N rows with replacement; refit the recipe on them
// (as frequency weights); measure the refitted model on the bootstrap
// sample (apparent_b) and on the original rows (test_b). The optimism is
// the mean of apparent_b − test_b over the replicates that succeeded; the
// corrected measure is the apparent one less the optimism. The measures
// are the AUC, calibration slope, calibration-in-the-large, Brier and
// scaled Brier scores, Nagelkerke's R² and the ICI.
//
// A cancelled ctx stops the bootstrap within a replicate per worker and
// returns context.Cause(ctx).
func Optimism(ctx context.Context, pr Problem, opt Options) (*Result, error) {
	if pr.N <= 0 || len(pr.X) != pr.N*pr.P || len(pr.Y) != pr.N || len(pr.Coef) != pr.P {
		return nil, errors.New("resample: inconsistent problem")
	}
	if opt.B < 1 {
		return nil, errors.New("resample: B must be at least 1")
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	if opt.ICIDelta <= 0 {
		opt.ICIDelta = 0.1
	}
	res := &Result{B: opt.B, Seed: opt.Seed, Reasons: map[string]int{}, ICIDelta: opt.ICIDelta}
	ws := newWorkspace(pr)
	lp, dev := ws.predict(pr, pr.Coef)
	app, err := ws.measures(pr, lp, ws.order.order(ws.p), nil, dev, opt.ICIDelta, false)
	if err != nil {
		return nil, fmt.Errorf("resample: measuring the full fit: %w", err)
	}
	res.Apparent = app
	// Every refit starts from pr.Coef: its first pass reads the rows'
	// linear predictor and exponential there, shared by the workers.
	start := logistic.NewStartRows(data(pr, nil), pr.Coef)

	type outcome struct {
		diff   Measures
		reason string
		drawn  []int32
	}
	outs := make([]outcome, opt.B)
	next := feed(ctx, opt.B)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	logged := 0
	var logErr error
	flushLog := func() {
		// Lines are written in replicate order as soon as they are ready.
		for logged < opt.B && outs[logged].drawn != nil {
			if logErr == nil {
				logErr = writeLogLine(opt.Log, outs[logged].drawn)
			}
			outs[logged].drawn = nil
			logged++
		}
	}
	for w := 0; w < opt.Workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			ws := newWorkspace(pr)
			for b := range next {
				drawn := ws.draw(opt.Seed, b, opt.Log != nil)
				d, err := ws.replicate(pr, start, opt.ICIDelta)
				mu.Lock()
				if err != nil {
					outs[b].reason = reason(err)
				} else {
					outs[b].diff = d
				}
				if opt.Log != nil {
					outs[b].drawn = drawn
					flushLog()
				}
				done++
				if opt.Progress != nil {
					opt.Progress(done)
				}
				mu.Unlock()
			}
		}()
	}
	wg.Wait()
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	if logErr != nil {
		return nil, fmt.Errorf("resample: writing the resample log: %w", logErr)
	}
	var sum Measures
	ok := 0
	for _, o := range outs {
		if o.reason != "" {
			res.Failed++
			res.Reasons[o.reason]++
			continue
		}
		ok++
		d := o.diff
		sum = Measures{sum.AUC + d.AUC, sum.Slope + d.Slope, sum.CITL + d.CITL, sum.Brier + d.Brier,
			sum.ScaledBrier + d.ScaledBrier, sum.R2 + d.R2, sum.ICI + d.ICI}
	}
	if ok == 0 {
		return nil, fmt.Errorf("resample: all %d replicates failed (%v)", opt.B, res.Reasons)
	}
	k := float64(ok)
	res.Optimism = Measures{sum.AUC / k, sum.Slope / k, sum.CITL / k, sum.Brier / k, sum.ScaledBrier / k, sum.R2 / k, sum.ICI / k}
	res.Corrected = res.Apparent.sub(res.Optimism)
	return res, nil
}

func reason(err error) string {
	var se *logistic.SeparationError
	var ce *logistic.CollinearError
	switch {
	case errors.As(err, &se):
		return "separation"
	case errors.Is(err, logistic.ErrNotConverged):
		// Before the collinear case: iterations that stopped on a
		// singular step wrap that step's error.
		return "no convergence"
	case errors.As(err, &ce):
		return "a term without variation in the sample"
	}
	return "other: " + err.Error()
}

func writeLogLine(w io.Writer, drawn []int32) error {
	buf := make([]byte, 0, 8*len(drawn))
	for i, v := range drawn {
		if i > 0 {
			buf = append(buf, ',')
		}
		buf = strconv.AppendInt(buf, int64(v), 10)
	}
	buf = append(buf, '\n')
	_, err := w.Write(buf)
	return err
}

// Stream returns the random stream of replicate b: a PCG generator whose
// two words are the seed and the replicate number, so that a replicate's
// draws depend on nothing else.
func Stream(seed uint64, b int) *rand.Rand {
	return rand.New(rand.NewPCG(seed, uint64(b)*0x9E3779B97F4A7C15+1))
}

// workspace holds one worker's buffers, reused across replicates.
type workspace struct {
	counts []float64
	rows   []int32 // the rows drawn at least once, ascending
	drawn  []int32
	lp     []float64
	p, z   []float64 // risks of lp and e^−|lp|
	ps, ys []float64 // sorted by risk (original rows, or the sample expanded), 4 spare
	// nullDev is −2 log-likelihood of the event rate on the original rows.
	nullDev float64
	order   riskOrder
	smooth  metrics.LowessWorkspace
	calib   metrics.CalibrationWorkspace
	fit     logistic.Workspace
}

func newWorkspace(pr Problem) *workspace {
	n := pr.N
	return &workspace{counts: make([]float64, n), rows: make([]int32, n), drawn: make([]int32, n), lp: make([]float64, n),
		p: make([]float64, n), z: make([]float64, n), ps: make([]float64, n+4), ys: make([]float64, n+4),
		nullDev: metrics.NullDeviance(pr.Y, nil)}
}

// draw fills the counts of replicate b and returns the indices drawn
// (a fresh slice when keep is set).
func (ws *workspace) draw(seed uint64, b int, keep bool) []int32 {
	r := Stream(seed, b)
	n := len(ws.counts)
	for i := range ws.counts {
		ws.counts[i] = 0
	}
	for k := 0; k < n; k++ {
		i := r.IntN(n)
		ws.counts[i]++
		ws.drawn[k] = int32(i)
	}
	// The rows drawn, without a branch on each row's count.
	rows := ws.rows[:cap(ws.rows)]
	m := 0
	for i, c := range ws.counts {
		rows[m] = int32(i)
		if c != 0 {
			m++
		}
	}
	ws.rows = rows[:m]
	if !keep {
		return nil
	}
	return append([]int32(nil), ws.drawn...)
}

func data(pr Problem, w []float64) logistic.Data {
	return logistic.Data{X: pr.X, N: pr.N, P: pr.P, Y: pr.Y, Weights: w, Offset: pr.Offset}
}

// replicate refits on the current counts and returns apparent − test.
// start holds the rows' linear predictor at pr.Coef and its exponential.
func (ws *workspace) replicate(pr Problem, start *logistic.StartRows, delta float64) (Measures, error) {
	d := data(pr, ws.counts)
	d.Rows = ws.rows
	fit, err := logistic.Fit(d, logistic.Options{Start: pr.Coef, Firth: pr.Firth, Workers: 1,
		StartRows: start, CoefOnly: true, Workspace: &ws.fit})
	if err != nil {
		return Measures{}, err
	}
	lp, dev := ws.predict(pr, fit.Coef)
	order := ws.order.order(ws.p)
	// A maximum-likelihood fit with an intercept and no offset has
	// calibration-in-the-large 0 and slope 1 on its own sample.
	app, err := ws.measures(pr, lp, order, ws.counts, fit.Deviance, delta, !pr.Firth && pr.Offset == nil)
	if err != nil {
		return Measures{}, err
	}
	test, err := ws.measures(pr, lp, order, nil, dev, delta, false)
	if err != nil {
		return Measures{}, err
	}
	return app.sub(test), nil
}

// predict sets the linear predictor of beta (ws.lp, returned) and its
// risks (ws.p, with e^−|η| in ws.z) on the original rows and returns −2 log-likelihood there,
// one exponential per row serving both (logistic.Data.Predict: the
// values of LinearPredictor, Expit and Deviance).
func (ws *workspace) predict(pr Problem, beta []float64) ([]float64, float64) {
	dev := data(pr, nil).Predict(beta, ws.lp, ws.p, ws.z)
	return ws.lp, dev
}

// measures measures linear predictor lp (with risks ws.p, rows in risk
// order) on the rows counted w times (nil: once each); dev is −2
// log-likelihood of the model on those rows. fitted says that the model
// was fitted to these rows by maximum likelihood with an intercept: its
// score equations then make calibration-in-the-large exactly 0 and the
// calibration slope exactly 1, so they are not fitted again.
func (ws *workspace) measures(pr Problem, lp []float64, order []int32, w []float64, dev, delta float64, fitted bool) (Measures, error) {
	k := ws.expand(pr.Y, order, w)
	ps, ys := ws.ps[:k], ws.ys[:k]
	var m Measures
	m.AUC = metrics.AUCValue(metrics.AsSorted(ys, ps))
	if fitted {
		m.CITL, m.Slope = 0, 1
	} else {
		var err error
		// Each bootstrap worker is one goroutine: the fit stays on it.
		if m.CITL, m.Slope, err = ws.calib.WeightedRisks(pr.Y, lp, ws.p, ws.z, w, 1); err != nil {
			return m, err
		}
	}
	if w != nil {
		m.Brier, m.ScaledBrier = metrics.BrierWeighted(pr.Y, ws.p, w)
	} else {
		m.Brier, m.ScaledBrier = metrics.Brier(pr.Y, ws.p)
	}
	nullDev := ws.nullDev
	if w != nil {
		nullDev = metrics.NullDeviance(pr.Y, w)
	}
	m.R2 = metrics.Nagelkerke(dev, nullDev, k)
	m.ICI = ici(&ws.smooth, ys, ps, delta)
	return m, nil
}

// expand writes the risks ws.p and outcomes y of the rows in order into
// ws.ps and ws.ys, each row repeated as often as w counts it (once each
// when w is nil), and returns how many it wrote. A row counted at most 4
// times is written 4 times without a branch on its count, the places
// past its count then overwritten by the rows after it (hence the 4
// spare places of ws.ps and ws.ys).
func (ws *workspace) expand(y []float64, order []int32, w []float64) int {
	ps, ys := ws.ps, ws.ys
	if w == nil {
		for r, i := range order {
			ps[r], ys[r] = ws.p[i], y[i]
		}
		return len(order)
	}
	k := 0
	for _, i := range order {
		c := int(w[i])
		v, o := ws.p[i], y[i]
		if c <= 4 {
			q, t := ps[k:k+4:k+4], ys[k:k+4:k+4]
			q[0], q[1], q[2], q[3] = v, v, v, v
			t[0], t[1], t[2], t[3] = o, o, o, o
		} else {
			for j := k; j < k+c; j++ {
				ps[j], ys[j] = v, o
			}
		}
		k += c
	}
	return k
}

// ici is the ICI of risks ps (sorted) against outcomes ys, with LOWESS at
// span 0.75 and δ = delta × the range of ps, on one goroutine in the
// buffers of lw (the smooth's fit alone, without its standard errors),
// from the smooth clipped to [0, 1] as in
// metrics.FlexibleCalibration.
func ici(lw *metrics.LowessWorkspace, ys, ps []float64, delta float64) float64 {
	d := delta * (ps[len(ps)-1] - ps[0])
	fit := lw.LowessFit(ps, ys, metrics.LowessOptions{Span: 0.75, Delta: d})
	metrics.ClipRisks(fit)
	s := 0.0
	for i, v := range ps {
		s += math.Abs(v - fit[i])
	}
	return s / float64(len(ps))
}
