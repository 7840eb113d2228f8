package audit

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/report"
)

// CheckOutputDir refuses an output folder that exists and is not a
// folder, with a *ConfigError. A caller checks it before a long run.
func CheckOutputDir(dir string) error {
	if st, err := os.Stat(dir); err == nil && !st.IsDir() {
		return configErrorf("--out %s is a file, not a folder", dir)
	}
	return nil
}

// Write writes the audit into dir (created if absent): report.md,
// audit.json and the figures, with the result's further files at their
// own paths, all or nothing.
func Write(dir string, r *Result) error {
	if err := CheckOutputDir(dir); err != nil {
		return err
	}
	js, err := jsonout.Marshal(r.Audit)
	if err != nil {
		return fmt.Errorf("writing audit.json: %w", err)
	}
	var md bytes.Buffer
	if err := report.Write(&md, r.Audit, r.Figures); err != nil {
		return err
	}
	var files []atomicfile.File
	for _, f := range r.Figures {
		files = append(files, atomicfile.File{Path: filepath.Join(dir, f.Name), Data: f.SVG})
	}
	files = append(files, atomicfile.File{Path: filepath.Join(dir, "audit.json"), Data: js},
		atomicfile.File{Path: filepath.Join(dir, "report.md"), Data: md.Bytes()})
	files = append(files, r.Files...)
	return atomicfile.WriteAll(dir, files)
}

// CheckAuditDate refuses a date that is not a calendar date written
// YYYY-MM-DD (2026-02-30 and 2026-13-01 are refused), with a
// *ConfigError.
func CheckAuditDate(date string) error {
	if t, err := time.Parse(time.DateOnly, date); err != nil || t.Format(time.DateOnly) != date {
		return configErrorf("--audit-date %q: give a date as YYYY-MM-DD", date)
	}
	return nil
}

// RecordHistory appends the audit's summary, and its whole audit.json,
// to the history store at path, as the audit of the cohort of date
// (YYYY-MM-DD; empty: the day the audit started), recorded at the time
// the audit started.
func RecordHistory(path, date string, r *Result) error {
	a, started := r.Audit, r.Started
	if date == "" {
		date = started.Format("2006-01-02")
	}
	if err := CheckAuditDate(date); err != nil {
		return err
	}
	js, err := jsonout.Marshal(a)
	if err != nil {
		return err
	}
	rec := history.Record{AuditDate: date, RecordedAt: started.Format(time.RFC3339), Model: a.Model.Name,
		Rows: a.Cohort.Rows, Used: a.Cohort.Used, Events: a.Cohort.Events, Expected: a.Calibration.Expected,
		AUC:   [3]float64{a.Discrimination.AUC, a.Discrimination.CI[0], a.Discrimination.CI[1]},
		OE:    [3]float64{a.Calibration.OE, a.Calibration.OECI[0], a.Calibration.OECI[1]},
		Slope: [3]float64{a.Calibration.Slope, a.Calibration.SlopeCI[0], a.Calibration.SlopeCI[1]},
		CITL:  [3]float64{a.Calibration.CITL, a.Calibration.CITLCI[0], a.Calibration.CITLCI[1]},
		ICI:   a.Calibration.ICI, Brier: a.Overall.Brier, Verdict: a.Verdict.Status, JSON: string(js)}
	for _, in := range a.Provenance.Inputs {
		switch in.Role {
		case "model":
			rec.ModelSHA = in.SHA256
		case "cohort":
			rec.Cohort, rec.CohortSHA = in.Path, in.SHA256
		}
	}
	if err := history.Append(path, rec); err != nil {
		return fmt.Errorf("recording the audit in %s: %w", path, err)
	}
	return nil
}
