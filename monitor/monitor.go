package monitor

import (
	"context"
	"fmt"
	"time"
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
	Dates   []time.Time
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
// beside them, or nil).
func Run(ctx context.Context, y, p []float64, dates []time.Time, opt Options) (*Result, error) {
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
	var err error
	if r.VLAD, err = VLAD(y, p); err != nil {
		return nil, err
	}
	rs := []float64{opt.Deterioration, opt.Improvement}
	lims, err := ChooseLimits(ctx, p, rs, opt.Limits)
	if err != nil {
		return nil, err
	}
	for i, name := range []string{"deterioration", "improvement"} {
		c := Chart{Name: name, Limit: lims[i]}
		c.Path, c.Restarted, c.Signals = cusumPaths(y, p, rs[i], lims[i].H)
		r.Charts = append(r.Charts, c)
	}
	if r.EWMA, err = ComputeEWMA(y, p, opt.Lambda, opt.Width); err != nil {
		return nil, err
	}
	if r.Periods, err = ByPeriod(y, p, dates, opt.Periods); err != nil {
		return nil, err
	}
	if opt.Overall != nil {
		r.Overall = *opt.Overall
	} else {
		r.Overall = measure(y, p, "all", 0)
	}
	return r, nil
}
