package monitor

import (
	"context"
	"fmt"
)

// Options set a monitoring run; zero fields take the defaults.
type Options struct {
	// Deterioration and Improvement are the CUSUMs' odds ratios (default
	// 2 and 1/2, as in Steiner et al. 2000).
	Deterioration, Improvement float64
	// Limits sets the simulation of the alarm limits.
	Limits LimitOptions
	// Lambda and Width are the EWMA's weight and limit width (defaults
	// DefaultLambda and DefaultEWMAWidth).
	Lambda, Width float64
	// Periods groups patients for calibration by period (default: months
	// with dates, blocks of 500 without).
	Periods Periods
	// Overall, when given, is the measure of every patient together that
	// the caller has already (an audit whose charts left no row out);
	// otherwise Run measures it.
	Overall *Period
}

// Chart is one risk-adjusted CUSUM with its limit and signals.
type Chart struct {
	Name  string `json:"name"`
	Limit Limit  `json:"limit"`
	// Path is the CUSUM without restarts (one value a patient), and
	// Restarted the chart restarted at zero after each signal.
	Path, Restarted []float64 `json:"-"`
	// Signals are the 0-based patients at which the chart, restarted at
	// zero after each signal, reached h.
	Signals []int `json:"-"`
}

// First is the first signal (0-based patient), −1 for none.
func (c Chart) First() int {
	if len(c.Signals) == 0 {
		return -1
	}
	return c.Signals[0]
}

// Result is a monitoring run over one extract in date order.
type Result struct {
	N       int
	Dates   Dates // nil without dates
	VLAD    []float64
	Charts  []Chart
	EWMA    EWMA
	Periods []Period
	Per     Periods
	// Overall is every charted patient measured together, the reference
	// line of the period chart.
	Overall Period
}

// Run computes every chart of the patients y, p (in date order; dates
// beside them, or nil): Charts, then the overall period (opt.Overall, or
// every patient measured together).
func Run(ctx context.Context, y, p []float64, dates Dates, opt Options) (*Result, error) {
	r, err := Charts(ctx, y, p, dates, opt)
	if err != nil {
		return nil, err
	}
	r.SetOverall(y, p, opt.Overall)
	return r, nil
}

// SetOverall sets the result's overall period: o when given (the
// caller's own measures of the same patients), otherwise every patient
// of y, p measured together.
func (r *Result) SetOverall(y, p []float64, o *Period) {
	if o != nil {
		r.Overall = *o
		return
	}
	r.Overall = measure(y, p, "all", 0)
}

// Charts computes every chart of Run but the overall period, which it
// leaves zero (see SetOverall); it needs nothing but the patients, so a
// caller can start it before its own measures of them are done. The
// limit simulation runs beside the single passes (the cumulative curve,
// the EWMA and the periods), which take one core between them; the
// results are those of computing them one after another.
func Charts(ctx context.Context, y, p []float64, dates Dates, opt Options) (*Result, error) {
	if err := checkSeries(y, p); err != nil {
		return nil, err
	}
	if len(y) == 0 {
		return nil, fmt.Errorf("monitor: no patients")
	}
	if opt.Deterioration == 0 {
		opt.Deterioration = 2
	}
	if opt.Improvement == 0 {
		opt.Improvement = 0.5
	}
	if !(opt.Deterioration > 1) {
		return nil, fmt.Errorf("monitor: the deterioration odds ratio %v must be above 1", opt.Deterioration)
	}
	if !(opt.Improvement > 0 && opt.Improvement < 1) {
		return nil, fmt.Errorf("monitor: the improvement odds ratio %v must be between 0 and 1", opt.Improvement)
	}
	if opt.Lambda == 0 {
		opt.Lambda = DefaultLambda
	}
	if opt.Width == 0 {
		opt.Width = DefaultEWMAWidth
	}
	if opt.Periods.Kind == "" {
		opt.Periods = Periods{Kind: "month"}
		if dates == nil {
			opt.Periods = Periods{Kind: "block", Block: 500}
		}
	}
	r := &Result{N: len(y), Dates: dates, Per: opt.Periods}
	// The single passes on their own goroutine, beside the simulation;
	// errors are returned in the order of the steps (cumulative curve,
	// limits, EWMA, periods).
	var vladErr, ewmaErr, perErr error
	done := make(chan struct{})
	go func() {
		defer close(done)
		if r.VLAD, vladErr = VLAD(y, p); vladErr != nil {
			return
		}
		if r.EWMA, ewmaErr = ComputeEWMA(y, p, opt.Lambda, opt.Width); ewmaErr != nil {
			return
		}
		r.Periods, perErr = ByPeriod(y, p, dates, opt.Periods)
	}()
	rs := []float64{opt.Deterioration, opt.Improvement}
	lims, limErr := ChooseLimits(ctx, p, rs, opt.Limits)
	<-done
	for _, err := range []error{vladErr, limErr, ewmaErr, perErr} {
		if err != nil {
			return nil, err
		}
	}
	for i, name := range []string{"deterioration", "improvement"} {
		c := Chart{Name: name, Limit: lims[i]}
		c.Path, c.Restarted, c.Signals = cusumPaths(y, p, rs[i], lims[i].H)
		r.Charts = append(r.Charts, c)
	}
	return r, nil
}
