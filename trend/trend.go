// Package trend turns a history of audits into series over audit dates,
// one series per model, with control limits for O/E, the first audit of
// each series outside them, and the dates where a new model entered.
//
// A series is the audits of one model, known by its name and the SHA-256
// of its file: a model updated by recalibration keeps its name but not
// its hash, so it is a series of its own, and its records name the model
// it updates (the parent's SHA-256, from its provenance). Control limits
// depend only on each audit's expected events, so they are the same
// whichever series an audit belongs to; the first audit outside them is
// found within each series, since a model change resets what "drift"
// means.
package trend

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/history"
)

// z values of the two-sided 95% and 99.8% limits.
const (
	z95  = 1.959963984540054
	z998 = 3.090232306167813
)

// Model identifies the model an audit measured.
type Model struct {
	// Name is the model's name from its spec ("predicted risks in column
	// …" for a column of risks).
	Name string
	// SHA256 is the SHA-256 of the model's file; empty for a column of
	// risks.
	SHA256 string
}

// Short is the model's name with the first eight hex digits of its
// SHA-256, the way the trend names it.
func (m Model) Short() string {
	if m.SHA256 == "" {
		return m.Name
	}
	return fmt.Sprintf("%s (sha256 %s)", m.Name, ShortSHA(m.SHA256))
}

// ShortSHA is the first eight hex digits of a SHA-256 (all of a shorter
// text).
func ShortSHA(sha string) string {
	if len(sha) > 8 {
		return sha[:8]
	}
	return sha
}

// Point is one audit on the trend.
type Point struct {
	Date string
	// Time is Date as a time, midnight UTC.
	Time   time.Time
	Record history.Record
	// Series is the index in Trend.Series of the audit's model.
	Series   int
	Limit95  [2]float64 // O/E limits at this audit's expected events
	Limit998 [2]float64
	Outside  bool // O/E outside the 99.8% limits
	// Alarm: a chart in date order of this audit signalled (a CUSUM, or
	// the EWMA crossed a limit); Record.Alarms says which.
	Alarm bool
}

// Series is the audits of one model.
type Series struct {
	Model Model
	// ParentSHA is the SHA-256 of the model this one updates, as its
	// records say (empty when they say none), and Parent the index of
	// that model's series, or −1 when the trend holds no audit of it.
	ParentSHA string
	Parent    int
	// Points are the indices in Trend.Points of the series' audits, in
	// date order.
	Points []int
	// FirstOutside is the index in Trend.Points of the series' first
	// audit whose O/E lies outside its 99.8% limits, or −1.
	FirstOutside int
	// FirstAlarm is the index in Trend.Points of the series' first audit
	// whose charts in date order signalled, or −1.
	FirstAlarm int
}

// Change is a new model entering the trend: the first audit of a model
// dated after the trend's first audit date.
type Change struct {
	// Point is the index in Trend.Points of the new model's first audit,
	// and Series its series.
	Point, Series int
	// Before is the series of the latest audit dated before it.
	Before int
}

// Trend is the history prepared for the charts.
type Trend struct {
	// Points are every audit, by date and then by record order.
	Points []Point
	// Series are the models, in the order of their first audit.
	Series []Series
	// Changes are the dates where a new model entered, in date order.
	Changes []Change
}

// Limits returns the funnel-type control limits for O/E of an audit with
// expected events E, for a two-sided normal quantile z: under a
// well-calibrated model the observed count is about Poisson with mean E,
// so O/E has mean 1 and variance 1/E, and the limits are 1 ± z/√E
// (Spiegelhalter 2005, Statistics in Medicine 24:1185–1202, with the
// normal approximation, adequate for E of about 20 or more; the lower
// limit is cut at 0).
func Limits(expected, z float64) [2]float64 {
	if expected <= 0 {
		return [2]float64{math.NaN(), math.NaN()}
	}
	h := z / math.Sqrt(expected)
	return [2]float64{math.Max(0, 1-h), 1 + h}
}

// ModelOf is the model a record measured.
func ModelOf(r history.Record) Model { return Model{Name: r.Model, SHA256: r.ModelSHA} }

// Build makes the trend of records (in the order history.Read gives:
// by audit date, then by record). A record whose audit date is not a
// calendar date written YYYY-MM-DD is an error naming it.
func Build(records []history.Record) (*Trend, error) {
	t := &Trend{}
	index := map[Model]int{}
	for _, r := range records {
		day, err := time.Parse(time.DateOnly, r.AuditDate)
		if err != nil || day.Format(time.DateOnly) != r.AuditDate {
			return nil, fmt.Errorf("record %d: audit date %q is not a calendar date written YYYY-MM-DD", r.ID, r.AuditDate)
		}
		m := ModelOf(r)
		s, ok := index[m]
		if !ok {
			s = len(t.Series)
			index[m] = s
			t.Series = append(t.Series, Series{Model: m, Parent: -1, FirstOutside: -1, FirstAlarm: -1})
		}
		p := Point{Date: r.AuditDate, Time: day, Record: r, Series: s, Limit95: Limits(r.Expected, z95), Limit998: Limits(r.Expected, z998)}
		p.Outside = r.OE[0] < p.Limit998[0] || r.OE[0] > p.Limit998[1]
		p.Alarm = r.Alarms.Any()
		i := len(t.Points)
		ser := &t.Series[s]
		ser.Points = append(ser.Points, i)
		if ser.ParentSHA == "" {
			ser.ParentSHA = r.ParentSHA
		}
		if p.Outside && ser.FirstOutside < 0 {
			ser.FirstOutside = i
		}
		if p.Alarm && ser.FirstAlarm < 0 {
			ser.FirstAlarm = i
		}
		t.Points = append(t.Points, p)
	}
	if !sort.SliceIsSorted(t.Points, func(i, j int) bool { return t.Points[i].Time.Before(t.Points[j].Time) }) {
		return nil, errors.New("the records are not in audit-date order")
	}
	for i := range t.Series {
		s := &t.Series[i]
		for j, o := range t.Series {
			if j != i && s.ParentSHA != "" && o.Model.SHA256 == s.ParentSHA {
				s.Parent = j
				break
			}
		}
	}
	seen := map[int]bool{}
	before := -1
	for i, p := range t.Points {
		if i > 0 && p.Date != t.Points[i-1].Date {
			before = t.Points[i-1].Series
		}
		if !seen[p.Series] && before >= 0 {
			t.Changes = append(t.Changes, Change{Point: i, Series: p.Series, Before: before})
		}
		seen[p.Series] = true
	}
	return t, nil
}

// SelectError is a --model that matches no model in the history; it
// lists the models there.
type SelectError struct {
	Query string
	// ByHash says that the query could be the start of a SHA-256.
	ByHash bool
	Models []Model
}

// Error names the query and the models the history holds.
func (e *SelectError) Error() string {
	var names []string
	for _, m := range e.Models {
		names = append(names, m.Short())
	}
	what := fmt.Sprintf("named %s", cohort.Quote(e.Query))
	if e.ByHash {
		what += fmt.Sprintf(" or with a SHA-256 starting %s", cohort.Quote(e.Query))
	}
	return fmt.Sprintf("no audit of a model %s: the history holds %s", what, strings.Join(names, "; "))
}

// Select keeps the records of the models named query (exactly) or whose
// SHA-256 starts with query (at least six hex digits, any case). A query
// that matches no model is a *SelectError.
func Select(records []history.Record, query string) ([]history.Record, error) {
	q := strings.ToLower(query)
	byHash := len(q) >= 6 && strings.Trim(q, "0123456789abcdef") == ""
	var out []history.Record
	var models []Model
	seen := map[Model]bool{}
	for _, r := range records {
		m := ModelOf(r)
		if !seen[m] {
			seen[m] = true
			models = append(models, m)
		}
		if r.Model == query || byHash && strings.HasPrefix(strings.ToLower(r.ModelSHA), q) {
			out = append(out, r)
		}
	}
	if len(out) == 0 {
		return nil, &SelectError{Query: query, ByHash: byHash, Models: models}
	}
	return out, nil
}
