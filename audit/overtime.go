package audit

import (
	"cmp"
	"context"
	"fmt"
	"slices"
	"strings"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/validate"
)

// OverTime charts the audited cohort in date order (package monitor):
// calibration by period, the VLAD, the two one-sided risk-adjusted
// CUSUMs and the EWMA. The zero value charts nothing; with a DateColumn,
// zero fields take the command line's defaults.
type OverTime struct {
	// DateColumn holds each patient's date (YYYY-MM-DD or RFC 3339).
	DateColumn string
	// Period is "month" (default), "quarter" or "block"; PeriodSize the
	// patients of a block (default 500).
	Period     string
	PeriodSize int
	// ARL is the CUSUMs' in-control average run length in patients
	// (default monitor.DefaultARL); Deterioration and Improvement their
	// odds ratios (default 2 and 1/2).
	ARL                        float64
	Deterioration, Improvement float64
	// Lambda and Width are the EWMA's weight and limit width (defaults
	// monitor.DefaultLambda and DefaultEWMAWidth).
	Lambda, Width float64
}

// dateColumn is the date column over the used rows: each row's level
// (−1 where missing), the levels' text, and the rows' lines for errors.
type dateColumn struct {
	codes  []int32
	levels []string
	lines  []int
	file   string
	// files and fileOf name each row's file when the cohort joins
	// cluster files (nil otherwise: every row is file's).
	files  []string
	fileOf []int32
}

// fileAt is the file of used row i.
func (d *dateColumn) fileAt(i int) string {
	if d.fileOf == nil {
		return d.file
	}
	return d.files[d.fileOf[i]]
}

// request adds the date column to the columns read, as text.
func (o OverTime) request(reqs []cohort.Request) ([]cohort.Request, error) {
	if o.DateColumn == "" {
		return reqs, nil
	}
	for _, q := range reqs {
		if q.Name == o.DateColumn {
			if q.Kind != cohort.Categorical {
				return nil, configErrorf("--date-column %s is a numeric column of the model; dates are read as text (YYYY-MM-DD)", o.DateColumn)
			}
			return reqs, nil
		}
	}
	return append(reqs, cohort.Request{Name: o.DateColumn, Kind: cohort.Categorical, For: "the date column"}), nil
}

// column takes the date column's values of the used rows.
func (o OverTime) column(fr *cohort.Frame, rows []int) *dateColumn {
	if o.DateColumn == "" {
		return nil
	}
	col := fr.Column(o.DateColumn)
	d := &dateColumn{codes: make([]int32, len(rows)), levels: col.Levels, lines: make([]int, len(rows)), file: fr.File}
	for r, i := range rows {
		d.codes[r] = int32(col.Codes[i])
		d.lines[r] = fr.Line(i)
	}
	return d
}

// parseDate reads a date as YYYY-MM-DD or an RFC 3339 time.
func parseDate(s string) (time.Time, bool) {
	s = strings.TrimSpace(s)
	if t, err := time.Parse(time.DateOnly, s); err == nil {
		return t, true
	}
	if t, err := time.Parse(time.RFC3339, s); err == nil {
		return t.UTC(), true
	}
	return time.Time{}, false
}

func (o OverTime) check() error {
	switch {
	case o.DateColumn == "":
		return nil
	case o.Period != "" && o.Period != "month" && o.Period != "quarter" && o.Period != "block":
		return configErrorf("--period %q: give month, quarter or block", o.Period)
	case o.PeriodSize < 0 || (o.PeriodSize > 0 && o.PeriodSize < 2):
		return configErrorf("--period-size %d: a block needs at least 2 patients", o.PeriodSize)
	case o.PeriodSize > 0 && o.Period != "block":
		return configErrorf("--period-size needs --period block")
	case o.ARL != 0 && !(o.ARL >= 10 && o.ARL <= monitor.MaxARL):
		return configErrorf("--cusum-arl %g: give from 10 to %g patients (the limit simulation runs at least 100 runs of %d × the ARL within its bound of 2×10⁸ patient-steps)", o.ARL, monitor.MaxARL, monitor.Horizon)
	case o.Deterioration != 0 && !(o.Deterioration > 1):
		return configErrorf("--cusum-odds: the deterioration odds ratio %g must be above 1", o.Deterioration)
	case o.Improvement != 0 && !(o.Improvement > 0 && o.Improvement < 1):
		return configErrorf("--cusum-odds: the improvement odds ratio %g must be between 0 and 1", o.Improvement)
	case o.Lambda != 0 && !(o.Lambda > 0 && o.Lambda <= 1):
		return configErrorf("--ewma-lambda %g: give a weight in (0, 1]", o.Lambda)
	case o.Width < 0:
		return configErrorf("--ewma-width %g must be positive", o.Width)
	}
	return nil
}

// checkCriteria refuses a criterion on an alarm without a date column.
func (o OverTime) checkCriteria(criteria []validate.Criterion) error {
	if o.DateColumn != "" {
		return nil
	}
	for _, c := range criteria {
		if slices.Contains(validate.AlarmMeasures, c.Measure) {
			return configErrorf("the criterion on %s needs the cohort charted in date order: give --date-column (plan key date_column)", c.Measure)
		}
	}
	return nil
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// overTime charts the audited cohort in date order and adds the summary
// and its findings to the audit. Rows without a readable date are an
// error under FailOnMissing and otherwise left out of the charts only
// (the rest of the audit does not use dates), and counted. The charts
// are those the background job started after scoring has made
// (startOverTime), or are made here when none was started.
func (r *run) overTime(ctx context.Context, a *validate.Audit) error {
	c, o, sc := r.cfg, r.cfg.OverTime, r.cur
	if err := o.check(); err != nil {
		return err
	}
	r.prog.Step("charting the cohort in date order")
	var d *datedCharts
	if r.dated != nil && r.dated.sc == sc {
		<-r.dated.charted
		d, r.datedUsed = r.dated.charts, true
	} else {
		d = chartDates(ctx, c, sc)
	}
	if d.err != nil {
		return d.err
	}
	res := d.res
	res.SetOverall(d.y, d.p, r.overallOf(d.missing+d.invalid, len(d.y)))
	r.monitor = res
	s := res.Summarise(o.DateColumn)
	r.perf.Alarms = map[string]float64{
		"cusum_deterioration_signals": float64(s.CUSUM[0].Signals),
		"cusum_improvement_signals":   float64(s.CUSUM[1].Signals),
		"ewma_above":                  b2f(s.EWMA.FirstAbove.Patient > 0),
		"ewma_below":                  b2f(s.EWMA.FirstBelow.Patient > 0),
	}
	s.LeftOutMissing, s.LeftOutInvalid = d.missing, d.invalid
	a.OverTime = s
	a.Summary = append(a.Summary, validate.Finding{Area: "over time", Text: alarmText(s)})
	if late := findLate(sc.dates, a.Provenance, r.started); late.Patients > 0 {
		a.LateDates = &late
		text := lateText(late, o.DateColumn, a.Provenance)
		a.Summary = append(a.Summary, validate.Finding{Area: "dates", Text: text})
		r.warnings = append(r.warnings, text)
	}
	return nil
}

// findLate finds the rows of the date column dated after the audit
// date (pv.AuditDate) or after the day the run started (UTC), whichever
// is earlier: the cohort of an audit describes it up to its date, and no
// admission can be dated after the day it was extracted. A time (RFC
// 3339) counts by its UTC date. Rows without a readable date are not
// counted (the charts count them apart).
func findLate(dc *dateColumn, pv validate.Provenance, started time.Time) validate.LateDates {
	ran := started.UTC().Format(time.DateOnly)
	l := validate.LateDates{After: pv.AuditDate, RunDate: ran}
	if ran < l.After {
		l.After, l.AfterRunDate = ran, true
	}
	day := make([]string, len(dc.levels)) // "" where not a date
	for k, text := range dc.levels {
		if t, ok := parseDate(text); ok {
			day[k] = t.UTC().Format(time.DateOnly)
		}
	}
	for i, code := range dc.codes {
		if code < 0 || day[code] == "" || day[code] <= l.After {
			continue
		}
		if l.Patients == 0 {
			l.File, l.Line, l.Value = dc.fileAt(i), dc.lines[i], strings.TrimSpace(dc.levels[code])
		}
		l.Patients++
		if day[code] > ran {
			l.InFuture++
		}
	}
	return l
}

// lateText is the finding (and the warning) of the late rows: how many,
// after which date and why it matters, and the first.
func lateText(l validate.LateDates, column string, pv validate.Provenance) string {
	first := fmt.Sprintf("the first on line %d of %s, %s %s", l.Line, l.File, column, cohort.Quote(l.Value))
	rows := plural(l.Patients, "patient is", "patients are")
	const future = "A date in the future is most likely an error in the extract (a mistyped year, day and month swapped); these patients are charted over time as dated and counted in every measure."
	switch {
	case pv.AuditDateSource == validate.DateToday:
		return fmt.Sprintf("%s %s dated after the day the audit ran (%s, its audit date), in the future: %s. %s",
			thousands(l.Patients), rows, l.After, first, future)
	case l.AfterRunDate:
		return fmt.Sprintf("%s %s dated after the day the audit ran (%s), in the future, and the audit date (%s, %s) is later still: %s. %s",
			thousands(l.Patients), rows, l.After, pv.AuditDate, dateSource(pv.AuditDateSource), first, future)
	}
	t := fmt.Sprintf("%s %s dated after the audit date (%s, %s): %s. The report describes the cohort up to that date, so these patients lie outside the period it names, yet are counted in every measure; give the audit date the extract ends on, or leave them out of the extract.",
		thousands(l.Patients), rows, l.After, dateSource(pv.AuditDateSource), first)
	if l.InFuture > 0 {
		t += fmt.Sprintf(" %s of them %s dated after the day the audit ran (%s), in the future: most likely an error in the extract.",
			thousands(l.InFuture), plural(l.InFuture, "is", "are"), l.RunDate)
	}
	return t
}

// dateSource says where an audit date came from.
func dateSource(source string) string {
	switch source {
	case validate.DateFromFlag:
		return "given by --audit-date"
	case validate.DateFromPlan:
		return "the plan's audit_date"
	case validate.DateToday:
		return "the day the audit ran"
	}
	return "set by the caller"
}

// plural is one or many by n.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// datedCharts are the patients of a scored cohort in date order and
// their charts, all but the overall period (which is the audit's own
// measures when no row was left out), or the error that stopped them.
type datedCharts struct {
	y, p             []float64
	dates            monitor.Dates
	missing, invalid int
	res              *monitor.Result
	err              error
}

// chartDates puts the rows of sc with a readable date in date order and
// computes their charts (monitor.Charts). It reads sc and the Config
// only, so it can run beside the measures of the same cohort.
func chartDates(ctx context.Context, c *Config, sc *scored) *datedCharts {
	o := c.OverTime
	fail := func(err error) *datedCharts { return &datedCharts{err: err} }
	// Each distinct date is read once (an extract has few).
	// A level's time is kept as the charts use it: whole seconds in UTC
	// (monitor.Dates).
	type level struct {
		day   int64 // seconds since 1970, UTC
		ok    bool
		empty bool
	}
	levels := make([]level, len(sc.dates.levels))
	for k, text := range sc.dates.levels {
		levels[k].empty = strings.TrimSpace(text) == ""
		var t time.Time
		if t, levels[k].ok = parseDate(text); levels[k].ok {
			levels[k].day = t.Unix()
		}
	}
	type row struct {
		day int64 // seconds since 1970, UTC
		i   int
	}
	rows := make([]row, 0, len(sc.y))
	missing, invalid, firstBad := 0, 0, int32(-1)
	for i, code := range sc.dates.codes {
		if code < 0 || levels[code].empty {
			missing++
			if c.FailOnMissing {
				return fail(&cohort.Error{File: sc.dates.fileAt(i), Line: sc.dates.lines[i], Column: o.DateColumn, Msg: "the date is missing (the missing-value policy refuses it)", Kind: cohort.ErrMissing})
			}
			continue
		}
		if !levels[code].ok {
			invalid++
			if firstBad < 0 {
				firstBad = code
			}
			if c.FailOnMissing {
				return fail(&cohort.Error{File: sc.dates.fileAt(i), Line: sc.dates.lines[i], Column: o.DateColumn, Value: sc.dates.levels[code], HasValue: true, Msg: "not a date (give YYYY-MM-DD or an RFC 3339 time); the missing-value policy refuses it", Kind: cohort.ErrFormat})
			}
			continue
		}
		rows = append(rows, row{levels[code].day, i})
	}
	if len(rows) == 0 {
		msg := "no audited row has a readable date, so nothing can be charted over time"
		if firstBad >= 0 {
			// One value as the file writes it, and the forms that read.
			msg += fmt.Sprintf(" (the first, %s, is not a date: give YYYY-MM-DD or an RFC 3339 time)", cohort.Quote(sc.dates.levels[firstBad]))
		}
		return fail(&cohort.Error{File: sc.dates.file, Column: o.DateColumn, Msg: msg, Kind: cohort.ErrMissing})
	}
	// Date order, ties in file order (the row index breaks them, so the
	// result is that of a stable sort); an extract already in order is
	// only checked.
	byDate := func(a, b row) int {
		if a.day != b.day {
			return cmp.Compare(a.day, b.day)
		}
		return cmp.Compare(a.i, b.i)
	}
	if !slices.IsSortedFunc(rows, byDate) {
		slices.SortFunc(rows, byDate)
	}
	y, p, dates := make([]float64, len(rows)), make([]float64, len(rows)), make(monitor.Dates, len(rows))
	eps := c.Measures.Epsilon
	for k, rw := range rows {
		y[k], dates[k] = sc.y[rw.i], rw.day
		// The charts need risks strictly inside (0, 1): clamp as the
		// logit measures do.
		p[k] = min(max(sc.p[rw.i], eps), 1-eps)
	}
	per := monitor.Periods{Kind: o.Period, Block: o.PeriodSize}
	if per.Kind == "" {
		per.Kind = "month"
	}
	if per.Kind == "block" && per.Block == 0 {
		per.Block = 500
	}
	res, err := monitor.Charts(ctx, y, p, dates, monitor.Options{
		Deterioration: o.Deterioration, Improvement: o.Improvement,
		Limits: monitor.LimitOptions{ARL: o.ARL, Seed: c.Seed, Workers: c.Workers},
		Lambda: o.Lambda, Width: o.Width, Periods: per,
	})
	if err != nil {
		return fail(fmt.Errorf("charting %s over time: %w", sc.file, err))
	}
	return &datedCharts{y: y, p: p, dates: dates, missing: missing, invalid: invalid, res: res}
}

// alarmText is the summary's sentence on the charts' first signals: each
// CUSUM's and the EWMA's first crossing of each limit, with its date and
// its patient's position in date order.
func alarmText(s *monitor.Summary) string {
	var parts []string
	for _, ch := range s.CUSUM {
		if ch.First.Patient == 0 {
			parts = append(parts, fmt.Sprintf("the %s chart did not signal", ch.Name))
			continue
		}
		parts = append(parts, fmt.Sprintf("the %s chart signalled on %s, after %s patients", ch.Name, ch.First.Date, thousands(ch.First.Patient)))
	}
	e := s.EWMA
	if e.FirstAbove.Patient > 0 {
		parts = append(parts, fmt.Sprintf("the EWMA crossed its upper limit (more events than predicted) on %s, after %s patients", e.FirstAbove.Date, thousands(e.FirstAbove.Patient)))
	}
	if e.FirstBelow.Patient > 0 {
		parts = append(parts, fmt.Sprintf("the EWMA crossed its lower limit (fewer events than predicted) on %s, after %s patients", e.FirstBelow.Date, thousands(e.FirstBelow.Patient)))
	}
	if e.FirstAbove.Patient == 0 && e.FirstBelow.Patient == 0 {
		parts = append(parts, "the EWMA stayed within its limits")
	}
	t := fmt.Sprintf("In date order (%s patients, %s to %s), %s.", thousands(s.Patients), s.FirstDate, s.LastDate, strings.Join(parts, "; "))
	if n := s.LeftOutMissing + s.LeftOutInvalid; n > 0 {
		t += fmt.Sprintf(" %s rows without a readable date were left out of the charts.", thousands(n))
	}
	return t
}

// thousands writes n with a comma between groups of three digits
// (1,832), as the summary's sentences do.
func thousands(n int) string {
	s := fmt.Sprint(n)
	if n < 0 {
		return "-" + thousands(-n)
	}
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// overallOf is the audit's own measures as the charts' overall period
// when the charts left no row out (the same patients), else nil.
func (r *run) overallOf(leftOut, n int) *monitor.Period {
	if leftOut > 0 {
		return nil
	}
	pf := r.perf
	d, c := pf.Discrimination, pf.Calibration
	return &monitor.Period{Label: "all", First: 1, Last: n, N: n, Events: pf.Cohort.Events, Expected: c.Expected,
		OE: c.OE, OECI: c.OECI, CITL: c.CITL, CITLCI: c.CITLCI, AUC: d.AUC, AUCCI: d.CI}
}
