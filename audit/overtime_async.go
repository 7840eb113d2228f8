package audit

import (
	"context"

	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/plots"
)

// datedJob charts a scored cohort in date order on its own goroutine,
// started as soon as the cohort is scored, beside the measures: the
// limit simulation and the single passes need only the risks and
// outcomes in date order, and three of the four figures (the cumulative
// curve, the CUSUMs, the EWMA) only the charts. What needs the measures
// (the overall period, the summary, the alarms as criteria, the period
// figure with the plan's bounds) is done by the audit when it reaches
// them, from the same charts, so the result is that of charting after
// the measures.
type datedJob struct {
	// sc is the cohort charted.
	sc *scored
	// charted is closed when charts is set.
	charted chan struct{}
	charts  *datedCharts
	// drawn is closed when figs and figErr are set: the cumulative
	// curve, the CUSUMs and the EWMA (plots.MonitorCharts), in the
	// order plots.Monitor gives them; none when the charts failed or
	// the audit was cancelled.
	drawn  chan struct{}
	figs   []plots.Figure
	figErr error
}

// startOverTime starts the dated job on the audited cohort when the
// Config asks for the charts and the options are valid (otherwise the
// audit reports the error when it reaches the charts). A cancelled ctx
// (the audit has returned) stops the limit simulation and skips the
// figures.
func (r *run) startOverTime(ctx context.Context) {
	c := r.cfg
	if c.OverTime.DateColumn == "" || r.cur == nil || r.cur.dates == nil || c.OverTime.check() != nil {
		return
	}
	j := &datedJob{sc: r.cur, charted: make(chan struct{}), drawn: make(chan struct{})}
	r.dated = j
	go func() {
		defer close(j.drawn)
		j.charts = chartDates(ctx, c, j.sc)
		close(j.charted)
		if j.charts.err != nil || ctx.Err() != nil {
			return
		}
		j.figs, j.figErr = plots.MonitorCharts(j.charts.res)
	}()
}

// monitorFigures draws the four figures in date order, each as
// plots.Monitor draws it: the period figure here, the other three taken
// from the dated job when it drew them.
func (r *run) monitorFigures(a *monitor.Summary) ([]plots.Figure, error) {
	if !r.datedUsed {
		return plots.Monitor(r.monitor, a, r.criteria)
	}
	per, err := plots.MonitorPeriods(a, r.criteria)
	<-r.dated.drawn
	if err != nil {
		return nil, err
	}
	if r.dated.figErr != nil {
		return nil, r.dated.figErr
	}
	return append([]plots.Figure{per}, r.dated.figs...), nil
}
