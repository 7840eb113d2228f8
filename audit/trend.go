package audit

import (
	"bytes"
	"fmt"
	"os"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/trend"
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
		return e.Path + ": no such history store"
	}
	return e.Err.Error()
}

// Unwrap returns the underlying error.
func (e *HistoryError) Unwrap() error { return e.Err }

// Trend is the trend of the audits recorded in a history store, with
// its charts.
type Trend struct {
	// Source is the store's path; Records its audits in date order.
	Source  string
	Records []history.Record
	Trend   *trend.Trend
	Figures []plots.Figure
	// Made is when the trend was read, by the clock given to ReadTrend.
	Made time.Time
}

// ReadTrend reads every audit in the history store at path and builds
// the trend (O/E control limits, the first audit outside them) and its
// charts; clock gives the time (nil: now, UTC).
func ReadTrend(path string, clock func() time.Time) (*Trend, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, &HistoryError{Path: path, Err: err}
	}
	recs, err := history.Read(path)
	if err != nil {
		return nil, &HistoryError{Path: path, Err: err}
	}
	tr := trend.Build(recs)
	figs, err := plots.Trend(tr)
	if err != nil {
		return nil, err
	}
	return &Trend{Source: path, Records: recs, Trend: tr, Figures: figs, Made: now(clock)}, nil
}

// WriteTrend writes trend.md and the charts into dir (created if
// absent), whole and all or nothing, with the rules of Write.
func WriteTrend(dir string, t *Trend) (*Written, error) {
	var md bytes.Buffer
	if err := report.WriteTrend(&md, t.Trend, t.Source, t.Figures); err != nil {
		return nil, fmt.Errorf("writing trend.md: %w", err)
	}
	files := []atomicfile.File{{Path: "trend.md", Data: md.Bytes()}}
	for _, f := range t.Figures {
		files = append(files, atomicfile.File{Path: f.Name, Data: f.SVG})
	}
	return (&folderWrite{dir: dir, kind: "trend", written: t.Made, files: files, inputs: []string{t.Source}}).write()
}
