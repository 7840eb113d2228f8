package plots

import (
	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/validate"
)

// MonitorCharts draws the three figures of Monitor that need only the
// charts — the cumulative expected − observed curve, the CUSUMs and the
// EWMA, in Monitor's order and as Monitor draws them — so that an audit
// can draw them before its summary and criteria are known. r's overall
// period is not read.
func MonitorCharts(r *monitor.Result) ([]Figure, error) {
	return drawMonitor(monitorMakers(r, nil, nil)[1:])
}

// MonitorPeriods draws Monitor's first figure, calibration and
// discrimination by period, from the summary (its overall period the
// reference line) and the criteria's bounds.
func MonitorPeriods(s *monitor.Summary, criteria []validate.Criterion) (Figure, error) {
	figs, err := drawMonitor(monitorMakers(nil, s, criteria)[:1])
	if err != nil {
		return Figure{}, err
	}
	return figs[0], nil
}
