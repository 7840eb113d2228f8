package validate

import (
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// TestHLSmallCounts: the note on a doubtful Hosmer–Lemeshow p-value
// follows Cochran's rule for chi-squared tests of counts (common
// practice; Cochran 1954): more than a fifth of the expected counts below
// 5, or any below 1. The counts of each case are worked by hand.
func TestHLSmallCounts(t *testing.T) {
	grp := func(n int, e float64) metrics.HLGroup { return metrics.HLGroup{N: n, Expected: e} }
	for _, tc := range []struct {
		name   string
		groups []metrics.HLGroup
		want   string // "" for no note
	}{
		// 10 groups of 100, 10 to 55 expected events: every count ≥ 10.
		{"ample", []metrics.HLGroup{grp(100, 10), grp(100, 20), grp(100, 30), grp(100, 40), grp(100, 55)}, ""},
		// 2 of 10 counts below 5 (a fifth exactly), none below 1: no note.
		{"a fifth below 5", []metrics.HLGroup{grp(100, 4), grp(100, 3), grp(100, 20), grp(100, 30), grp(100, 40)}, ""},
		// 3 of 10 below 5: more than a fifth.
		{"three of ten below 5", []metrics.HLGroup{grp(100, 4), grp(100, 3), grp(100, 2), grp(100, 30), grp(100, 40)}, "3 of its 10 expected counts (events and non-events of 5 groups) are below 5 and 0 below 1"},
		// One count below 1 is enough.
		{"one below 1", []metrics.HLGroup{grp(100, 0.5), grp(100, 20), grp(100, 30), grp(100, 40), grp(100, 50), grp(100, 60)}, "1 of its 12 expected counts (events and non-events of 6 groups) are below 5 and 1 below 1"},
		// Groups of one row (--hl-groups above the rows): every count below 1.
		{"groups of one", []metrics.HLGroup{grp(1, 0.2), grp(1, 0.5), grp(1, 0.9)}, "6 of its 6 expected counts (events and non-events of 3 groups) are below 5 and 6 below 1"},
	} {
		got := hlSmallCounts(metrics.HosmerLemeshowTest{Statistic: 1, Table: tc.groups, Groups: len(tc.groups)})
		if tc.want == "" && got != "" || tc.want != "" && !strings.Contains(got, tc.want) {
			t.Errorf("%s: got %q, want %q", tc.name, got, tc.want)
		}
	}
}

// TestHLNoteOnManyGroups: 200 patients in 500 requested groups (one a
// group) get the note in the calibration's notes; the same cohort in 10
// groups does not.
func TestHLNoteOnManyGroups(t *testing.T) {
	y, p := make([]float64, 200), make([]float64, 200)
	for i := range p {
		p[i] = 0.2 + 0.6*float64(i)/199
		if i%3 == 0 {
			y[i] = 1
		}
	}
	for _, tc := range []struct {
		groups int
		want   bool
	}{{500, true}, {10, false}} {
		perf, err := Assess(y, p, Options{HLGroups: tc.groups})
		if err != nil {
			t.Fatal(err)
		}
		has := strings.Contains(strings.Join(perf.Calibration.Notes, "\n"), "Hosmer–Lemeshow p-value is doubtful")
		if has != tc.want {
			t.Errorf("%d groups: note %v, want %v (notes %q)", tc.groups, has, tc.want, perf.Calibration.Notes)
		}
	}
}
