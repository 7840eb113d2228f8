package main

import (
	"math"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/monitor"
)

// overTimeFlags are the flags of the cohort in date order.
func (o *auditOptions) overTimeFlags(f *pflag.FlagSet) {
	ot := &o.cfg.OverTime
	f.StringVar(&ot.DateColumn, "date-column", "", "chart the cohort in date order by this column (YYYY-MM-DD): calibration by period, cumulative expected − observed, CUSUM and EWMA charts with their alarms")
	f.StringVar(&o.period, "period", "month", "with --date-column: periods of the calibration by period: month, quarter, or a number of patients a block")
	f.Float64Var(&ot.ARL, "cusum-arl", monitor.DefaultARL, "with --date-column: in-control average run length (patients) the CUSUM limits are simulated for")
	f.StringVar(&o.cusumOdds, "cusum-odds", "2,0.5", "with --date-column: odds ratios the two CUSUMs look for, deterioration (above 1) and improvement (below 1)")
	f.Float64Var(&ot.Lambda, "ewma-lambda", monitor.DefaultLambda, "with --date-column: weight of each patient in the EWMA, in (0, 1]")
	f.Float64Var(&ot.Width, "ewma-width", monitor.DefaultEWMAWidth, "with --date-column: EWMA control limits at this many exact standard deviations")
}

// overTime reads the flags of the cohort in date order into the Config's
// OverTime.
func (o *auditOptions) overTime() (audit.OverTime, error) {
	ot := o.cfg.OverTime
	if ot.DateColumn == "" {
		return ot, nil
	}
	switch o.period {
	case "month", "quarter":
		ot.Period = o.period
	default:
		n, err := strconv.Atoi(o.period)
		if err != nil || n < 2 {
			return ot, usagef("--period %s: give month, quarter or a number of patients a block (at least 2)", o.period)
		}
		ot.Period, ot.PeriodSize = "block", n
	}
	odds := strings.Split(o.cusumOdds, ",")
	if len(odds) != 2 {
		return ot, usagef("--cusum-odds %s: give two odds ratios, deterioration and improvement, such as 2,0.5", o.cusumOdds)
	}
	var err error
	if ot.Deterioration, err = strconv.ParseFloat(strings.TrimSpace(odds[0]), 64); err != nil || !(ot.Deterioration > 1) {
		return ot, usagef("--cusum-odds %s: the deterioration odds ratio must be a number above 1", o.cusumOdds)
	}
	if ot.Improvement, err = strconv.ParseFloat(strings.TrimSpace(odds[1]), 64); err != nil || !(ot.Improvement > 0 && ot.Improvement < 1) {
		return ot, usagef("--cusum-odds %s: the improvement odds ratio must be a number between 0 and 1", o.cusumOdds)
	}
	if !(ot.ARL >= 10) {
		return ot, usagef("--cusum-arl %g: give at least 10 patients", ot.ARL)
	}
	if !(ot.Lambda > 0 && ot.Lambda <= 1) {
		return ot, usagef("--ewma-lambda %g: give a weight in (0, 1]", ot.Lambda)
	}
	if !(ot.Width > 0) || math.IsInf(ot.Width, 0) {
		return ot, usagef("--ewma-width %g: give a positive number of standard deviations", ot.Width)
	}
	return ot, nil
}
