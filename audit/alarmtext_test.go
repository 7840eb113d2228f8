package audit

import (
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/monitor"
)

// TestAlarmTextNamesEveryChart: the summary's sentence names the first
// signal of each chart with its date and patient count, the EWMA's
// crossings included, and says so when a chart did not signal (the
// sentences are written out by hand from the summary given).
func TestAlarmTextNamesEveryChart(t *testing.T) {
	base := monitor.Summary{Patients: 12000, FirstDate: "2026-01-01", LastDate: "2026-12-31",
		CUSUM: []monitor.ChartSummary{{Name: "deterioration", Signals: 2, First: monitor.Alarm{Patient: 3538, Date: "2026-04-05"}}, {Name: "improvement"}}}
	for _, tt := range []struct {
		name string
		ewma monitor.EWMASummary
		want []string
	}{
		{"EWMA within", monitor.EWMASummary{}, []string{
			"In date order (12,000 patients, 2026-01-01 to 2026-12-31), the deterioration chart signalled on 2026-04-05, after 3,538 patients; the improvement chart did not signal; the EWMA stayed within its limits."}},
		{"EWMA both", monitor.EWMASummary{FirstAbove: monitor.Alarm{Patient: 4100, Date: "2026-05-01"}, FirstBelow: monitor.Alarm{Patient: 77, Date: "2026-01-03"}}, []string{
			"the EWMA crossed its upper limit (more events than predicted) on 2026-05-01, after 4,100 patients",
			"; the EWMA crossed its lower limit (fewer events than predicted) on 2026-01-03, after 77 patients."}},
	} {
		s := base
		s.EWMA = tt.ewma
		got := alarmText(&s)
		for _, w := range tt.want {
			if !strings.Contains(got, w) {
				t.Errorf("%s: %q lacks %q", tt.name, got, w)
			}
		}
		if strings.Contains(got, "stayed within") == (tt.ewma.FirstAbove.Patient > 0) {
			t.Errorf("%s: %q", tt.name, got)
		}
	}
}
