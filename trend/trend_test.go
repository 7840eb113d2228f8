package trend

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/history"
)

func TestLimitsAndFlag(t *testing.T) {
	// E = 100: 1 ± 1.96/10 (the normal approximation to a Poisson count;
	// Spiegelhalter 2005).
	l := Limits(100, z95)
	if math.Abs(l[0]-0.804) > 1e-3 || math.Abs(l[1]-1.196) > 1e-3 {
		t.Errorf("limits %v", l)
	}
	recs := []history.Record{
		{AuditDate: "2026-01-01", Expected: 100, OE: [3]float64{1.1, 0.9, 1.3}},
		{AuditDate: "2026-02-01", Expected: 100, OE: [3]float64{1.25, 1.0, 1.5}}, // inside 99.8% (1 ± 0.309)
		{AuditDate: "2026-03-01", Expected: 400, OE: [3]float64{1.2, 1.1, 1.3}},  // outside (1 ± 0.155)
		{AuditDate: "2026-04-01", Expected: 400, OE: [3]float64{1.3, 1.2, 1.4}},
	}
	tr, err := Build(recs)
	if err != nil {
		t.Fatal(err)
	}
	if tr.Series[0].FirstOutside != 2 {
		t.Errorf("first outside %d, want 2", tr.Series[0].FirstOutside)
	}
	if !tr.Points[3].Outside || tr.Points[1].Outside {
		t.Errorf("flags %v", tr.Points)
	}
}

// rec is an audit of model name with the given file hash (and parent).
func rec(id int64, date, name, sha, parent string, expected, oe float64) history.Record {
	return history.Record{ID: id, AuditDate: date, Model: name, ModelSHA: sha, ParentSHA: parent, Expected: expected, OE: [3]float64{oe, oe - 0.1, oe + 0.1}}
}

// TestSeriesPerModel: audits of different models, and of a model and
// its update (same name, another file), are series of their own; the
// update names its parent's series; a new model's first audit after the
// first date is a change; drift is flagged within each series.
func TestSeriesPerModel(t *testing.T) {
	recs := []history.Record{
		rec(1, "2026-01-31", "A", "aaa", "", 100, 1.00),
		rec(2, "2026-01-31", "Other", "ooo", "", 100, 1.00), // beside A from the start: no change
		rec(3, "2026-02-28", "A", "aaa", "", 100, 1.40),     // outside 1 ± 0.309: A's first
		rec(4, "2026-03-31", "A", "bbb", "aaa", 100, 1.00),  // A's update: same name, new file
		rec(5, "2026-03-31", "A", "aaa", "", 100, 1.50),
		rec(6, "2026-04-30", "A", "bbb", "aaa", 100, 1.35), // the update's own first outside
		rec(7, "2026-05-31", "C", "ccc", "zzz", 100, 1.00), // updates a model the history does not hold
	}
	tr, err := Build(recs)
	if err != nil {
		t.Fatal(err)
	}
	type want struct {
		model        Model
		points       []int
		parent       int
		parentSHA    string
		firstOutside int
	}
	for i, w := range []want{
		{Model{"A", "aaa"}, []int{0, 2, 4}, -1, "", 2},
		{Model{"Other", "ooo"}, []int{1}, -1, "", -1},
		{Model{"A", "bbb"}, []int{3, 5}, 0, "aaa", 5},
		{Model{"C", "ccc"}, []int{6}, -1, "zzz", -1},
	} {
		s := tr.Series[i]
		if s.Model != w.model || !slices.Equal(s.Points, w.points) || s.Parent != w.parent || s.ParentSHA != w.parentSHA || s.FirstOutside != w.firstOutside {
			t.Errorf("series %d: %+v, want %+v", i, s, w)
		}
	}
	if len(tr.Series) != 4 {
		t.Errorf("%d series, want 4", len(tr.Series))
	}
	for i, p := range tr.Points {
		if got := tr.Series[p.Series].Model; got != ModelOf(recs[i]) {
			t.Errorf("point %d in the series of %v, measured %v", i, got, ModelOf(recs[i]))
		}
	}
	// The update enters on 2026-03-31 after A (the last audit of
	// 2026-02-28), C on 2026-05-31 after the update.
	wantChanges := []Change{{Point: 3, Series: 2, Before: 0}, {Point: 6, Series: 3, Before: 2}}
	if !slices.Equal(tr.Changes, wantChanges) {
		t.Errorf("changes %+v, want %+v", tr.Changes, wantChanges)
	}
}

// TestBuildRefusesBadDates: a record whose audit date is not a
// calendar date (a hand-edited store) is named.
func TestBuildRefusesBadDates(t *testing.T) {
	for _, d := range []string{"2026-02-30", "2026-1-05", "31/01/2026", ""} {
		_, err := Build([]history.Record{rec(7, d, "A", "a", "", 10, 1)})
		if err == nil || !strings.Contains(err.Error(), "record 7: audit date") {
			t.Errorf("date %q: %v", d, err)
		}
	}
}

// TestSelect: a model by its exact name (every file of that name), or
// by the start of its SHA-256 in any case (six hex digits or more); no
// match lists the models.
func TestSelect(t *testing.T) {
	recs := []history.Record{
		rec(1, "2026-01-31", "Ward model", "ab12cd34ef", "", 10, 1),
		rec(2, "2026-02-28", "Ward model", "ff0011aa22", "ab12cd34ef", 10, 1),
		rec(3, "2026-02-28", "Other", "ab12ce0000", "", 10, 1),
	}
	ids := func(rs []history.Record) []int64 {
		var out []int64
		for _, r := range rs {
			out = append(out, r.ID)
		}
		return out
	}
	for _, tc := range []struct {
		query string
		want  []int64
	}{
		{"Ward model", []int64{1, 2}},
		{"ab12cd", []int64{1}},
		{"AB12CD34", []int64{1}},
		{"ab12c", nil}, // too short to be a hash, and no such name
		{"ab12", nil},
		{"ward model", nil}, // names match exactly
		{"Other", []int64{3}},
	} {
		got, err := Select(recs, tc.query)
		if tc.want == nil {
			var se *SelectError
			if !errors.As(err, &se) || len(se.Models) != 3 || !strings.Contains(err.Error(), "Ward model (sha256 ab12cd34); Ward model (sha256 ff0011aa); Other (sha256 ab12ce00)") {
				t.Errorf("Select(%q): %v", tc.query, err)
			}
			continue
		}
		if err != nil || !slices.Equal(ids(got), tc.want) {
			t.Errorf("Select(%q) = %v, %v; want %v", tc.query, ids(got), err, tc.want)
		}
	}
}
