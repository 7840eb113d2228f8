package main

import (
	"fmt"
	"regexp"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/validate"
)

var datePattern = regexp.MustCompile(`^\d{4}-\d{2}-\d{2}$`)

// recordHistory appends the audit's summary to the history store.
func recordHistory(o *auditOptions, a *validate.Audit, started time.Time) error {
	date := o.auditDate
	if date == "" {
		date = started.Format("2006-01-02")
	}
	if !datePattern.MatchString(date) {
		return usagef("--audit-date %q: give YYYY-MM-DD", date)
	}
	js, err := jsonout.Marshal(a)
	if err != nil {
		return err
	}
	r := history.Record{AuditDate: date, RecordedAt: started.Format(time.RFC3339), Model: a.Model.Name,
		Rows: a.Cohort.Rows, Used: a.Cohort.Used, Events: a.Cohort.Events, Expected: a.Calibration.Expected,
		AUC:   [3]float64{a.Discrimination.AUC, a.Discrimination.CI[0], a.Discrimination.CI[1]},
		OE:    [3]float64{a.Calibration.OE, a.Calibration.OECI[0], a.Calibration.OECI[1]},
		Slope: [3]float64{a.Calibration.Slope, a.Calibration.SlopeCI[0], a.Calibration.SlopeCI[1]},
		CITL:  [3]float64{a.Calibration.CITL, a.Calibration.CITLCI[0], a.Calibration.CITLCI[1]},
		ICI:   a.Calibration.ICI, Brier: a.Overall.Brier, Verdict: a.Verdict.Status, JSON: string(js)}
	for _, in := range a.Provenance.Inputs {
		switch in.Role {
		case "model":
			r.ModelSHA = in.SHA256
		case "cohort":
			r.Cohort, r.CohortSHA = in.Path, in.SHA256
		}
	}
	if err := history.Append(o.history, r); err != nil {
		return fmt.Errorf("recording the audit in %s: %w", o.history, err)
	}
	return nil
}
