package audit

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/internal/pathtext"
	"github.com/riskaudit/riskaudit/internal/textsafe"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/trend"
	"github.com/riskaudit/riskaudit/validate"
)

// HistoryError is a history store that does not exist or cannot be
// read: bad input.
type HistoryError struct {
	Path string
	Err  error
}

// Error names the store and what is wrong with it.
func (e *HistoryError) Error() string {
	if os.IsNotExist(e.Err) {
		return pathtext.Path(e.Path) + ": no such history store"
	}
	return e.Err.Error()
}

// Unwrap returns the underlying error.
func (e *HistoryError) Unwrap() error { return e.Err }

// Trend is the trend of the audits recorded in a history store, with
// its charts.
type Trend struct {
	// Source is the store's path; Records its audits in date order (of
	// the model selected, when one was).
	Source  string
	Records []history.Record
	Trend   *trend.Trend
	Figures []plots.Figure
	// Model is the selection the trend was read with (TrendOptions).
	Model string
	// Made is when the trend was read, by the clock of the options.
	Made time.Time
}

// TrendOptions say which audits a trend shows.
type TrendOptions struct {
	// Model, when set, keeps the audits of the models of that name, or
	// of the model whose SHA-256 starts with it (six hex digits or more);
	// empty shows every model, each as its own series.
	Model string
	// Clock gives the time (nil: now, UTC).
	Clock func() time.Time
}

// ReadTrend reads the audits in the history store at path and builds
// the trend (a series per model, the dates a new model entered, O/E
// control limits and each series' first audit outside them) and its
// charts. The store is only read. A Model that matches no audit is a
// *ConfigError listing the models the store holds.
func ReadTrend(path string, o TrendOptions) (*Trend, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, &HistoryError{Path: path, Err: err}
	}
	recs, err := history.Read(path)
	if err != nil {
		return nil, &HistoryError{Path: path, Err: err}
	}
	if o.Model != "" {
		if recs, err = trend.Select(recs, o.Model); err != nil {
			var se *trend.SelectError
			if errors.As(err, &se) {
				return nil, &ConfigError{Msg: "--model: " + err.Error(), Err: err}
			}
			return nil, err
		}
	}
	tr, err := trend.Build(recs)
	if err != nil {
		return nil, &HistoryError{Path: path, Err: fmt.Errorf("history %s: %w", path, err)}
	}
	figs, err := plots.Trend(tr)
	if err != nil {
		return nil, err
	}
	return &Trend{Source: path, Records: recs, Trend: tr, Figures: figs, Model: o.Model, Made: now(o.Clock)}, nil
}

// WriteTrend writes trend.md, trend.html, trend.json and the charts into dir
// (created if absent), whole and all or nothing, with the rules of
// Write.
func WriteTrend(dir string, t *Trend) (*Written, error) {
	var md bytes.Buffer
	if err := report.WriteTrend(&md, t.Trend, t.Source, t.Figures); err != nil {
		return nil, fmt.Errorf("writing trend.md: %w", err)
	}
	js, err := jsonout.Marshal(TrendJSON(t))
	if err != nil {
		return nil, fmt.Errorf("writing trend.json: %w", err)
	}
	// A cohort's level or name with invalid UTF-8 or a control
	// character is shown as U+FFFD, so the Markdown and the page are
	// valid UTF-8 (textsafe).
	text := textsafe.XML(md.Bytes())
	page, err := htmlPage("trend.html", text, t.Figures)
	if err != nil {
		return nil, err
	}
	files := []atomicfile.File{{Path: "trend.md", Data: text}, page, {Path: "trend.json", Data: js}}
	for _, f := range t.Figures {
		files = append(files, atomicfile.File{Path: f.Name, Data: f.SVG})
		if len(f.PNG) > 0 { // every figure drawn by plots has its PNG copy
			files = append(files, atomicfile.File{Path: f.PNGName(), Data: f.PNG})
		}
	}
	return (&folderWrite{dir: dir, kind: "trend", written: t.Made, files: files, inputs: []string{t.Source}}).write()
}

// TrendSchema names the layout of trend.json.
const TrendSchema = "riskaudit.trend/1"

// TrendDoc is trend.json: the trend's models and every audit on it, each
// naming the model it measured.
type TrendDoc struct {
	Schema  string        `json:"schema"`
	History string        `json:"history"`
	Made    string        `json:"made_at"`
	Select  string        `json:"model_selected,omitempty"`
	Models  []TrendModel  `json:"models"`
	Changes []TrendChange `json:"model_changes"`
	Audits  []TrendAudit  `json:"audits"`
	// Limits says how the O/E control limits are made.
	Limits  string `json:"control_limits"`
	Caution string `json:"caution"`
}

// TrendModel is one series of the trend: a model.
type TrendModel struct {
	Series int    `json:"series"`
	Name   string `json:"name"`
	SHA256 string `json:"sha256"`
	// ParentSHA256 is the model it updates, and ParentSeries that
	// model's series in this trend (null when the trend has none).
	ParentSHA256 string `json:"parent_sha256,omitempty"`
	ParentSeries *int   `json:"parent_series"`
	Audits       int    `json:"audits"`
	First        string `json:"first_audit_date"`
	Last         string `json:"last_audit_date"`
	// FirstOutside is the date of its first audit whose O/E lies outside
	// the 99.8% limits (null: none), and FirstOutsideRecord its record.
	FirstOutside       *string `json:"first_outside_998_date"`
	FirstOutsideRecord *int64  `json:"first_outside_998_record"`
	// FirstAlarm is the date of its first audit whose charts in date
	// order signalled (null: none), and FirstAlarmRecord its record.
	FirstAlarm       *string `json:"first_alarm_date"`
	FirstAlarmRecord *int64  `json:"first_alarm_record"`
}

// TrendChange is a date where a new model entered.
type TrendChange struct {
	Date   string `json:"date"`
	Series int    `json:"series"`
	Before int    `json:"series_before"`
	Record int64  `json:"record"`
}

// TrendAudit is one audit on the trend.
type TrendAudit struct {
	Record      int64                `json:"record"`
	Date        string               `json:"audit_date"`
	RecordedAt  string               `json:"recorded_at"`
	Series      int                  `json:"series"`
	Model       string               `json:"model"`
	ModelSHA256 string               `json:"model_sha256"`
	Cohort      string               `json:"cohort"`
	CohortSHA   string               `json:"cohort_sha256"`
	Patients    int                  `json:"patients"`
	Events      int                  `json:"events"`
	Expected    float64              `json:"expected"`
	AUC         [3]float64           `json:"auc"`
	OE          [3]float64           `json:"oe"`
	Slope       [3]float64           `json:"slope"`
	CITL        [3]float64           `json:"citl"`
	Limits95    [2]float64           `json:"oe_limits_95"`
	Limits998   [2]float64           `json:"oe_limits_998"`
	Outside     bool                 `json:"oe_outside_998"`
	Verdict     string               `json:"verdict"`
	Criteria    *[]history.Criterion `json:"criteria"`
	// Alarms is the alarm state of the audit's charts in date order, as
	// recorded with it (absent for an audit without them).
	Alarms *history.Alarms `json:"alarms,omitempty"`
	Alarm  bool            `json:"alarm"`
}

// TrendJSON is the trend as trend.json holds it.
func TrendJSON(t *Trend) *TrendDoc {
	tr := t.Trend
	d := &TrendDoc{Schema: TrendSchema, History: t.Source, Made: t.Made.UTC().Format(timeFormat), Select: t.Model,
		Models: []TrendModel{}, Changes: []TrendChange{}, Audits: []TrendAudit{},
		Limits:  "funnel-type limits for O/E: 1 ± z/√E, z = 1.96 (95%) and 3.09 (99.8%), E the audit's expected events (Spiegelhalter 2005, normal approximation)",
		Caution: validate.Caution}
	for i, s := range tr.Series {
		m := TrendModel{Series: i + 1, Name: s.Model.Name, SHA256: s.Model.SHA256, ParentSHA256: s.ParentSHA, Audits: len(s.Points),
			First: tr.Points[s.Points[0]].Date, Last: tr.Points[s.Points[len(s.Points)-1]].Date}
		if s.Parent >= 0 {
			p := s.Parent + 1
			m.ParentSeries = &p
		}
		if s.FirstOutside >= 0 {
			pt := tr.Points[s.FirstOutside]
			date, id := pt.Date, pt.Record.ID
			m.FirstOutside, m.FirstOutsideRecord = &date, &id
		}
		if s.FirstAlarm >= 0 {
			pt := tr.Points[s.FirstAlarm]
			date, id := pt.Date, pt.Record.ID
			m.FirstAlarm, m.FirstAlarmRecord = &date, &id
		}
		d.Models = append(d.Models, m)
	}
	for _, c := range tr.Changes {
		pt := tr.Points[c.Point]
		d.Changes = append(d.Changes, TrendChange{Date: pt.Date, Series: c.Series + 1, Before: c.Before + 1, Record: pt.Record.ID})
	}
	for _, p := range tr.Points {
		r := p.Record
		a := TrendAudit{Record: r.ID, Date: r.AuditDate, RecordedAt: r.RecordedAt, Series: p.Series + 1, Model: r.Model, ModelSHA256: r.ModelSHA,
			Cohort: r.Cohort, CohortSHA: r.CohortSHA, Patients: r.Used, Events: r.Events, Expected: r.Expected,
			AUC: r.AUC, OE: r.OE, Slope: r.Slope, CITL: r.CITL, Limits95: p.Limit95, Limits998: p.Limit998, Outside: p.Outside, Verdict: r.Verdict,
			Alarms: r.Alarms, Alarm: p.Alarm}
		if r.Criteria != nil {
			c := r.Criteria
			a.Criteria = &c
		}
		d.Audits = append(d.Audits, a)
	}
	return d
}
