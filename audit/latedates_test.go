package audit

import (
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/validate"
)

// TestLateDates: rows dated after the audit date, or after the day the
// audit ran when that is earlier, are counted (an RFC 3339 time by its
// UTC date; rows without a readable date not at all), with the first in
// file order, and the finding says which date they are after and where
// it came from. The counts are by hand from the rows below.
func TestLateDates(t *testing.T) {
	dc := &dateColumn{
		// Rows in file order: their levels, and lines 2 to 8.
		codes:  []int32{0, 1, 2, -1, 3, 1, 4},
		levels: []string{"2026-11-01", "2026-12-05", "not a date", "2026-12-01T23:30:00-02:00", " 2026-11-30 "},
		lines:  []int{2, 3, 4, 5, 6, 7, 8},
		file:   "c.csv",
	}
	started := time.Date(2026, 12, 4, 10, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		name      string
		pv        validate.Provenance
		n, future int
		line      int
		text      string
	}{
		// 2026-12-05 twice (lines 3 and 7); 2026-12-01T23:30-02:00 is
		// 2026-12-02 in UTC, not after the day the audit ran.
		{"the day the audit ran", validate.Provenance{AuditDate: "2026-12-04", AuditDateSource: validate.DateToday}, 2, 2, 3,
			`2 patients are dated after the day the audit ran (2026-12-04, its audit date), in the future: the first on line 3 of c.csv, admission_date "2026-12-05". A date in the future is most likely an error in the extract (a mistyped year, day and month swapped); these patients are charted over time as dated and counted in every measure.`},
		// After 2026-11-30: also 2026-12-02 (line 6); 2026-11-30 itself
		// (line 8) is not after it.
		{"an earlier audit date", validate.Provenance{AuditDate: "2026-11-30", AuditDateSource: validate.DateFromFlag}, 3, 2, 3,
			`3 patients are dated after the audit date (2026-11-30, given by --audit-date): the first on line 3 of c.csv, admission_date "2026-12-05". The report describes the cohort up to that date, so these patients lie outside the period it names, yet are counted in every measure; give the audit date the extract ends on, or leave them out of the extract. 2 of them are dated after the day the audit ran (2026-12-04), in the future: most likely an error in the extract.`},
		{"a plan's audit date", validate.Provenance{AuditDate: "2026-11-01", AuditDateSource: validate.DateFromPlan}, 4, 2, 3, ""},
		// A later audit date: the day the audit ran bounds the dates.
		{"a later audit date", validate.Provenance{AuditDate: "2027-01-31", AuditDateSource: validate.DateFromFlag}, 2, 2, 3,
			`2 patients are dated after the day the audit ran (2026-12-04), in the future, and the audit date (2027-01-31, given by --audit-date) is later still: the first on line 3 of c.csv, admission_date "2026-12-05". A date in the future is most likely an error in the extract (a mistyped year, day and month swapped); these patients are charted over time as dated and counted in every measure.`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			l := findLate(dc, tc.pv, started)
			if l.Patients != tc.n || l.InFuture != tc.future || l.Line != tc.line || l.File != "c.csv" || l.Value != "2026-12-05" || l.RunDate != "2026-12-04" {
				t.Errorf("%+v; want %d late (%d in the future), the first on line %d of c.csv, 2026-12-05, run 2026-12-04", l, tc.n, tc.future, tc.line)
			}
			if got := lateText(l, "admission_date", tc.pv); tc.text != "" && got != tc.text {
				t.Errorf("text\n%s\nwant\n%s", got, tc.text)
			}
		})
	}
	// No row after either date: nothing to say.
	if l := findLate(dc, validate.Provenance{AuditDate: "2026-12-31", AuditDateSource: validate.DateFromPlan}, time.Date(2027, 1, 2, 0, 0, 0, 0, time.UTC)); l.Patients != 0 {
		t.Errorf("%d late rows, want 0", l.Patients)
	}
	// 2026-12-05 is after an audit dated the day before it, and not after
	// an audit of that very day, dated on it.
	if l := findLate(dc, validate.Provenance{AuditDate: "2026-12-05", AuditDateSource: validate.DateToday}, time.Date(2026, 12, 5, 23, 59, 0, 0, time.UTC)); l.Patients != 0 {
		t.Errorf("%d rows after 2026-12-05 on 2026-12-05, want 0", l.Patients)
	}
}
